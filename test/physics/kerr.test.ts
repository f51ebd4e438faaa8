import { describe, expect, it } from 'vitest';
import { reference } from '../support/reference.js';
import fc from 'fast-check';
import {
  assertSpin,
  circularAngularMomentum,
  circularAngularVelocity,
  circularEnergy,
  efficiency,
  ergosphereEquatorial,
  hawkingTemperature,
  hawkingTemperatureFactor,
  horizonAngularVelocity,
  horizonInner,
  horizonOuter,
  isco,
  iscoEnergy,
  marginallyBound,
  photonOrbit,
  staticLimit,
  surfaceGravity,
} from '../../physics/kerr.js';

// ---------------------------------------------------------------------------
// High-precision reference: BPT72 closed forms in their straightforward (cancelling) shape,
// evaluated with 50 significant digits, so at least ~34 digits survive any cancellation
// for the spins used here (|a| >= 1e-8 or a = 0; 1 - |a| >= 2^-52 or |a| = 1).

const { D, exact } = reference(50);
type Dec = InstanceType<typeof D>;

const ONE = new D(1);
const TWO = new D(2);
const THREE = new D(3);

function refHorizonOuter(a: Dec): Dec {
  return ONE.plus(ONE.minus(a.pow(2)).sqrt());
}
function refHorizonInner(a: Dec): Dec {
  return ONE.minus(ONE.minus(a.pow(2)).sqrt());
}
/** BPT72 eq. (2.18). */
function refPhotonOrbit(a: Dec): Dec {
  return TWO.times(ONE.plus(D.cos(new D(2).div(3).times(D.acos(a.neg())))));
}
/** BPT72 eq. (2.19). */
function refMarginallyBound(a: Dec): Dec {
  return TWO.minus(a).plus(TWO.times(ONE.minus(a).sqrt()));
}
/** BPT72 eq. (2.21), as printed. */
function refIsco(a: Dec): Dec {
  const z1 = ONE.plus(ONE.minus(a.pow(2)).cbrt().times(ONE.plus(a).cbrt().plus(ONE.minus(a).cbrt())));
  const z2 = THREE.times(a.pow(2)).plus(z1.pow(2)).sqrt();
  const root = THREE.minus(z1).times(THREE.plus(z1).plus(TWO.times(z2))).sqrt();
  return a.isNeg() ? THREE.plus(z2).plus(root) : THREE.plus(z2).minus(root);
}
function refIscoEnergy(a: Dec): Dec {
  return ONE.minus(TWO.div(THREE.times(refIsco(a)))).sqrt();
}
function refEfficiency(a: Dec): Dec {
  return ONE.minus(refIscoEnergy(a));
}
function refSurfaceGravity(a: Dec): Dec {
  return ONE.minus(a.pow(2)).sqrt().div(TWO.times(refHorizonOuter(a)));
}
function refStaticLimit(a: Dec, theta: Dec): Dec {
  return ONE.plus(ONE.minus(a.pow(2).times(D.cos(theta).pow(2))).sqrt());
}

/** |x - ref| / |ref| as a number; a zero reference demands x === 0. */
function relErr(x: number, ref: Dec): number {
  if (ref.isZero()) return x === 0 ? 0 : Infinity;
  return exact(x).minus(ref).div(ref).abs().toNumber();
}

const REL = 1e-12;

// ---------------------------------------------------------------------------
// Spin grid: the spins the brief names, both signs, plus extreme and random-looking values.

/** Deterministic pseudo-random spins in (-1, 1) (Park–Miller LCG, fixed seed). */
function pseudoRandomSpins(n: number): number[] {
  let s = 20240917;
  const out: number[] = [];
  for (let i = 0; i < n; i += 1) {
    s = (s * 48271) % 2147483647;
    out.push((2 * s) / 2147483647 - 1);
  }
  return out;
}

