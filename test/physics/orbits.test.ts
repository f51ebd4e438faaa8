/**
 * physics/orbits.ts against published values (Bardeen, Press & Teukolsky 1972; Einstein 1915;
 * Lense & Thirring 1918; Török & Stuchlík 2005), common-practice numbers, and high-precision
 * references written independently of the code: the orbit's four-velocity from the Boyer-Lindquist
 * metric components (not BPT72's closed forms), the locally non-rotating frame of Bardeen 1970 /
 * BPT72 §III, the epicyclic frequencies of Okazaki, Kato & Fukue 1987 and Kato 1990 in their
 * printed form, themselves checked against Carter's (1968) radial and polar geodesic equations.
 */
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { PhysicsDomainError } from '../../physics/errors.js';
import { isco, marginallyBound, photonOrbit } from '../../physics/kerr.js';
import {
  FREQUENCY_KINDS,
  type CircularOrbit,
  type FrequencyKind,
  achievableRange,
  angularFrequencyOf,
  circularOrbit,
  frequencyDomain,
  frequencyPeak,
  lnOrbitalAngularVelocity,
  radialEpicyclicFactor,
  radiiForFrequency,
  verticalEpicyclicFactor,
} from '../../physics/orbits.js';
import { reference } from '../support/reference.js';

// 260 digits: 1 - E and Omega - Omega_r keep >100 digits even at r = 1e100.
const { D, exact, relErr } = reference(260);
type Dec = InstanceType<typeof D>;
const EPS = Number.EPSILON;

/**
 * Reference values for the circular equatorial orbit at (r, a) in geometric units, from the
 * Boyer-Lindquist metric in the equatorial plane (MTW eq. 33.2; BPT72 eq. 2.1):
 *   g_tt = -(1 - 2/r), g_tphi = -2a/r, g_phiphi = r^2 + a^2 + 2a^2/r,
 * with Omega = 1/(r^(3/2) + a) (BPT72 eq. 2.16), u^t from -1 = g_ab u^a u^b, E = -u_t, L = u_phi,
 * the LNRF speed (Omega - omega) A/(r^2 sqrt(Delta)) with omega = 2ar/A, A = (r^2+a^2)^2 - a^2 Delta
 * (Bardeen 1970; BPT72 §III), and the epicyclic factors as printed by OKF87 and Kato 1990.
 */
function ref(rN: number, aN: number): Record<keyof Omit<CircularOrbit, 'r' | 'a' | 'stable' | 'bound' | 'isco'>, Dec> {
  const r = exact(rN);
  const a = exact(aN);
  const one = new D(1);
  const r32 = r.times(r.sqrt());
  const omega = one.div(r32.plus(a));
  const gtt = one.minus(new D(2).div(r)).neg();
  const gtp = a.times(2).div(r).neg();
  const gpp = r.pow(2).plus(a.pow(2)).plus(a.pow(2).times(2).div(r));
  const ut = one.div(gtt.plus(gtp.times(2).times(omega)).plus(gpp.times(omega.pow(2))).neg().sqrt());
  const delta = r.pow(2).minus(r.times(2)).plus(a.pow(2));
  const A = r.pow(2).plus(a.pow(2)).pow(2).minus(a.pow(2).times(delta));
  const v = omega.minus(a.times(2).times(r).div(A)).times(A).div(r.pow(2).times(delta.sqrt()));
  const E = gtt.plus(gtp.times(omega)).times(ut).neg();
  const L = gtp.plus(gpp.times(omega)).times(ut);
  // OKF87: Omega_r^2 = Omega^2 (1 - 6/r + 8a r^-3/2 - 3a^2/r^2); Kato 1990: Omega_theta^2 = Omega^2 (1 - 4a r^-3/2 + 3a^2/r^2)
  const Fr = one.minus(new D(6).div(r)).plus(a.times(8).div(r32)).minus(a.pow(2).times(3).div(r.pow(2)));
  const Ft = one.minus(a.times(4).div(r32)).plus(a.pow(2).times(3).div(r.pow(2)));
  const omR = Fr.isNeg() ? new D(0) : omega.times(Fr.sqrt());
  const omT = omega.times(Ft.sqrt());
  return {
    omega,
    dtauDt: one.div(ut),
    properPeriod: D.acos(-1).times(2).div(omega.times(ut)),
    speedLocal: v,
    energy: E,
    bindingEnergy: one.minus(E),
    angularMomentum: L,
    radialFactor: Fr,
    verticalFactor: Ft,
    omegaRadial: omR,
    radialGrowthRate: Fr.isNeg() ? omega.times(Fr.neg().sqrt()) : new D(0),
    omegaVertical: omT,
    // Stella & Vietri 1998: Omega - Omega_r, Omega - Omega_theta
    omegaPeriastron: omega.minus(omR),
    omegaNodal: omega.minus(omT),
  };
}

