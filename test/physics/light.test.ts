/**
 * physics/light.ts against published values (the solar-limb deflection, the second-order term at
 * the limb, the Viking-era Mars delay), independent 40-digit references (decimal.js: the Shapiro
 * closed form; Darwin's elliptic-integral form of the exact Schwarzschild deflection with Carlson's
 * R_F), an independent double-precision quadrature with another substitution, the weak-field series
 * at large b and the strong-deflection limit near the photon sphere.
 */
import { describe, expect, it } from 'vitest';
import { PhysicsDomainError } from '../../physics/errors.js';
import { B_CRITICAL, deflectionExact, deflectionFirstOrder, deflectionSecondOrderGR, shapiroDelay, turningPoint } from '../../physics/light.js';
import { darwinReference } from '../support/darwin.js';
import { reference } from '../support/reference.js';

const { D, exact, relErr } = reference(40);
type Dec = InstanceType<typeof D>;

// Published constants (sources beside each).
const C = 299792458; // m/s, exact (SI 2019)
const GM_SUN = 1.3271244e20; // m^3 s^-2, IAU 2015 Resolution B3 (nominal)
const R_SUN = 6.957e8; // m, IAU 2015 Resolution B3 (nominal)
const AU = 149597870700; // m, IAU 2012 Resolution B2 (exact)
const ARCSEC = 648000 / Math.PI; // arcsec per rad

const PI = D.acos(-1);
const d = (x: number): Dec => exact(x);

// ---------------------------------------------------------------------------
// 40-digit references, written independently of physics/

const { turningRef, darwinDeflection } = darwinReference(D);

/** (1 + gamma) GM/c^3 ln[(r_e + r_r + R)/(r_e + r_r - R)] (Shapiro 1964; Will 2014), 40 digits. */
function shapiroRef(gm: Dec, re: Dec, rr: Dec, b: Dec, gamma: Dec, between = true): Dec {
  const pe = re.pow(2).minus(b.pow(2)).sqrt();
  const pr = rr.pow(2).minus(b.pow(2)).sqrt();
  const R = between ? pe.plus(pr) : pe.minus(pr).abs();
  const s = re.plus(rr);
  return new D(1).plus(gamma).times(gm).div(d(C).pow(3)).times(s.plus(R).div(s.minus(R)).ln());
}

// ---------------------------------------------------------------------------

describe('light deflection: weak field', () => {
  const qSun = GM_SUN / (C * C) / R_SUN; // GM/(c^2 R) at the solar limb

  it('the solar limb: 1.75 arcsec in general relativity (Dyson, Eddington & Davidson 1920 prediction; Will 2014, Living Rev. Relativ. 17, 4) within 0.01, IAU 2015 B3 nominal GM and radius', () => {
    const first = deflectionFirstOrder(qSun);
    expect(Math.abs(first * ARCSEC - 1.75)).toBeLessThan(0.01);
    expect(Math.abs((first + deflectionSecondOrderGR(qSun)) * ARCSEC - 1.75)).toBeLessThan(0.01);
    expect(Math.abs(deflectionExact(qSun) * ARCSEC - 1.75)).toBeLessThan(0.01);
  });

  it.each([0, 0.5, 0.99998, 2, -1])('PPN gamma = %s: the first-order term scales as (1 + gamma)/2 (Will 2014), to 1e-15', (g) => {
    const ratio = deflectionFirstOrder(qSun, g) / deflectionFirstOrder(qSun, 1);
    expect(Math.abs(ratio - (1 + g) / 2)).toBeLessThan(1e-15);
  });

  it('second-order term at the solar limb: about 11 microarcseconds (Epstein & Shapiro 1980, Phys. Rev. D 22, 2947, abstract) within 0.5', () => {
    expect(Math.abs(deflectionSecondOrderGR(qSun) * ARCSEC * 1e6 - 11)).toBeLessThan(0.5);
  });

  it('closed forms at 40 digits: 4 GM/(c^2 b) (1 + gamma)/2 and (15 pi/4)(GM/(c^2 b))^2', () => {
    for (const [q, g] of [
      [qSun, 1],
      [1e-3, 0.7],
      [0.19, 1.3],
    ]) {
      expect(relErr(deflectionFirstOrder(q, g), d(q).times(2).times(d(g).plus(1)))).toBeLessThan(2e-16);
      expect(relErr(deflectionSecondOrderGR(q), PI.times(15).div(4).times(d(q).pow(2)))).toBeLessThan(4e-16);
    }
  });
});