const MAGNITUDES = [
  1e-8, 1e-4, 0.123456789, 0.3141592653589793, 0.5, 0.7071067811865476, 0.8660254037844386, 0.9, 0.99, 0.998,
  0.999, 0.9999, 0.999999, 1 - 1e-9, 1 - 1e-12, 1 - 2 ** -52, 1,
];
const SPINS: number[] = [0, ...MAGNITUDES.flatMap((m) => [m, -m]), ...pseudoRandomSpins(40)];
/** Spins strictly inside (-1, 1) away from the extremal prograde degeneracy r+ = r_ph = r_ms = 1. */
const NON_EXTREMAL = SPINS.filter((a) => a < 1 - 1e-9 + 1e-15);

function fmt(a: number): string {
  return a.toPrecision(17);
}

// ---------------------------------------------------------------------------

describe('published values (BPT72, Thorne 1974, Hawking 1975)', () => {
  const close = (x: number, y: number, rel = 1e-14) => expect(Math.abs(x - y)).toBeLessThanOrEqual(rel * Math.abs(y));

  it('ISCO r_ms = 6, 1, 9 at a = 0, +1, -1 (BPT72)', () => {
    close(isco(0), 6);
    close(isco(1), 1);
    close(isco(-1), 9);
  });

  it('photon orbit r_ph = 3, 1, 4 at a = 0, +1, -1 (BPT72)', () => {
    close(photonOrbit(0), 3);
    close(photonOrbit(1), 1);
    close(photonOrbit(-1), 4);
  });

  it('marginally bound orbit r_mb = 4, 1, 3 + 2 sqrt 2 at a = 0, +1, -1 (BPT72)', () => {
    close(marginallyBound(0), 4);
    close(marginallyBound(1), 1);
    close(marginallyBound(-1), 3 + 2 * Math.SQRT2);
  });

  it('efficiency 1 - sqrt(8/9), 1 - 1/sqrt(3), 1 - sqrt(25/27) at a = 0, +1, -1 (BPT72)', () => {
    close(efficiency(0), 1 - Math.sqrt(8 / 9), 1e-13);
    close(efficiency(1), 1 - 1 / Math.sqrt(3), 1e-13);
    close(efficiency(-1), 1 - Math.sqrt(25 / 27), 1e-13);
    close(iscoEnergy(0), Math.sqrt(8 / 9));
    close(iscoEnergy(1), 1 / Math.sqrt(3));
    close(iscoEnergy(-1), Math.sqrt(25 / 27));
  });

  it('Thorne 1974 limiting spin a = 0.998: r_ms ~ 1.237, efficiency ~ 0.32', () => {
    // Quoted from memory of Thorne (1974) as usually cited: r_ms ~ 1.237 GM/c^2 (4 digits, so
    // tolerance half a unit in the last digit) and eta ~ 0.32 (tolerance 0.005).
    expect(Math.abs(isco(0.998) - 1.237)).toBeLessThanOrEqual(5e-4);
    expect(Math.abs(efficiency(0.998) - 0.32)).toBeLessThanOrEqual(0.005);
  });

  it('horizons, ergosphere, surface gravity and horizon angular velocity at a = 0 and |a| = 1', () => {
    expect(horizonOuter(0)).toBe(2);
    expect(horizonInner(0)).toBe(0);
    expect(horizonOuter(1)).toBe(1);
    expect(horizonInner(1)).toBe(1);
    expect(horizonOuter(-1)).toBe(1);
    expect(horizonInner(-1)).toBe(1);
    expect(ergosphereEquatorial(0.7)).toBe(2);
    expect(ergosphereEquatorial(-1)).toBe(2);
    expect(surfaceGravity(0)).toBe(0.25);
    expect(surfaceGravity(1)).toBe(0);
    expect(surfaceGravity(-1)).toBe(0);
    expect(horizonAngularVelocity(0)).toBe(0);
    expect(horizonAngularVelocity(1)).toBe(0.5);
    expect(horizonAngularVelocity(-1)).toBe(-0.5);
    expect(hawkingTemperatureFactor(0)).toBe(1);
    expect(hawkingTemperatureFactor(1)).toBe(0);
  });

  it('Hawking temperature of a one-solar-mass Schwarzschild hole ~ 6.17e-8 K (Hawking 1975)', () => {
    // SI constants for the test only (CODATA 2018 exact c, h, k_B; IAU 2015 nominal GM_sun).
    const constants = { c: 299792458, hbar: 6.62607015e-34 / (2 * Math.PI), kB: 1.380649e-23 };
    const gmSun = 1.3271244e20;
    const t0 = hawkingTemperature(0, gmSun, constants);
    expect(Math.abs(t0 - 6.17e-8)).toBeLessThanOrEqual(0.01e-8);
    // T = hbar c^3 / (8 pi G M k_B) exactly at a = 0.
    const tSchw = (constants.hbar * constants.c ** 3) / (8 * Math.PI * gmSun * constants.kB);
    expect(Math.abs(t0 - tSchw)).toBeLessThanOrEqual(1e-14 * tSchw);
    for (const a of [0.3, -0.9, 0.999999, 1]) {
      const t = hawkingTemperature(a, gmSun, constants);
      expect(Math.abs(t - tSchw * hawkingTemperatureFactor(a))).toBeLessThanOrEqual(1e-14 * tSchw);
    }
    expect(hawkingTemperature(1, gmSun, constants)).toBe(0);
    // T scales as 1/M.
    expect(Math.abs(hawkingTemperature(0.5, 10 * gmSun, constants) * 10 - hawkingTemperature(0.5, gmSun, constants)))
      .toBeLessThanOrEqual(1e-15 * t0);
  });
});