const SPINS = [-1, -0.9999, -0.9, -0.5, -1e-3, 0, 1e-3, 0.3, 0.7, 0.9, 0.99, 0.998, 0.9999];

describe('published values', () => {
  it('BPT72: at the Schwarzschild ISCO (r = 6) E = sqrt(8/9) and L = 2 sqrt(3) (tolerance 4 ulp)', () => {
    const o = circularOrbit(isco(0), 0);
    expect(relErr(o.energy, new D(8).div(9).sqrt())).toBeLessThan(4 * EPS);
    expect(relErr(o.angularMomentum, new D(12).sqrt())).toBeLessThan(4 * EPS);
    // 1 - sqrt(8/9) = 0.0572: the Schwarzschild thin-disk efficiency (BPT72; Novikov & Thorne 1973).
    expect(relErr(o.bindingEnergy, new D(1).minus(new D(8).div(9).sqrt()))).toBeLessThan(8 * EPS);
    expect(o.stable).toBe(true);
    expect(o.bound).toBe(true);
  });

  it('BPT72: extremal retrograde ISCO (a = -1, r = 9): E = 5/(3 sqrt 3), |L| = 22/(3 sqrt 3)', () => {
    const o = circularOrbit(9, -1);
    const s3 = new D(3).sqrt();
    expect(relErr(o.energy, new D(5).div(s3.times(3)))).toBeLessThan(8 * EPS);
    expect(relErr(o.angularMomentum, new D(22).div(s3.times(3)))).toBeLessThan(8 * EPS);
    expect(o.radialFactor).toBe(0);
  });

  it('common practice: Omega at the Schwarzschild ISCO is 6^(-3/2) c^3/(GM) (the 2.2 kHz (M_sun/M) of kHz QPOs)', () => {
    expect(relErr(circularOrbit(6, 0).omega, new D(6).pow(-1.5))).toBeLessThan(2 * EPS);
  });

  it('Schwarzschild: the speed measured by static observers is (r - 2)^(-1/2) (textbook result, common practice): 1/2 at the ISCO, -> 1 at the photon orbit', () => {
    expect(relErr(circularOrbit(6, 0).speedLocal, new D(0.5))).toBeLessThan(4 * EPS);
    expect(relErr(circularOrbit(3 + 1e-9, 0).speedLocal, new D(1).div(exact(3 + 1e-9).minus(2).sqrt()))).toBeLessThan(1e-14);
  });

  it.each([-1, -0.9, -0.5, 0, 0.5, 0.9, 0.99, 0.998])('the radial epicyclic frequency vanishes at the ISCO (BPT72 eq. 2.20 = OKF87 Omega_r^2 = 0), a = %s', (a) => {
    const rMs = isco(a);
    const at = circularOrbit(rMs, a);
    expect(at.radialFactor).toBe(0);
    expect(at.omegaRadial).toBe(0);
    expect(at.radialGrowthRate).toBe(0);
    // Omega (1 - F_r)/(1 + sqrt F_r) with F_r = 0: Omega times 1 - F_r from its own closed form (4 ulp).
    expect(relErr(at.omegaPeriastron, exact(at.omega))).toBeLessThan(4 * EPS);
    expect(at.stable).toBe(true);
    // Either side: unstable (Omega_r^2 < 0) inside, stable outside, with the size the decimal reference gives.
    for (const r of [rMs * (1 - 1e-9), rMs * (1 + 1e-9)]) {
      const o = circularOrbit(r, a);
      const R = ref(r, a);
      expect(Math.sign(o.radialFactor)).toBe(R.radialFactor.isNeg() ? -1 : 1);
      expect(o.stable).toBe(r >= rMs);
      // Condition number r/|r - r_ms| = 1e9: the factor's relative error is bounded by ~8 eps 1e9.
      expect(relErr(o.radialFactor, R.radialFactor)).toBeLessThan(8 * EPS * 1.1e9);
    }
  });

  it('Schwarzschild: vertical epicyclic = orbital frequency, no nodal precession (Kato 1990 with a = 0; common practice)', () => {
    for (const r of [3.5, 6, 8, 17, 1e6]) {
      const o = circularOrbit(r, 0);
      expect(o.omegaVertical).toBe(o.omega);
      expect(o.omegaNodal).toBe(0);
      expect(o.verticalFactor).toBe(1);
    }
  });

  it('Schwarzschild: the radial epicyclic frequency peaks at r = 8 GM/c^2 (Kato 1990; common practice), 1e-12', () => {
    const p = frequencyPeak('radial_epicyclic', 0)!;
    expect(Math.abs(p.r - 8)).toBeLessThan(8e-12);
    // Omega_r(8) = 8^(-3/2) sqrt(1/4) (OKF87 at a = 0)
    expect(relErr(p.omega, new D(8).pow(-1.5).div(2))).toBeLessThan(4 * EPS);
  });

  it('Török & Stuchlík 2005 (A&A 437, 775; from memory): the vertical epicyclic frequency peaks outside the ISCO only for a > 0.9524', () => {
    const below = frequencyPeak('vertical_epicyclic', 0.952)!;
    const above = frequencyPeak('vertical_epicyclic', 0.953)!;
    expect(below.r).toBeLessThan(isco(0.952));
    expect(above.r).toBeGreaterThan(isco(0.953));
    // No peak at all for a <= 0 (derived in physics/orbits.ts: h_t > 0).
    expect(frequencyPeak('vertical_epicyclic', -0.9)).toBeUndefined();
    expect(frequencyPeak('vertical_epicyclic', 0)).toBeUndefined();
    expect(frequencyPeak('vertical_epicyclic', 0.5)).toBeUndefined();
  });

  it('weak field: periastron precession -> 3 Omega/r (Einstein 1915), nodal -> 2a/r^3 (Lense & Thirring 1918), relative 1e-4 at r = 1e10', () => {
    const r = 1e10;
    for (const a of [0.9, -0.5]) {
      const o = circularOrbit(r, a);
      expect(Math.abs(o.omegaPeriastron / ((3 * o.omega) / r) - 1)).toBeLessThan(1e-4);
      expect(Math.abs(o.omegaNodal / ((2 * a) / r ** 3) - 1)).toBeLessThan(1e-4);
    }
  });
});

