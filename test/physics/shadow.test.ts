/**
 * physics/shadow.ts against published values (the Schwarzschild shadow radius sqrt(27); the
 * extremal hole seen edge-on, alpha from -2 to 7, Bardeen 1973 / Chandrasekhar 1983 section 63)
 * and against an independent 40-digit implementation (decimal.js) of Bardeen's formulas in their
 * original r-parametrisation: the photon-orbit range (BPT72 eq. 2.18), the roots of beta^2, the
 * largest beta, points of the outline, and the pole-on circle.
 */
import { describe, expect, it } from 'vitest';
import { PhysicsDomainError } from '../../physics/errors.js';
import { polarPhotonOrbit, shadowBetaAt, shadowEdges, shadowOutline, sphericalPhotonOrbit } from '../../physics/shadow.js';
import { reference } from '../support/reference.js';

const { D, exact, relErr } = reference(40);
type Dec = InstanceType<typeof D>;
const d = (x: number): Dec => exact(x);
const SQRT27 = Math.sqrt(27);
const DEG = Math.PI / 180;

// ---------------------------------------------------------------------------
// Bardeen's formulas at 40 digits in the r-parametrisation (independent of physics/shadow.ts)

/** xi(r) = -(r^3 - 3 r^2 + a^2 r + a^2)/(a (r - 1)) (Bardeen 1973; Chandrasekhar 1983 section 63). */
const xiR = (a: Dec, r: Dec) => r.pow(3).minus(r.pow(2).times(3)).plus(a.pow(2).times(r)).plus(a.pow(2)).div(a.times(r.minus(1))).neg();
/** eta(r) = r^3 (4 a^2 - r (r - 3)^2)/(a^2 (r - 1)^2) (Bardeen 1973; Chandrasekhar 1983 section 63). */
const etaR = (a: Dec, r: Dec) => r.pow(3).times(a.pow(2).times(4).minus(r.times(r.minus(3).pow(2)))).div(a.pow(2).times(r.minus(1).pow(2)));
/** Equatorial photon orbit 2 {1 + cos[(2/3) arccos(-a)]} (Bardeen, Press & Teukolsky 1972 eq. 2.18), a signed. */
const photonR = (a: Dec) => D.acos(a.neg()).times(2).div(3).cos().plus(1).times(2);

function bisect(f: (x: Dec) => Dec, lo: Dec, hi: Dec, iterations = 120): Dec {
  const flo = f(lo).isNegative();
  for (let k = 0; k < iterations; k++) {
    const mid = lo.plus(hi).div(2);
    if (f(mid).isNegative() === flo) lo = mid;
    else hi = mid;
  }
  return lo.plus(hi).div(2);
}

function goldenMax(f: (x: Dec) => Dec, lo: Dec, hi: Dec, iterations = 90): Dec {
  const g = new D(5).sqrt().minus(1).div(2);
  let a = lo;
  let b = hi;
  for (let k = 0; k < iterations; k++) {
    const x1 = b.minus(g.times(b.minus(a)));
    const x2 = a.plus(g.times(b.minus(a)));
    if (f(x1).lt(f(x2))) a = x1;
    else b = x2;
  }
  return f(a.plus(b).div(2));
}

/** Edges of the shadow for 0 < |a| < 1 and 0 < i < pi/2 (r-parametrisation, bisection and golden search at 40 digits). */
function edgesRef(aNum: number, iNum: number) {
  const a = d(aNum);
  const i = d(iNum);
  const s = i.sin();
  const c = i.cos();
  const b2 = (r: Dec) => etaR(a, r).plus(a.pow(2).times(c.pow(2))).minus(xiR(a, r).pow(2).times(c.pow(2)).div(s.pow(2)));
  const rPro = photonR(a.abs());
  const rRet = photonR(a.abs().neg());
  // polar orbit: xi = 0, r^3 - 3r^2 + a^2 r + a^2 = 0 between the two
  const rp = bisect((r) => r.pow(3).minus(r.pow(2).times(3)).plus(a.pow(2).times(r)).plus(a.pow(2)), rPro, rRet);
  const r1 = bisect(b2, rPro, rp);
  const r2 = bisect(b2, rp, rRet);
  const alphaAt = (r: Dec) => xiR(a, r).neg().div(s);
  const al = [alphaAt(r1), alphaAt(r2)].sort((x, y) => x.comparedTo(y));
  const betaMax = goldenMax(b2, r1, r2).sqrt();
  return { alphaMin: al[0], alphaMax: al[1], betaMax, r1, r2, b2, a, s, c };
}