describe('agreement with a 50-digit evaluation of the BPT72 closed forms', () => {
  const cases: Array<[string, (a: number) => number, (a: Dec) => Dec]> = [
    ['isco (BPT72 eq. 2.21)', isco, refIsco],
    ['photonOrbit (BPT72 eq. 2.18)', photonOrbit, refPhotonOrbit],
    ['marginallyBound (BPT72 eq. 2.19)', marginallyBound, refMarginallyBound],
    ['horizonOuter', horizonOuter, refHorizonOuter],
    ['horizonInner', horizonInner, refHorizonInner],
    ['iscoEnergy', iscoEnergy, refIscoEnergy],
    ['efficiency', efficiency, refEfficiency],
    ['surfaceGravity', surfaceGravity, refSurfaceGravity],
  ];

  for (const [name, f, ref] of cases) {
    it(`${name}: relative error <= ${REL} over ${SPINS.length} spins in [-1, 1]`, () => {
      let worst = 0;
      let worstA = 0;
      for (const a of SPINS) {
        const x = f(a);
        expect(Number.isFinite(x), `${name}(${fmt(a)}) finite`).toBe(true);
        const err = relErr(x, ref(exact(a)));
        if (err > worst) {
          worst = err;
          worstA = a;
        }
        expect(err, `${name}(${fmt(a)}) = ${x}`).toBeLessThanOrEqual(REL);
      }
      // Much tighter than the contract in practice: document the margin if it ever erodes.
      expect(worst, `${name}: worst relative error ${worst} at a = ${fmt(worstA)}`).toBeLessThanOrEqual(1e-14);
    });
  }

  it('horizonInner keeps full relative accuracy at small spin (a = 1e-8 -> r- ~ 5e-17)', () => {
    for (const a of [1e-8, -1e-8, 3e-5, -0.01]) {
      const r = horizonInner(a);
      expect(relErr(r, refHorizonInner(exact(a))), `horizonInner(${a})`).toBeLessThanOrEqual(REL);
    }
    // r- = a^2/2 + a^4/8 + ...: at a = 1e-8 the a^4 term is 1e-16 relative.
    expect(Math.abs(horizonInner(1e-8) - 5e-17)).toBeLessThanOrEqual(1e-31);
    // Far below where 50 digits resolve 1 - sqrt(1 - a^2): compare with the series.
    expect(Math.abs(horizonInner(1e-150) / 5e-301 - 1)).toBeLessThanOrEqual(1e-15);
  });

  it('staticLimit(a, theta) matches 1 + sqrt(1 - a^2 cos^2 theta)', () => {
    for (const a of SPINS) {
      for (const theta of [0, 0.1, 0.7853981633974483, 1.2, Math.PI / 2, 2.5, Math.PI]) {
        const x = staticLimit(a, theta);
        expect(relErr(x, refStaticLimit(exact(a), exact(theta))), `staticLimit(${fmt(a)}, ${theta})`).toBeLessThanOrEqual(REL);
      }
      expect(staticLimit(a, 0)).toBeCloseTo(horizonOuter(a), 14);
      expect(staticLimit(a, Math.PI / 2)).toBeCloseTo(ergosphereEquatorial(a), 14);
    }
  });

  it('horizonAngularVelocity = a / (r+^2 + a^2) = a / (2 r+)', () => {
    for (const a of SPINS) {
      const ad = exact(a);
      const rp = refHorizonOuter(ad);
      expect(relErr(horizonAngularVelocity(a), ad.div(rp.pow(2).plus(ad.pow(2))))).toBeLessThanOrEqual(REL);
    }
  });
});