describe('Carter 1968 geodesic equations confirm the printed epicyclic formulas (decimal, 80 digits)', () => {
  // Equatorial Kerr geodesics (Carter 1968; MTW eq. 33.32 with Q = 0): r^4 (dr/dtau)^2 = R(r),
  // R = (E^2 - 1) r^4 + 2 r^3 + (a^2 (E^2 - 1) - L^2) r^2 + 2 (L - aE)^2 r. Small radial
  // oscillations: omega_tau^2 = -R''(r0)/(2 r0^4); polar: omega_tau^2 = (L^2 + a^2 (1 - E^2))/r0^4;
  // coordinate-time frequencies divide by u^t. E, L, u^t from BPT72 eqs. 2.12, 2.13.
  const { D: D80 } = reference(80);
  it.each([
    ['7', '0.5'],
    ['2.5', '0.9'],
    ['12', '-0.7'],
    ['1.5', '0.99'],
    ['6', '0'],
  ])('r = %s, a = %s', (rs, as) => {
    const r = new D80(rs);
    const a = new D80(as);
    const one = new D80(1);
    const u = r.sqrt();
    const r32 = r.times(u);
    const omega = one.div(r32.plus(a));
    const Dd = r32.minus(u.times(3)).plus(a.times(2));
    const norm = r.pow(0.75).times(Dd.sqrt());
    const E = r32.minus(u.times(2)).plus(a).div(norm);
    const L = r.pow(2).minus(a.times(2).times(u)).plus(a.pow(2)).div(norm);
    const ut = r32.plus(a).div(norm);
    const e2 = E.pow(2).minus(1);
    const R0 = e2.times(r.pow(4)).plus(r.pow(3).times(2)).plus(a.pow(2).times(e2).minus(L.pow(2)).times(r.pow(2))).plus(L.minus(a.times(E)).pow(2).times(2).times(r));
    const Rpp = e2.times(12).times(r.pow(2)).plus(r.times(12)).plus(a.pow(2).times(e2).minus(L.pow(2)).times(2));
    expect(R0.abs().toNumber()).toBeLessThan(1e-70); // a circular orbit: R(r0) = 0
    const fr = Rpp.neg().div(r.pow(4).times(2)).div(ut.pow(2)).div(omega.pow(2));
    const ft = L.pow(2).plus(a.pow(2).times(one.minus(E.pow(2)))).div(r.pow(4)).div(ut.pow(2)).div(omega.pow(2));
    const FrKato = one.minus(new D80(6).div(r)).plus(a.times(8).div(r32)).minus(a.pow(2).times(3).div(r.pow(2)));
    const FtKato = one.minus(a.times(4).div(r32)).plus(a.pow(2).times(3).div(r.pow(2)));
    expect(fr.minus(FrKato).abs().toNumber()).toBeLessThan(1e-70);
    expect(ft.minus(FtKato).abs().toNumber()).toBeLessThan(1e-70);
    // And the code's factors at the same point (8 eps times the condition number for F_r).
    const rN = Number(rs);
    const aN = Number(as);
    const cond = 1 + rN / Math.abs(rN - isco(aN));
    expect(relErr(radialEpicyclicFactor(rN, aN), FrKato)).toBeLessThan(8 * EPS * cond);
    expect(relErr(verticalEpicyclicFactor(rN, aN), FtKato)).toBeLessThan(8 * EPS);
  });
});