// ---------------------------------------------------------------------------

describe('Kerr shadow: published values', () => {
  it.each([90, 60, 17, 1, 0])('a = 0, i = %s deg: a circle of radius sqrt(27) GM/c^2 (Synge 1966; Bardeen 1973), diameters 2 sqrt(27) to 1e-12', (iDeg) => {
    const e = shadowEdges(0, iDeg * DEG);
    expect(Math.abs((e.alphaMax - e.alphaMin) / (2 * SQRT27) - 1)).toBeLessThan(1e-12);
    expect(Math.abs(e.betaMax / SQRT27 - 1)).toBeLessThan(1e-12);
    for (const p of shadowOutline(0, iDeg * DEG, 64)) expect(Math.abs(Math.hypot(p.alpha, p.beta) / SQRT27 - 1)).toBeLessThan(1e-12);
  });

  it('a = 1 seen edge-on: alpha from -2 (prograde orbit r = 1) to +7 (retrograde orbit r = 4) (Bardeen 1973; Chandrasekhar 1983 section 63), to 1e-12', () => {
    const e = shadowEdges(1, Math.PI / 2);
    expect(Math.abs(e.alphaMin + 2)).toBeLessThan(1e-12);
    expect(Math.abs(e.alphaMax - 7)).toBeLessThan(1e-12);
    // a negative spin mirrors the outline
    const m = shadowEdges(-1, Math.PI / 2);
    expect(Math.abs(m.alphaMin + 7)).toBeLessThan(1e-12);
    expect(Math.abs(m.alphaMax - 2)).toBeLessThan(1e-12);
  });

  it('a = 1 seen edge-on: beta_max = sqrt(27), from Bardeen\'s eta(r) at a = 1 maximised over r in (1, 4] at 40 digits', () => {
    const one = new D(1);
    const ref = goldenMax((r) => etaR(one, r), new D('1.000000001'), new D(4)).sqrt();
    expect(relErr(Math.sqrt(27), ref)).toBeLessThan(1e-15); // the maximum is eta(3) = 27
    expect(relErr(shadowEdges(1, Math.PI / 2).betaMax, ref)).toBeLessThan(1e-12);
  });

  it('a = 1 seen edge-on: the flattened edge is the straight segment alpha = -2, |beta| <= sqrt(3) (Bardeen\'s eta(r -> 1) = 3 at a = 1, 40 digits)', () => {
    const eta1 = etaR(new D(1), new D('1.000000000001')); // r = 1 + 1e-12: eta = r^3 (3 - (r - 1)) -> 3
    expect(Math.abs(eta1.toNumber() - 3)).toBeLessThan(1e-10);
    const e = shadowEdges(1, Math.PI / 2);
    expect(e.segment1).toBe(true);
    const o = sphericalPhotonOrbit(1, -1);
    expect(Math.abs(o.r - 1)).toBeLessThan(1e-15);
    expect(Math.abs(o.xi - 2)).toBeLessThan(1e-15);
    expect(Math.abs(o.eta - 3)).toBeLessThan(1e-14);
    // the points next to the edge point reach the segment's ends
    const pts = shadowOutline(1, Math.PI / 2, 4000);
    const edge = pts[2000];
    expect(edge).toEqual({ alpha: -2, beta: 0 });
    expect(Math.abs(pts[1999].alpha + 2)).toBeLessThan(1e-4);
    expect(Math.abs(pts[1999].beta - Math.sqrt(3))).toBeLessThan(1e-2);
  });

  it('a slightly below 1 converges to the extremal outline: alpha_min + 2 = O(sqrt(1 - a)), alpha_max -> 7, beta_max -> sqrt(27) (edge-on)', () => {
    for (const eps of [1e-4, 1e-6, 1e-8, 1e-10, 1e-12]) {
      const e = shadowEdges(1 - eps, Math.PI / 2);
      expect(Math.abs(e.alphaMin + 2)).toBeLessThan(5 * Math.sqrt(eps));
      expect(Math.abs(e.alphaMin + 2)).toBeGreaterThan(0.5 * Math.sqrt(eps)); // the approach is really like sqrt
      expect(Math.abs(e.alphaMax - 7)).toBeLessThan(5 * eps);
      expect(Math.abs(e.betaMax - SQRT27)).toBeLessThan(1e-12);
    }
  });

  it('a = 1 seen pole-on: a circle of radius 2 + 2 sqrt 2 at the polar orbit r = 1 + sqrt 2 (Teo 2003, Gen. Relativ. Gravit. 35, 1909; with Bardeen\'s eta + a^2)', () => {
    expect(Math.abs(polarPhotonOrbit(1) - (1 + Math.SQRT2))).toBeLessThan(1e-15);
    const e = shadowEdges(1, 0);
    expect(e.poleOn).toBe(true);
    expect(Math.abs(e.betaMax - (2 + 2 * Math.SQRT2))).toBeLessThan(1e-14);
    expect(Math.abs(e.alphaMax - (2 + 2 * Math.SQRT2))).toBeLessThan(1e-14);
    for (const p of shadowOutline(1, 0, 32)) expect(Math.abs(Math.hypot(p.alpha, p.beta) - (2 + 2 * Math.SQRT2))).toBeLessThan(1e-13);
  });
});