describe('circular-orbit identities (independent checks of eqs. 2.12, 2.13, 2.16)', () => {
  it('circularEnergy(isco(a), a) = iscoEnergy(a)', () => {
    for (const a of NON_EXTREMAL) {
      const e = circularEnergy(isco(a), a);
      expect(Math.abs(e - iscoEnergy(a)), `a = ${fmt(a)}`).toBeLessThanOrEqual(1e-10);
    }
  });

  it('circularAngularMomentum at the ISCO = 2(3 sqrt(r_ms) - 2a) / (sqrt 3 sqrt(r_ms)) (BPT72)', () => {
    for (const a of NON_EXTREMAL) {
      const r = isco(a);
      const l = circularAngularMomentum(r, a);
      const expected = (2 * (3 * Math.sqrt(r) - 2 * a)) / (Math.sqrt(3) * Math.sqrt(r));
      expect(Math.abs(l - expected), `a = ${fmt(a)}`).toBeLessThanOrEqual(1e-10 * expected);
    }
    expect(circularAngularMomentum(6, 0)).toBeCloseTo(2 * Math.sqrt(3), 14);
  });

  it('dE/dr changes sign from negative to positive across r_ms (E minimal at the ISCO)', () => {
    for (const a of NON_EXTREMAL) {
      const rms = isco(a);
      const delta = 1e-3 * (rms - photonOrbit(a));
      const h = delta / 10;
      const dEdr = (r: number) => (circularEnergy(r + h, a) - circularEnergy(r - h, a)) / (2 * h);
      const dLdr = (r: number) => (circularAngularMomentum(r + h, a) - circularAngularMomentum(r - h, a)) / (2 * h);
      expect(dEdr(rms - delta), `dE/dr below r_ms, a = ${fmt(a)}`).toBeLessThan(0);
      expect(dEdr(rms + delta), `dE/dr above r_ms, a = ${fmt(a)}`).toBeGreaterThan(0);
      expect(dLdr(rms - delta), `dL/dr below r_ms, a = ${fmt(a)}`).toBeLessThan(0);
      expect(dLdr(rms + delta), `dL/dr above r_ms, a = ${fmt(a)}`).toBeGreaterThan(0);
      const e = circularEnergy(rms, a);
      expect(circularEnergy(rms - delta, a)).toBeGreaterThan(e);
      expect(circularEnergy(rms + delta, a)).toBeGreaterThan(e);
    }
  });

  it('E = 1 at the marginally bound orbit r_mb (BPT72)', () => {
    for (const a of NON_EXTREMAL) {
      expect(Math.abs(circularEnergy(marginallyBound(a), a) - 1), `a = ${fmt(a)}`).toBeLessThanOrEqual(1e-10);
    }
  });

  it('E -> infinity as r -> r_ph from outside, and r = r_ph is rejected', () => {
    for (const a of [-1, -0.7, 0, 0.5, 0.9, 0.99]) {
      const rph = photonOrbit(a);
      let prev = circularEnergy(rph * (1 + 1e-2), a);
      for (const eps of [1e-4, 1e-6, 1e-8, 1e-10]) {
        const e = circularEnergy(rph * (1 + eps), a);
        expect(e).toBeGreaterThan(prev);
        prev = e;
      }
      expect(prev, `a = ${a}`).toBeGreaterThan(1e3);
      expect(() => circularEnergy(rph, a)).toThrow(RangeError);
      expect(() => circularAngularMomentum(rph, a)).toThrow(RangeError);
    }
  });

  it('Newtonian limit at large r: E -> 1 - 1/(2r), L -> sqrt(r), Omega -> r^(-3/2)', () => {
    for (const a of [-1, -0.3, 0, 0.6, 1]) {
      for (const r of [1e4, 1e8, 1e12, 1e200]) {
        expect(Math.abs(circularEnergy(r, a) - (1 - 1 / (2 * r)))).toBeLessThanOrEqual(2 / r ** 1.5 + 1e-15);
        expect(Math.abs(circularAngularMomentum(r, a) / Math.sqrt(r) - 1)).toBeLessThanOrEqual(4 / r);
        expect(Math.abs(circularAngularVelocity(r, a) * r ** 1.5 - 1)).toBeLessThanOrEqual(2 / r ** 1.5 + 1e-15);
      }
    }
  });

  it('Kepler-like relations: Omega = 1/(r^(3/2) + a); E, L match a 50-digit evaluation', () => {
    for (const a of SPINS) {
      const ad = exact(a);
      for (const r of [photonOrbit(a) + 0.01, marginallyBound(a) + 0.5, isco(a), 7.3, 15.9, 16.1, 42, 1e6]) {
        if (a === 1 && r === isco(a)) continue;
        const rd = exact(r);
        const u = rd.sqrt();
        const denom = rd.pow(0.75).times(u.pow(3).minus(THREE.times(u)).plus(TWO.times(ad)).sqrt());
        const eRef = u.pow(3).minus(TWO.times(u)).plus(ad).div(denom);
        const lRef = rd.pow(2).minus(TWO.times(ad).times(u)).plus(ad.pow(2)).div(denom);
        const wRef = ONE.div(u.pow(3).plus(ad));
        expect(relErr(circularEnergy(r, a), eRef), `E(${r}, ${fmt(a)})`).toBeLessThanOrEqual(REL);
        expect(relErr(circularAngularMomentum(r, a), lRef), `L(${r}, ${fmt(a)})`).toBeLessThanOrEqual(REL);
        expect(relErr(circularAngularVelocity(r, a), wRef), `Omega(${r}, ${fmt(a)})`).toBeLessThanOrEqual(REL);
      }
    }
  });
});