describe('decimal.js cross-checks of every closed form, spins -1 ... 0.9999 (260 digits)', () => {
  /**
   * Tolerance: 8 eps times the condition number of each quantity in r: 1 + r/(r - r_ph) for
   * everything (D = r^(3/2) - 3r^(1/2) + 2a vanishes at the photon orbit), plus r/|r - r_ms| for
   * the radial factor and what depends on it, plus r/|r - r_mb| for 1 - E (which vanishes at r_mb).
   * The largest error found when this was written was 1.3 eps times the condition number.
   */
  it.each(SPINS)('a = %s', (a) => {
    const rPh = photonOrbit(a);
    const rMs = isco(a);
    const rMb = marginallyBound(a);
    const radii = [rPh * 1.001, rPh * 1.1, rMb * (1 + 1e-6), rMs * 0.99, rMs * (1 - 1e-6), rMs * (1 + 1e-6), rMs * 1.01, 3, 10, 16, 17, 100, 1e6, 1e12, 1e100].filter((r) => r > rPh);
    for (const r of radii) {
      const o = circularOrbit(r, a);
      const R = ref(r, a);
      for (const k of Object.keys(R) as Array<keyof typeof R>) {
        let cond = 1 + r / (r - rPh);
        if (/radial|Radial|Periastron/.test(k)) cond += r / Math.abs(r - rMs);
        if (k === 'bindingEnergy') cond += r / Math.abs(r - rMb);
        if (R[k].isZero()) {
          expect(o[k], `${k} at r = ${r}`).toBe(0);
          continue;
        }
        expect(relErr(o[k], R[k]), `${k} at r = ${r}, a = ${a}`).toBeLessThan(8 * EPS * cond);
      }
      expect(o.stable).toBe(r >= rMs);
      expect(o.bound).toBe(r > rMb);
    }
  });

  it('ln Omega stays finite and accurate where Omega underflows (r = 1e250, 1e300)', () => {
    for (const r of [1e250, 1e300]) {
      for (const a of [0.9, -0.9]) {
        const want = exact(r).pow(1.5).plus(exact(a)).ln().neg();
        expect(relErr(lnOrbitalAngularVelocity(r, a), want)).toBeLessThan(4 * EPS);
        const o = circularOrbit(r, a);
        for (const [k, v] of Object.entries(o)) if (typeof v === 'number') expect(Number.isNaN(v), k).toBe(false);
      }
    }
  });
});