describe('Kerr shadow: 40-digit reference (Bardeen\'s r-parametrisation)', () => {
  it.each([
    [0.6, 60],
    [0.9, 17],
    [0.99, 85],
    [0.3, 30],
    [-0.5, 45],
    [0.998, 89.9],
  ])('a = %s, i = %s deg: alpha_min, alpha_max and beta_max to 1e-12', (a, iDeg) => {
    const e = shadowEdges(a, iDeg * DEG);
    const ref = edgesRef(a, iDeg * DEG);
    expect(Math.abs(e.alphaMin - ref.alphaMin.toNumber())).toBeLessThan(1e-12);
    expect(Math.abs(e.alphaMax - ref.alphaMax.toNumber())).toBeLessThan(1e-12);
    expect(Math.abs(e.betaMax - ref.betaMax.toNumber())).toBeLessThan(1e-12);
  });

  it('outline points lie on the 40-digit curve: |beta| at the alpha of each point, to 1e-10 (away from the edges)', () => {
    const a = 0.8;
    const inc = 50 * DEG;
    const ref = edgesRef(a, inc);
    const pts = shadowOutline(a, inc, 48);
    let checked = 0;
    for (const p of pts) {
      if (Math.abs(p.beta) < 0.5) continue;
      // the orbit with xi = -alpha sin i, found by bisection in r, then beta^2 (Bardeen 1973)
      const target = d(p.alpha).neg().times(ref.s);
      const r = bisect((rr) => xiR(ref.a, rr).minus(target).neg(), ref.r1, ref.r2);
      const beta = ref.b2(r).sqrt().toNumber();
      expect(Math.abs(Math.abs(p.beta) - beta)).toBeLessThan(1e-10);
      checked++;
    }
    expect(checked).toBeGreaterThan(30);
  });

  it('the pole-on limit: the circle of the polar orbit, radius sqrt(eta + a^2) with xi(r) = 0 solved at 40 digits; approached continuously as i -> 0 and i -> pi', () => {
    for (const aNum of [0.3, 0.7, -0.95]) {
      const a = d(aNum);
      const rp = bisect((r) => r.pow(3).minus(r.pow(2).times(3)).plus(a.pow(2).times(r)).plus(a.pow(2)), photonR(a.abs()), photonR(a.abs().neg()));
      expect(relErr(polarPhotonOrbit(aNum), rp)).toBeLessThan(1e-14);
      const rho = etaR(a, rp).plus(a.pow(2)).sqrt().toNumber();
      const pole = shadowEdges(aNum, 0);
      expect(Math.abs(pole.betaMax - rho)).toBeLessThan(1e-13);
      expect(Math.abs(pole.alphaMax - rho)).toBeLessThan(1e-13);
      for (const i of [1e-15, 1e-9, 1e-7, 1e-5, 1e-3]) {
        for (const inc of [i, Math.PI - i]) {
          const e = shadowEdges(aNum, inc);
          // the edges move by O(i), the largest beta by O(i^2) (common practice: smooth limit)
          expect(Math.abs(e.alphaMax - rho)).toBeLessThan(3 * i + 1e-13);
          expect(Math.abs(e.alphaMin + rho)).toBeLessThan(3 * i + 1e-13);
          expect(Math.abs(e.betaMax - rho)).toBeLessThan(3 * i * i + 1e-13);
        }
      }
    }
  });
});