describe('structural properties (fast-check)', () => {
  const spin = fc.double({ min: -1, max: 1, noNaN: true });

  it('r+ <= r_ph <= r_mb <= r_ms for every spin', () => {
    fc.assert(
      fc.property(spin, (a) => {
        const tol = 1e-15;
        const rp = horizonOuter(a);
        const rph = photonOrbit(a);
        const rmb = marginallyBound(a);
        const rms = isco(a);
        return rp <= rph * (1 + tol) && rph <= rmb * (1 + tol) && rmb <= rms * (1 + tol) && horizonInner(a) <= rp;
      }),
      { numRuns: 2000 },
    );
  });

  it('r_ms, r_ph, r_mb decrease and efficiency increases with the signed spin', () => {
    fc.assert(
      fc.property(spin, spin, (x, y) => {
        const [lo, hi] = x <= y ? [x, y] : [y, x];
        const tol = 1e-15;
        return (
          isco(hi) <= isco(lo) * (1 + tol) &&
          photonOrbit(hi) <= photonOrbit(lo) * (1 + tol) &&
          marginallyBound(hi) <= marginallyBound(lo) * (1 + tol) &&
          efficiency(hi) >= efficiency(lo) * (1 - 4 * tol)
        );
      }),
      { numRuns: 2000 },
    );
  });

  it('all spin functions are finite on [-1, 1] and even in a where they should be', () => {
    fc.assert(
      fc.property(spin, (a) => {
        const values = [
          horizonOuter(a), horizonInner(a), ergosphereEquatorial(a), photonOrbit(a), marginallyBound(a), isco(a),
          iscoEnergy(a), efficiency(a), surfaceGravity(a), horizonAngularVelocity(a), hawkingTemperatureFactor(a),
        ];
        return (
          values.every(Number.isFinite) &&
          horizonOuter(a) === horizonOuter(-a) &&
          horizonInner(a) === horizonInner(-a) &&
          surfaceGravity(a) === surfaceGravity(-a) &&
          horizonAngularVelocity(a) === -horizonAngularVelocity(-a)
        );
      }),
      { numRuns: 1000 },
    );
  });
});

