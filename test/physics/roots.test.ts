import { describe, expect, it } from 'vitest';
import { Decimal } from 'decimal.js';
import fc from 'fast-check';
import { BracketError, RootNotConvergedError, brent } from '../../physics/roots.js';

const D = Decimal.clone({ precision: 50 });
type Dec = InstanceType<typeof D>;

/** Reference root by Newton's method in 50-digit decimal arithmetic (independent of the code under test). */
function newtonDecimal(f: (x: Dec) => Dec, df: (x: Dec) => Dec, x0: number): number {
  let x = new D(x0);
  for (let i = 0; i < 200; i++) {
    const step = f(x).div(df(x));
    x = x.minus(step);
    if (step.abs().lt(new D('1e-45').times(x.abs().plus(1)))) break;
  }
  return x.toNumber();
}

/** |x - ref| in units of the spacing of doubles at ref. */
function ulps(x: number, ref: number): number {
  return Math.abs(x - ref) / (Number.EPSILON * Math.max(Math.abs(ref), Number.MIN_VALUE));
}

describe('Brent root finder (Brent 1973, ch. 4)', () => {
  it('x^2 - 2 on [0, 2] -> sqrt 2 to within 4 ulp', () => {
    const res = brent((x) => x * x - 2, 0, 2);
    expect(ulps(res.root, Math.SQRT2)).toBeLessThanOrEqual(4);
    expect(res.iterations).toBeLessThan(15);
  });

  it("Wallis's cubic x^3 - 2x - 5 on [2, 3] vs a 50-digit Newton reference, superlinear (far fewer steps than bisection's ~52)", () => {
    const res = brent((x) => x * x * x - 2 * x - 5, 2, 3);
    const ref = newtonDecimal((x) => x.pow(3).minus(x.times(2)).minus(5), (x) => x.pow(2).times(3).minus(2), 2);
    expect(ulps(res.root, ref)).toBeLessThanOrEqual(4);
    expect(res.iterations).toBeLessThan(15);
  });

  it('cos x - x on [0, 1] vs a 50-digit Newton reference; bracket order does not matter', () => {
    const ref = newtonDecimal((x) => D.cos(x).minus(x), (x) => D.sin(x).neg().minus(1), 0.7);
    const a = brent((x) => Math.cos(x) - x, 0, 1);
    const b = brent((x) => Math.cos(x) - x, 1, 0);
    expect(ulps(a.root, ref)).toBeLessThanOrEqual(4);
    expect(ulps(b.root, ref)).toBeLessThanOrEqual(4);
  });

  it('a root at a bracket end is returned at once', () => {
    expect(brent((x) => x - 1, 1, 5)).toMatchObject({ root: 1, fRoot: 0, iterations: 0 });
    expect(brent((x) => x - 5, 1, 5)).toMatchObject({ root: 5, fRoot: 0, iterations: 0 });
  });

  it('a discontinuous sign change (step function) converges to the jump like bisection', () => {
    const jump = 0.123456789;
    const res = brent((x) => (x < jump ? -1 : 1), 0, 1);
    expect(Math.abs(res.root - jump)).toBeLessThan(1e-15);
    expect(res.iterations).toBeLessThan(200);
  });

  it('steep and flat functions: (x - 0.5)^9 (flat at its root), exp(50 (x - 0.3)) - 1', () => {
    const flat = brent((x) => (x - 0.5) ** 9, 0, 1.3, { xAbsTol: 1e-12 });
    expect(Math.abs(flat.root - 0.5)).toBeLessThan(1e-11);
    const steep = brent((x) => Math.expm1(50 * (x - 0.3)), -2, 2);
    expect(ulps(steep.root, 0.3)).toBeLessThanOrEqual(4);
  });

  it('honours the x tolerance: a loose xAbsTol stops earlier, with the true root inside the final bracket', () => {
    const f = (x: number) => Math.log(x) - 1; // root e
    const loose = brent(f, 1, 10, { xAbsTol: 1e-3 });
    const tight = brent(f, 1, 10);
    expect(Math.abs(loose.root - Math.E)).toBeLessThanOrEqual(loose.bracketWidth);
    expect(loose.bracketWidth).toBeLessThanOrEqual(2e-3 + 1e-12);
    expect(loose.iterations).toBeLessThanOrEqual(tight.iterations);
    expect(ulps(tight.root, Math.E)).toBeLessThanOrEqual(4);
  });

  it('honours fAbsTol', () => {
    const res = brent((x) => x - 0.3, 0, 1, { fAbsTol: 0.01 });
    expect(Math.abs(res.fRoot)).toBeLessThanOrEqual(0.01);
  });

  it('random monotone cubics: the result is a sign change to within a few ulp (fast-check)', () => {
    fc.assert(
      fc.property(fc.double({ min: -100, max: 100, noNaN: true }), fc.double({ min: 0.01, max: 10, noNaN: true }), (root, k) => {
        const f = (x: number) => k * (x - root) ** 3 + (x - root);
        const res = brent(f, -200, 300);
        return Math.abs(res.root - root) <= 8 * Number.EPSILON * Math.max(1, Math.abs(root));
      }),
      { numRuns: 300 },
    );
  });

  it('throws BracketError when the ends do not bracket a sign change or are not finite', () => {
    expect(() => brent((x) => x * x + 1, -1, 1)).toThrow(BracketError);
    expect(() => brent((x) => x - 10, 0, 1)).toThrow(BracketError);
    expect(() => brent((x) => x, Number.NEGATIVE_INFINITY, 1)).toThrow(BracketError);
    expect(() => brent((x) => x, Number.NaN, 1)).toThrow(BracketError);
    expect(() => brent(() => Number.NaN, 0, 1)).toThrow(BracketError);
  });

  it('throws RootNotConvergedError at the iteration limit, with the estimate so far', () => {
    let err: unknown;
    try {
      brent((x) => (x < 1 / 3 ? -1 : 1), 0, 1, { maxIterations: 5 });
    } catch (e) {
      err = e;
    }
    expect(err).toBeInstanceOf(RootNotConvergedError);
    const e = err as RootNotConvergedError;
    expect(e.iterations).toBe(5);
    expect(Math.abs(e.estimate - 1 / 3)).toBeLessThan(1);
  });

  it('throws when f returns NaN inside the bracket', () => {
    expect(() => brent((x) => (x > 0.4 && x < 0.6 ? Number.NaN : x - 0.5), 0, 1)).toThrow(RootNotConvergedError);
  });

  it('rejects invalid options', () => {
    expect(() => brent((x) => x, -1, 1, { maxIterations: 0 })).toThrow(RangeError);
    expect(() => brent((x) => x, -1, 1, { xAbsTol: -1 })).toThrow(RangeError);
  });
});