describe('Kerr shadow: outline properties', () => {
  it('is closed, counter-clockwise, symmetric in beta; i and pi - i give the same outline; -a mirrors alpha', () => {
    const n = 101;
    const pts = shadowOutline(0.7, 1.1, n);
    expect(pts).toHaveLength(n);
    let area = 0;
    for (let k = 0; k < n; k++) {
      const p = pts[k];
      const q = pts[(k + 1) % n];
      area += p.alpha * q.beta - q.alpha * p.beta;
    }
    expect(area).toBeGreaterThan(0);
    for (let k = 1; k < n; k++) expect(pts[n - k]).toEqual({ alpha: pts[k].alpha, beta: -pts[k].beta });
    const back = shadowOutline(0.7, Math.PI - 1.1, n);
    for (let k = 0; k < n; k++) {
      expect(Math.abs(back[k].alpha - pts[k].alpha)).toBeLessThan(1e-12);
      expect(Math.abs(back[k].beta - pts[k].beta)).toBeLessThan(1e-12);
    }
    const mirror = shadowEdges(-0.7, 1.1);
    const e = shadowEdges(0.7, 1.1);
    expect(Math.abs(mirror.alphaMin + e.alphaMax)).toBeLessThan(1e-12);
    expect(Math.abs(mirror.betaMax - e.betaMax)).toBeLessThan(1e-12);
  });

  it('a Schwarzschild outline of n points encloses the area of the inscribed polygon of the circle of radius sqrt(27) (to 1e-12 relative)', () => {
    const n = 40;
    const pts = shadowOutline(0, 0.9, n);
    let area = 0;
    for (let k = 0; k < n; k++) area += pts[k].alpha * pts[(k + 1) % n].beta - pts[(k + 1) % n].alpha * pts[k].beta;
    area /= 2;
    // the points sit at alpha = sqrt(27) cos(2 pi k/n) on the circle: a polygon with these vertices
    let polygon = 0;
    for (let k = 0; k < n; k++) {
      const a1 = Math.acos(Math.cos((2 * Math.PI * k) / n));
      const a2 = Math.acos(Math.cos((2 * Math.PI * (k + 1)) / n));
      polygon += 0.5 * 27 * Math.abs(Math.sin(a2 - a1));
    }
    expect(Math.abs(area / polygon - 1)).toBeLessThan(1e-12);
  });

  it('beta at the edges is 0, and shadowBetaAt agrees with the points', () => {
    const e = shadowEdges(0.5, 0.6);
    expect(shadowBetaAt(e, e.alphaMin)).toBeLessThan(1e-6);
    expect(shadowBetaAt(e, e.alphaMax)).toBeLessThan(1e-6);
    const pts = shadowOutline(0.5, 0.6, 12, e);
    expect(shadowBetaAt(e, pts[3].alpha)).toBe(pts[3].beta);
  });

  it('domain errors: |a| > 1, i outside [0, pi], too few points', () => {
    expect(() => shadowEdges(1.0001, 1)).toThrow(PhysicsDomainError);
    expect(() => shadowEdges(0.5, -0.1)).toThrow(PhysicsDomainError);
    expect(() => shadowEdges(0.5, Number.NaN)).toThrow(PhysicsDomainError);
    expect(() => shadowOutline(0.5, 1, 3)).toThrow(PhysicsDomainError);
  });
});