describe('domains and errors', () => {
  it('no orbit at or inside the photon orbit: PhysicsDomainError on "r" naming r_ph', () => {
    for (const a of [-1, 0, 0.5, 1]) {
      const rPh = photonOrbit(a);
      for (const r of [rPh, rPh * 0.9, Number.NaN, Infinity, -1]) {
        let err: unknown;
        try {
          circularOrbit(r, a);
        } catch (e) {
          err = e;
        }
        expect(err).toBeInstanceOf(PhysicsDomainError);
        expect((err as PhysicsDomainError).parameter).toBe('r');
        expect((err as PhysicsDomainError).allowed).toMatch(/r > r_ph/);
      }
    }
    expect(() => circularOrbit(6, 1.5)).toThrow(RangeError);
  });

  it('radial and periastron frequencies are defined from the ISCO out, the others outside the photon orbit', () => {
    expect(frequencyDomain('radial_epicyclic', 0)).toEqual({ lo: 6, loClosed: true });
    expect(frequencyDomain('orbital', 0)).toEqual({ lo: 3, loClosed: false });
    expect(() => angularFrequencyOf('radial_epicyclic', 5.9, 0)).toThrow(PhysicsDomainError);
    expect(() => angularFrequencyOf('periastron_precession', 5.9, 0)).toThrow(PhysicsDomainError);
    expect(angularFrequencyOf('vertical_epicyclic', 5.9, 0)).toBeGreaterThan(0);
    // Nodal precession as a magnitude: a retrograde orbit's node regresses (Omega_theta > Omega).
    expect(circularOrbit(10, -0.5).omegaNodal).toBeLessThan(0);
    expect(angularFrequencyOf('nodal_precession', 10, -0.5)).toBe(-circularOrbit(10, -0.5).omegaNodal);
  });

  it('an unreachable frequency throws on "frequency" with the achievable range', () => {
    const R = achievableRange('orbital', 0);
    expect(R.maxAttained).toBe(false);
    expect(relErr(R.max, new D(27).sqrt().pow(-1))).toBeLessThan(4 * EPS); // Omega(r_ph = 3) = 3^(-3/2)
    for (const [kind, w] of [
      ['orbital', R.max],
      ['radial_epicyclic', 0.03],
      ['nodal_precession', 1e-3],
    ] as Array<[FrequencyKind, number]>) {
      let err: unknown;
      try {
        radiiForFrequency(kind, w, 0);
      } catch (e) {
        err = e;
      }
      expect(err, kind).toBeInstanceOf(PhysicsDomainError);
      expect((err as PhysicsDomainError).parameter).toBe('frequency');
    }
    // The peak itself is reached: one (double) root there.
    const p = frequencyPeak('radial_epicyclic', 0.5)!;
    const at = radiiForFrequency('radial_epicyclic', p.omega, 0.5);
    expect(at.roots.length).toBe(1);
    expect(Math.abs(at.roots[0] / p.r - 1)).toBeLessThan(1e-12);
  });
});

describe('monotonic pieces and peaks (scan, 300 radii per curve)', () => {
  it.each(SPINS.filter((a) => a < 1))('a = %s: each frequency rises (only) up to its peak and falls beyond', (a) => {
    for (const kind of FREQUENCY_KINDS) {
      if (kind === 'nodal_precession' && a === 0) continue;
      const dom = frequencyDomain(kind, a);
      const peak = frequencyPeak(kind, a);
      if (kind === 'orbital' || kind === 'periastron_precession' || kind === 'nodal_precession') expect(peak, kind).toBeUndefined();
      if (kind === 'radial_epicyclic') expect(peak, kind).toBeDefined();
      let prev = NaN;
      let prevR = NaN;
      for (let i = 1; i <= 300; i++) {
        const r = dom.lo * Math.pow(1e4 / dom.lo, i / 300);
        const f = angularFrequencyOf(kind, r, a);
        // Pairs straddling the peak say nothing about the side; all others must rise before it, fall after.
        if (i > 1 && !(peak && prevR < peak.r && r > peak.r)) {
          const shouldRise = peak !== undefined && r <= peak.r;
          expect(f > prev, `${kind} between r = ${prevR} and ${r} (peak ${peak?.r})`).toBe(shouldRise);
        }
        prev = f;
        prevR = r;
      }
    }
  });
});