describe('light deflection: exact Schwarzschild', () => {
  it.each([1e8, 1e5, 1e3, 100, 30, 12, 8, 6.4549722436790, 6, 5.5, 5.25, 5.2])(
    'b = %s GM/c^2 matches Darwin\'s elliptic-integral form (Darwin 1959) at 40 digits to 1e-13',
    (b) => {
      expect(relErr(deflectionExact(1 / b), darwinDeflection(d(1 / b).pow(-1)))).toBeLessThan(1e-13);
    },
  );

  it('an independent quadrature (u = u0 (1 - s^2), 400 x 24-point Gauss-Legendre, common practice) agrees to 1e-12 at b = 7, 10 and 40 GM/c^2', () => {
    // Gauss-Legendre nodes by Newton on P_24 (written here again, not imported)
    const n = 24;
    const xs: number[] = [];
    const ws: number[] = [];
    for (let i = 0; i < n; i++) {
      let z = Math.cos((Math.PI * (i + 0.75)) / (n + 0.5));
      let dp = 0;
      for (let it = 0; it < 50; it++) {
        let p0 = 1;
        let p1 = z;
        for (let j = 2; j <= n; j++) [p0, p1] = [p1, ((2 * j - 1) * z * p1 - (j - 1) * p0) / j];
        dp = (n * (z * p1 - p0)) / (z * z - 1);
        z -= p1 / dp;
      }
      xs.push(z);
      ws.push(2 / ((1 - z * z) * dp * dp));
    }
    for (const b of [7, 10, 40]) {
      const u0 = 1 / turningRef(d(b)).toNumber();
      // 1/b^2 - u^2 + 2u^3 = (u0 - u) Q(u), Q(u) = u0 + u - 2 (u0^2 + u0 u + u^2); u = u0 (1 - s^2)
      const f = (s: number) => {
        const u = u0 * (1 - s * s);
        return (2 * Math.sqrt(u0)) / Math.sqrt(u0 + u - 2 * (u0 * u0 + u0 * u + u * u));
      };
      const panels = 400;
      let I = 0;
      for (let p = 0; p < panels; p++) {
        const mid = (p + 0.5) / panels;
        for (let k = 0; k < n; k++) I += (ws[k] * f(mid + (0.5 / panels) * xs[k])) / (2 * panels);
      }
      expect(Math.abs(deflectionExact(1 / b) - (2 * I - Math.PI))).toBeLessThan(1e-12);
    }
  });

  it('matches the weak-field series at large b, the difference being third order: (128/3)(GM/(c^2 b))^3 (Keeton & Petters 2005, Phys. Rev. D 72, 104006; from memory)', () => {
    for (const b of [1e3, 1e4, 3e4]) {
      const q = 1 / b;
      const diff = deflectionExact(q) - (deflectionFirstOrder(q) + deflectionSecondOrderGR(q));
      // next term (3465 pi/64) q^4 = 170 q^4: |diff/q^3 - 128/3| < 200 q (plus the rounding of diff)
      expect(Math.abs(diff / q ** 3 - 128 / 3)).toBeLessThan(200 * q + (4e-16 * 4 * q) / q ** 3);
    }
    // and it is the first-order term alone to O(q^2) far out (common practice)
    expect(relErr(deflectionExact(1e-12), d(4e-12))).toBeLessThan(1e-11);
  });

  it('diverges logarithmically at the photon sphere: Delta phi = -ln(b/b_c - 1) + ln[216 (7 - 4 sqrt 3)] - pi + O(e ln e) (Bozza 2002, Phys. Rev. D 66, 103001: a = 1, b = -0.4002)', () => {
    const bBar = Math.log(216 * (7 - 4 * Math.sqrt(3))) - Math.PI; // -0.40023 (Bozza 2002)
    expect(Math.abs(bBar + 0.4002)).toBeLessThan(1e-4);
    for (const e of [1e-4, 1e-6, 1e-8]) {
      const q = 1 / (B_CRITICAL * (1 + e));
      const dphi = deflectionExact(q);
      expect(Math.abs(dphi + Math.log(e) - bBar)).toBeLessThan(20 * e * Math.abs(Math.log(e)) + 1e-7);
    }
    // slope: a tenfold smaller b/b_c - 1 adds ln 10 (the coefficient is 1 in b, i.e. 2 in r0/3 - 1)
    const at = (e: number) => deflectionExact(1 / (B_CRITICAL * (1 + e)));
    expect(Math.abs(at(1e-7) - at(1e-6) - Math.log(10))).toBeLessThan(1e-4);
    // in terms of the closest approach: Delta phi + 2 ln(r0/3 - 1) tends to a constant
    const c = (e: number) => {
      const q = 1 / (B_CRITICAL * (1 + e));
      const tp = turningPoint(q);
      return at(e) + 2 * Math.log((tp.oneMinus3u0 * tp.r0) / 3);
    };
    // (the correction is O(r0 - 3) = O(sqrt(b/b_c - 1)))
    expect(Math.abs(c(1e-8) - c(1e-10))).toBeLessThan(10 * Math.sqrt(1e-8));
    expect(Math.abs(c(1e-10) - c(1e-12))).toBeLessThan(10 * Math.sqrt(1e-10));
  });

  it('is a 422-type domain error at and inside the critical impact parameter sqrt(27) GM/c^2 (Chandrasekhar 1983, section 20)', () => {
    for (const b of [B_CRITICAL, B_CRITICAL * (1 - 1e-12), 3, 0.5]) {
      expect(() => deflectionExact(1 / b)).toThrow(PhysicsDomainError);
      try {
        deflectionExact(1 / b);
      } catch (err) {
        expect((err as PhysicsDomainError).allowed).toMatch(/sqrt\(27\)/);
      }
    }
    expect(() => deflectionExact(-1)).toThrow(PhysicsDomainError);
    expect(() => deflectionExact(Number.NaN)).toThrow(PhysicsDomainError);
    expect(deflectionExact(0)).toBe(0);
  });

  it('the turning point solves r^3 - b^2 r + 2 b^2 = 0 (40-digit Newton) to 1e-15, and r0 - 3 keeps its precision near the photon sphere', () => {
    for (const b of [1e9, 1e3, 10, 5.3]) {
      const tp = turningPoint(1 / b);
      expect(relErr(tp.r0, turningRef(d(1 / b).pow(-1)))).toBeLessThan(1e-15);
      expect(relErr(tp.r0OverB * b, turningRef(d(1 / b).pow(-1)))).toBeLessThan(1e-15);
    }
    const b = B_CRITICAL * (1 + 1e-10);
    const r0 = turningRef(d(1 / b).pow(-1));
    const tp = turningPoint(1 / b);
    expect(relErr(tp.oneMinus3u0, r0.minus(3).div(r0))).toBeLessThan(1e-14);
    // r0 -> 3 as b -> sqrt(27): r0 - 3 ~ sqrt(6 (b/b_c - 1)) ... small
    expect(Math.abs(turningPoint(1 / (B_CRITICAL * (1 + 1e-14))).r0 - 3)).toBeLessThan(1e-6);
  });
});