describe('domain validation', () => {
  const spinFunctions: Array<[string, (a: number) => number]> = [
    ['horizonOuter', horizonOuter],
    ['horizonInner', horizonInner],
    ['ergosphereEquatorial', ergosphereEquatorial],
    ['photonOrbit', photonOrbit],
    ['marginallyBound', marginallyBound],
    ['isco', isco],
    ['iscoEnergy', iscoEnergy],
    ['efficiency', efficiency],
    ['horizonAngularVelocity', horizonAngularVelocity],
    ['surfaceGravity', surfaceGravity],
    ['hawkingTemperatureFactor', hawkingTemperatureFactor],
    ['staticLimit(a, 1)', (a) => staticLimit(a, 1)],
    ['circularEnergy(10, a)', (a) => circularEnergy(10, a)],
    ['circularAngularMomentum(10, a)', (a) => circularAngularMomentum(10, a)],
    ['circularAngularVelocity(10, a)', (a) => circularAngularVelocity(10, a)],
  ];

  for (const [name, f] of spinFunctions) {
    it(`${name} throws RangeError for |a| > 1 and non-finite a`, () => {
      for (const a of [1 + 2 ** -52, -1 - 2 ** -52, 1.5, -2, NaN, Infinity, -Infinity]) {
        expect(() => f(a), `${name}(${a})`).toThrow(RangeError);
        expect(() => f(a)).toThrow(/-1 <= a <= 1/);
      }
      expect(() => f('0.5' as unknown as number)).toThrow(RangeError);
      expect(Number.isFinite(f(1))).toBe(true);
      expect(Number.isFinite(f(-1))).toBe(true);
    });
  }

  it('assertSpin returns its argument inside the range', () => {
    expect(assertSpin(-1)).toBe(-1);
    expect(assertSpin(0.25)).toBe(0.25);
  });

  it('circular-orbit functions reject r at or inside the photon orbit and non-finite r', () => {
    for (const [r, a] of [
      [3, 0],
      [2.5, 0],
      [4, -1],
      [1, 1],
      [0.5, 0.5],
      [-10, 0],
      [NaN, 0],
      [Infinity, 0],
    ] as const) {
      expect(() => circularEnergy(r, a), `E(${r}, ${a})`).toThrow(RangeError);
      expect(() => circularAngularMomentum(r, a), `L(${r}, ${a})`).toThrow(RangeError);
    }
    expect(() => circularEnergy(2.9, 0)).toThrow(/r > r_ph/);
    expect(() => circularAngularVelocity(2.9, 0)).toThrow(RangeError);
    expect(() => circularAngularVelocity(NaN, 0)).toThrow(RangeError);
    expect(circularAngularVelocity(3, 0)).toBeCloseTo(1 / (3 * Math.sqrt(3)), 15);
    expect(circularAngularVelocity(1, 1)).toBe(0.5);
  });

  it('staticLimit rejects theta outside [0, pi]; hawkingTemperature rejects bad gm and constants', () => {
    for (const theta of [-0.1, 4, NaN, Infinity]) {
      expect(() => staticLimit(0.5, theta)).toThrow(RangeError);
    }
    const constants = { c: 299792458, hbar: 1.054571817e-34, kB: 1.380649e-23 };
    for (const gm of [0, -1, NaN, Infinity]) {
      expect(() => hawkingTemperature(0, gm, constants)).toThrow(RangeError);
    }
    expect(() => hawkingTemperature(0, 1e20, { ...constants, kB: NaN })).toThrow(RangeError);
    expect(() => hawkingTemperature(0, 1e20, { ...constants, c: 0 })).toThrow(RangeError);
    expect(() => hawkingTemperature(2, 1e20, constants)).toThrow(RangeError);
  });
});