describe('round trips: r -> frequency -> r, every kind', () => {
  /**
   * The relative error of the radius is that of the frequency (a few eps) divided by
   * |d ln f/d ln r|, estimated here by a central difference; the tolerance is 1e-13 times
   * (1 + 1/|d ln f/d ln r|), so points on a flat top (the peak) are checked only loosely.
   */
  const slope = (kind: FrequencyKind, r: number, a: number) => {
    const h = 1e-5;
    return (Math.log(angularFrequencyOf(kind, r * (1 + h), a)) - Math.log(angularFrequencyOf(kind, r * (1 - h), a))) / (2 * h);
  };
  it.each([-0.9999, -0.6, 0, 0.4, 0.8, 0.96, 0.9999])('a = %s', (a) => {
    for (const kind of FREQUENCY_KINDS) {
      if (kind === 'nodal_precession' && a === 0) continue;
      const dom = frequencyDomain(kind, a);
      for (const r of [dom.lo * 1.02, dom.lo * 1.3, dom.lo * 2, 7.5, 40, 3e3, 1e7].filter((x) => x > dom.lo * 1.01)) {
        const w = angularFrequencyOf(kind, r, a);
        const { roots } = radiiForFrequency(kind, w, a);
        expect(roots.length).toBeGreaterThanOrEqual(1);
        expect(roots.length).toBeLessThanOrEqual(2);
        expect([...roots].sort((x, y) => x - y)).toEqual(roots);
        const best = roots.reduce((p, q) => (Math.abs(q / r - 1) < Math.abs(p / r - 1) ? q : p));
        const tol = 1e-13 * (1 + 1 / Math.abs(slope(kind, r, a)));
        expect(Math.abs(best / r - 1), `${kind} at r = ${r}`).toBeLessThan(tol);
        // Every root is a root: a small residual, or (where the curve is steep, next to the ISCO, or
        // the root sits on the ISCO within rounding) a sign change of f - w within x (1 +- 1e-12).
        for (const x of roots) {
          const f = (y: number) => angularFrequencyOf(kind, y, a) - w;
          const lo = dom.loClosed ? Math.max(x * (1 - 1e-12), dom.lo) : x * (1 - 1e-12);
          const small = Math.abs(f(x) / w) < 1e-12;
          const bracketed = f(lo) * f(x * (1 + 1e-12)) <= 0;
          expect(small || bracketed, `${kind}: residual ${f(x) / w} at ${x}`).toBe(true);
        }
      }
    }
  });

  it('orbital: the closed form r^(3/2) = 1/Omega - a (BPT72 eq. 2.16) against decimal', () => {
    for (const a of [-0.9, 0, 0.9]) {
      for (const w of [0.1, 1e-3, 1e-12]) {
        const want = new D(1).div(exact(w)).minus(exact(a)).pow(new D(2).div(3));
        expect(relErr(radiiForFrequency('orbital', w, a).roots[0], want)).toBeLessThan(4 * EPS);
      }
    }
  });
});

describe('properties (fast-check)', () => {
  it('every output is a number (no NaN), 0 < v < 1, E > 0, and the frequencies are ordered by the sign of a', () => {
    fc.assert(
      // r = r_ph (1 + 10^k), k from -9 (hugging the photon orbit) to 3.
      fc.property(fc.double({ min: -1, max: 1, noNaN: true }), fc.double({ min: -9, max: 3, noNaN: true }), (a, k) => {
        const r = photonOrbit(a) * (1 + 10 ** k);
        if (!(r > photonOrbit(a))) return;
        let o: CircularOrbit;
        try {
          o = circularOrbit(r, a);
        } catch (e) {
          // Only the photon-orbit edge itself may be refused.
          expect(e).toBeInstanceOf(RangeError);
          return;
        }
        for (const [k, v] of Object.entries(o)) if (typeof v === 'number') expect(Number.isFinite(v), k).toBe(true);
        expect(o.speedLocal).toBeGreaterThan(0);
        expect(o.speedLocal).toBeLessThanOrEqual(1);
        expect(o.energy).toBeGreaterThan(0);
        expect(o.radialFactor).toBeLessThan(1);
        expect(o.stable).toBe(o.radialFactor >= 0);
        if (a > 0) expect(o.omegaVertical).toBeLessThanOrEqual(o.omega);
        if (a < 0) expect(o.omegaVertical).toBeGreaterThanOrEqual(o.omega);
      }),
      { numRuns: 300, seed: 7 },
    );
  });
});