describe('Shapiro delay', () => {
  it('Earth-Mars superior conjunction, ray grazing the Sun: round trip about 250 microseconds (Reasenberg et al. 1979, ApJ 234, L219, Viking; from memory) within 10', () => {
    // Mars at 1.524 AU (mean distance; from memory), Earth at 1 AU, b = R_sun (IAU 2015 B3)
    const dt = shapiroDelay(GM_SUN, AU, 1.524 * AU, R_SUN);
    expect(Math.abs(2 * dt.oneWay * 1e6 - 250)).toBeLessThan(10);
  });

  it.each([
    [GM_SUN, AU, 8.43 * AU, 1.6 * R_SUN, 1],
    [GM_SUN, AU, 5.2 * AU, 40 * R_SUN, 0.99998],
    [3.986004418e14, 7e6, 4.2e7, 6.5e6, 1],
    [1e25, 1e16, 2e16, 3e14, 0.5],
  ])('the closed form at 40 digits (Shapiro 1964; Will 2014): GM %s, r_e %s, r_r %s, b %s, gamma %s, both geometries', (gm, re, rr, b, g) => {
    const between = shapiroDelay(gm, re, rr, b, g, 'between');
    expect(relErr(between.oneWay, shapiroRef(d(gm), d(re), d(rr), d(b), d(g)))).toBeLessThan(1e-14);
    const outside = shapiroDelay(gm, re, rr, b, g, 'outside');
    expect(relErr(outside.oneWay, shapiroRef(d(gm), d(re), d(rr), d(b), d(g), false))).toBeLessThan(1e-13);
    // the b << r form, (1 + gamma) GM/c^3 ln(4 r_e r_r / b^2) (Will 2014)
    const small = new D(1).plus(d(g)).times(d(gm)).div(d(C).pow(3)).times(d(re).times(d(rr)).times(4).div(d(b).pow(2)).ln());
    expect(relErr(between.smallB, small)).toBeLessThan(1e-14);
  });

  it('the b << r form is the limit of the exact-geometry form, the difference falling as b^2 (Will 2014; common practice)', () => {
    const diff = (b: number) => {
      const x = shapiroDelay(GM_SUN, AU, 5 * AU, b);
      return Math.abs(x.oneWay - x.smallB);
    };
    const big = diff(0.01 * AU);
    const small = diff(0.001 * AU);
    expect(Math.abs(big / small / 100 - 1)).toBeLessThan(0.01);
    // relative difference about b^2 (1/r_e^2 + 1/r_r^2)/(4 ln(4 r_e r_r/b^2)) at b = 0.01 AU
    const x = shapiroDelay(GM_SUN, AU, 5 * AU, 0.01 * AU);
    expect(Math.abs(x.oneWay - x.smallB) / x.oneWay).toBeLessThan(1e-4);
  });

  it('a radial path (b = 0, "outside"): (1 + gamma) GM/c^3 ln(r_r/r_e) exactly (common practice), and the PPN scaling (1 + gamma)/2', () => {
    const x = shapiroDelay(GM_SUN, 0.4 * AU, 1.2 * AU, 0, 1, 'outside');
    expect(relErr(x.oneWay, d(GM_SUN).times(2).div(d(C).pow(3)).times(d(1.2 * AU).div(d(0.4 * AU)).ln()))).toBeLessThan(1e-15);
    const g = shapiroDelay(GM_SUN, AU, 2 * AU, R_SUN, 0.5).oneWay / shapiroDelay(GM_SUN, AU, 2 * AU, R_SUN, 1).oneWay;
    expect(Math.abs(g - 0.75)).toBeLessThan(1e-15);
  });

  it('keeps full precision when b << r (no cancellation in r_e + r_r - R): b = 1e-9 r', () => {
    const x = shapiroDelay(GM_SUN, AU, AU, 1e-9 * AU);
    expect(relErr(x.oneWay, shapiroRef(d(GM_SUN), d(AU), d(AU), d(1e-9 * AU), new D(1)))).toBeLessThan(1e-14);
    expect(relErr(x.shortfall, d(1e-9 * AU).pow(2).div(d(AU)))).toBeLessThan(1e-6); // b^2 (r_e + r_r)/(2 r_e r_r) to O(b^2/r^2)
  });

  it('domain errors: b beyond an end, a path through the centre, negative or non-finite inputs', () => {
    expect(() => shapiroDelay(GM_SUN, AU, 2 * AU, 1.1 * AU)).toThrow(PhysicsDomainError);
    expect(() => shapiroDelay(GM_SUN, AU, 2 * AU, 0, 1, 'between')).toThrow(PhysicsDomainError);
    expect(() => shapiroDelay(-1, AU, 2 * AU, R_SUN)).toThrow(PhysicsDomainError);
    expect(() => shapiroDelay(GM_SUN, Number.NaN, 2 * AU, R_SUN)).toThrow(PhysicsDomainError);
  });
});
