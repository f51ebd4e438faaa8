/**
 * physics/lineprofile.ts (disk line profiles from image-plane transfer data) against the outside
 * world:
 * - face-on disks (a* = 0 and 0.998): the support of the line from the closed form
 *   g = 1/u^t (BPT72 eq. 2.16) and the whole binned profile, higher-order images included,
 *   from an independent quadrature (Mino-time integrals of the constants of motion, in
 *   test/support/geodesic-quadrature.ts; the face-on profile integral is written here);
 * - rings thinner than an image-grid cell: face-on (support exact, total flux against the same
 *   reference) and inclined far out (extremes of the edge rings, flat-space flux);
 * - the Newtonian limit far out (g = 1 +- v sin i, v = r^-1/2) and the double-horned profile;
 * - extremes of g of single rings against the same independent quadrature (a* = 0, 0.998, -0.9),
 *   and of whole disks against the rings;
 * - the Schwarzschild blue edges at i = 30 and 60 deg (Fabian et al. 1989 geometry), Laor's
 *   (1991) red wing and the Doppler-boosted blue peak (qualitative published statements);
 * - convergence of the benchmark profile (issue: standard vs fine <= 1 % in L1) and the accuracy
 *   estimate; binning bookkeeping and the emissivity / emission-law helpers.
 * Units G = c = M = 1 (lengths in rg).
 */
import { beforeAll, describe, expect, it } from 'vitest';
import {
  ACCURACY,
  binProfile,
  brokenPowerLaw,
  isotropic,
  l1Distance,
  laorLimbDarkening,
  mergeTransfers,
  powerLaw,
  rayWeights,
  ringImageRadius,
  ringRedshiftRange,
  tabulated,
  traceTransfer,
  type Cells,
  type EmissionLaw,
  type Transfer,
} from '../../physics/lineprofile.js';
import { KerrRayTracer } from '../../physics/raytrace.js';
import { isco } from '../../physics/kerr.js';
import { gaussLegendre } from '../../physics/quadrature.js';
import { brent } from '../../physics/roots.js';
import { horizonU, planeCrossing, radialPolynomial, TIGHT, turningPoint } from '../support/geodesic-quadrature.js';

const DEG = Math.PI / 180;
const rel = (x: number, ref: number) => Math.abs(x / ref - 1);
const sum = (xs: ArrayLike<number>) => Array.from(xs).reduce((s, x) => s + x, 0);

// ---------------------------------------------------------------------------
// Independent reference: n-th equatorial-plane crossing of a ray from the Mino-time integrals of
// the constants of motion (Carter 1968; Mino 2003; lambda from Bardeen 1973, q from Cunningham &
// Bardeen 1973), composite Gauss-Legendre with 30 graded panels toward the radial turning point:
// test/support/geodesic-quadrature.ts planeCrossing, where the integrals are written out.

/** g = 1/(u^t (1 - Omega lambda)), u^t and Omega of a prograde circular orbit (Bardeen, Press & Teukolsky 1972 eq. 2.16; Cunningham 1975). */
function gKepler(r: number, a: number, lam: number): number {
  const x = Math.pow(r, -1.5);
  const ut = (1 + a * x) / Math.sqrt(1 - 3 / r + 2 * a * x);
  return 1 / (ut * (1 - lam * x / (1 + a * x)));
}

function golden(f: (x: number) => number, lo: number, hi: number, iterations: number): { x: number; f: number } {
  const R = (Math.sqrt(5) - 1) / 2;
  let x1 = hi - R * (hi - lo);
  let x2 = lo + R * (hi - lo);
  let f1 = f(x1);
  let f2 = f(x2);
  for (let k = 0; k < iterations; k++) {
    if (f1 > f2) {
      hi = x2;
      x2 = x1;
      f2 = f1;
      x1 = hi - R * (hi - lo);
      f1 = f(x1);
    } else {
      lo = x1;
      x1 = x2;
      f1 = f2;
      x2 = lo + R * (hi - lo);
      f2 = f(x2);
    }
  }
  return f1 > f2 ? { x: x1, f: f1 } : { x: x2, f: f2 };
}

/** Extreme (sign +1 max, -1 min) of g over the direct image of the ring at r, from the reference quadrature. */
function ringExtremeRef(a: number, inc: number, r: number, sign: 1 | -1): number {
  let rhoGuess = r;
  const gAt = (ph: number): number => {
    // image radius of the ring at angle ph: first crossing at r (bracket grown from the last one)
    const f = (rho: number) => planeCrossing(a, inc, rho * Math.cos(ph), rho * Math.sin(ph), 1) - r;
    let lo = rhoGuess / 1.05;
    let hi = rhoGuess * 1.05;
    while (f(lo) > 0) lo /= 1.05;
    while (f(hi) < 0) hi *= 1.05;
    const rho = brent(f, lo, hi, { xRelTol: 1e-14 }).root;
    rhoGuess = rho;
    return gKepler(r, a, -rho * Math.cos(ph) * Math.sin(inc));
  };
  let best = -Infinity;
  let bp = 0;
  for (let k = 0; k < 12; k++) {
    const ph = (k * 2 * Math.PI) / 12;
    const v = sign * gAt(ph);
    if (v > best) {
      best = v;
      bp = ph;
    }
  }
  return sign * golden((ph) => sign * gAt(ph), bp - Math.PI / 6, bp + Math.PI / 6, 45).f;
}

// ---------------------------------------------------------------------------
// Face-on reference profile: at i = 0 the order-n image of the ring at r is a circle of radius
// b_n(r) (lambda = 0, q = b^2 - a^2), g = gKepler(r, a, 0) depends on r only, and the
// photon flux of the ring is 2 pi b |db| g^3 eps(r) I(mu_e) (Cunningham 1975: the flux is the
// image-plane integral of g^3 I). mu_e from the direction of the photon in the gas frame:
// p^(theta) = sqrt(Theta(pi/2))/r per unit E_infinity and E_gas = E_infinity/g, so
// mu_e = g sqrt(q)/r (Cunningham 1975 eq. A3; for a* = 0 the same follows from aberration).

function faceOnReference(a: number, rIn: number, rOut: number, gEdges: number[], eps: (r: number) => number, law: EmissionLaw, orders: number) {
  const g = (r: number) => gKepler(r, a, 0);
  const rOfG = (x: number) => brent((r) => g(r) - x, rIn * (1 - 1e-9), rOut * (1 + 1e-9), TIGHT).root;
  const rEdges = gEdges.map((x, k) => (k === 0 ? rIn : k === gEdges.length - 1 ? rOut : rOfG(x)));
  const r = (b: number, n: number) => planeCrossing(a, 0, b, 0, n);
  // critical impact parameter: the smallest b whose ray has a radial turning point outside the horizon
  let lo = 0;
  let hi = 20;
  for (let k = 0; k < 60; k++) {
    const mid = (lo + hi) / 2;
    const { P, dP } = radialPolynomial(a, 0, mid * mid - a * a); // lambda = 0, q = b^2 - a^2
    if (Number.isNaN(turningPoint(P, dP, horizonU(a)))) lo = mid;
    else hi = mid;
  }
  const bCrit = hi;
  const flux = new Array<number>(gEdges.length - 1).fill(0);
  const byOrder: number[] = [];
  const GLf = gaussLegendre(16);
  for (let n = 1; n <= orders; n++) {
    // b_n(r): r_n(b) increases with b (0 when captured, +Infinity when escaped first)
    const bLo = n === 1 ? 0.5 : bCrit * (1 + 1e-9);
    const bOf = (rr: number) => brent((b) => r(b, n) - rr, bLo, 2 * rOut + 20, { xRelTol: 1e-14 }).root;
    const bEdges = rEdges.map(bOf);
    let orderFlux = 0;
    for (let k = 0; k + 1 < bEdges.length; k++) {
      const c = (bEdges[k] + bEdges[k + 1]) / 2;
      const hw = (bEdges[k + 1] - bEdges[k]) / 2;
      let s = 0;
      for (let j = 0; j < GLf.x.length; j++) {
        const b = c + hw * GLf.x[j];
        const rr = r(b, n);
        // the image is not hidden behind an earlier crossing of the disk
        for (let m = 1; m < n; m++) {
          const rm = r(b, m);
          if (rm >= rIn && rm <= rOut) throw new Error('reference: an earlier crossing hits the disk');
        }
        const gg = g(rr);
        s += GLf.w[j] * 2 * Math.PI * b * gg ** 3 * eps(rr) * law((gg * Math.sqrt(b * b - a * a)) / rr);
      }
      flux[k] += Math.abs(hw) * s;
      orderFlux += Math.abs(hw) * s;
    }
    byOrder.push(orderFlux);
  }
  return { flux, byOrder, total: sum(flux), bCrit, r };
}

// ---------------------------------------------------------------------------

/** Photon-flux weights for eps = r^-3 and isotropic emission. */
const R3_ISOTROPIC = { emissivity: powerLaw(3), law: isotropic, power: 3 as const };

/**
 * Face-on Schwarzschild ring rIn..rOut: the transfer's extremes are g = 1/u^t = sqrt(1 - 3/r) at
 * the edges (exact for lambda = 0: BPT72 eq. 2.16 at a = 0; Cunningham 1975) within 1e-7, and all
 * the flux binned with `edges` (photon flux, r^-3, isotropic) lies between them: bins wholly
 * outside hold nothing, up to the rounding of the ramp sums (`rounding` of the total).
 */
function expectFaceOnSupport(t: Transfer, rIn: number, rOut: number, edges: number[], rounding = 1e-12): void {
  const g0 = Math.sqrt(1 - 3 / rIn);
  const g1 = Math.sqrt(1 - 3 / rOut);
  expect(Math.abs(t.gMin - g0)).toBeLessThan(1e-7);
  expect(Math.abs(t.gMax - g1)).toBeLessThan(1e-7);
  const p = binProfile(t.cells, rayWeights(t, R3_ISOTROPIC), edges);
  expect(p.total).toBeGreaterThan(0);
  expect(rel(sum(p.flux), p.total)).toBeLessThan(rounding);
  let inside = 0;
  for (let k = 0; k + 1 < edges.length; k++) {
    if (edges[k + 1] <= g0 - 1e-12 || edges[k] >= g1 + 1e-12) expect(p.flux[k]).toBeLessThanOrEqual(rounding * p.total);
    else inside += p.flux[k];
  }
  expect(rel(inside, p.total)).toBeLessThan(rounding);
}

describe('face-on disk: support of the line (exact)', () => {
  it('a* = 0, i = 0, r 6..50 (standard): gMin = sqrt(1 - 3/rIn), gMax = sqrt(1 - 3/rOut) within 1e-7', () => {
    // g = 1/u^t = sqrt(1 - 3/r) for lambda = 0 (BPT72 eq. 2.16 at a = 0)
    const t = traceTransfer({ a: 0, inclination: 0, rIn: 6, rOut: 50, accuracy: 'standard' });
    expect(Math.abs(t.gMin - Math.SQRT1_2)).toBeLessThan(1e-7);
    expect(Math.abs(t.gMax - Math.sqrt(1 - 3 / 50))).toBeLessThan(1e-7);
  });

  it('a* = 0, i = 0, ring 10..11: all the flux lies between sqrt(1 - 3/10) and sqrt(1 - 3/11), in bins of 1e-3', () => {
    // A ring ~9 % wide in image radius, wider than a base cell of the image grid (~5 % at
    // 'standard': nRadial = 128 over ln(rhoMax/0.02)); rings thinner than a cell: see below.
    const t = traceTransfer({ a: 0, inclination: 0, rIn: 10, rOut: 11, accuracy: 'standard' });
    expectFaceOnSupport(t, 10, 11, Array.from({ length: 201 }, (_, k) => 0.75 + k * 1e-3)); // 0.75 .. 0.95
  });
});

describe('face-on disk: the whole binned profile against the independent quadrature (images of order 1..3)', () => {
  // Tolerance: the issue asks 'standard' to be within 1 % (L1) of 'fine'; the same 1 % is required
  // here against the exact profile. The accuracy estimate (full vs half-resolution grid) must not
  // be smaller than the true error. The total flux is compared at the same 1 %.
  const expectProfileWithin1Percent = (t: Transfer, law: EmissionLaw, gEdges: number[], ref: { flux: number[]; total: number }) => {
    const w = rayWeights(t, { emissivity: powerLaw(3), law, power: 3 });
    const p = binProfile(t.cells, w, gEdges);
    const estimate = l1Distance(p.flux, binProfile(t.coarse, w, gEdges).flux);
    const err = l1Distance(p.flux, ref.flux);
    expect(err).toBeLessThanOrEqual(0.01);
    expect(estimate).toBeGreaterThanOrEqual(err);
    expect(rel(p.total, ref.total)).toBeLessThan(0.01);
  };

  it('a* = 0, r 6..50, eps = r^-3, Laor limb darkening, photon flux, 20 bins', () => {
    const gEdges = Array.from({ length: 21 }, (_, k) => Math.SQRT1_2 + ((Math.sqrt(1 - 3 / 50) - Math.SQRT1_2) * k) / 20);
    const ref = faceOnReference(0, 6, 50, gEdges, (r) => r ** -3, laorLimbDarkening, 3);
    // guard: the secondary image (order 2) carries ~1 % of this line, the third ~0.03 % (computed by
    // the reference); the transfer follows up to 6 crossings, so the reference must include them
    expect(ref.byOrder[1] / ref.total).toBeGreaterThan(3e-3);
    const t = traceTransfer({ a: 0, inclination: 0, rIn: 6, rOut: 50, accuracy: 'standard' });
    expectProfileWithin1Percent(t, laorLimbDarkening, gEdges, ref);
  });

  it('a* = 0.998, r isco..50, eps = r^-3, isotropic, photon flux, 20 bins', () => {
    const a = 0.998;
    const rIn = isco(a);
    const gEdges = Array.from({ length: 21 }, (_, k) => gKepler(rIn, a, 0) + ((gKepler(50, a, 0) - gKepler(rIn, a, 0)) * k) / 20);
    const ref = faceOnReference(a, rIn, 50, gEdges, (r) => r ** -3, isotropic, 1);
    // Only the direct image: a ray whose second crossing would land on this disk has crossed it
    // already (outside b_crit its first crossing is near the photon orbits, ~2.4 rg > r_isco;
    // inside b_crit both crossings lie below r_isco). Checked on a grid of impact parameters:
    let secondOnDisk = 0;
    for (let k = 1; k < 200; k++) {
      const b = 0.5 + ((ref.bCrit + 3 - 0.5) * k) / 200;
      const r2 = ref.r(b, 2);
      if (r2 >= rIn && r2 <= 50) {
        secondOnDisk++;
        const r1 = ref.r(b, 1);
        expect(r1 >= rIn && r1 <= 50).toBe(true);
      }
    }
    expect(secondOnDisk).toBeGreaterThan(0);
    const t = traceTransfer({ a, inclination: 0, rIn, rOut: 50, accuracy: 'standard' });
    expect(rel(t.gMin, gKepler(rIn, a, 0))).toBeLessThan(1e-7);
    expect(rel(t.gMax, gKepler(50, a, 0))).toBeLessThan(1e-7);
    expectProfileWithin1Percent(t, isotropic, gEdges, ref);
  });
});

describe('face-on rings thinner than an image-grid cell (a* = 0, i = 0): found, on their exact support, with the reference flux', () => {
  // In ln(image radius) the rings 10..10.02 and 10..10.1 are 0.0018 and 0.0091 wide (from the
  // reference: b_1(10) = 10.956, b_1(10.02) = 10.976, b_1(10.1) = 11.056 rg); the grid's base cells
  // are 0.051 ('standard') and 0.025 ('fine'), its regular finest cells 0.0064 and 0.0032, so a
  // cell can hold the ring with none of its corner rays on it. Before the refinement of such cells
  // (those whose corners' first crossings straddle [rIn, rOut]) and the covered share of edge
  // cells, 10..10.02 vanished (no cells, gMin = gMax = 0) and 10..10.1 had +37 % flux at 'standard'.
  const rings: Array<[number, number]> = [
    [10, 10.02],
    [10, 10.1],
  ];
  const standard = new Map<number, Transfer>();
  let fine: Transfer; // 10..10.1 only: 'fine' traces of thin rings are slow (~1 s here, ~3 s for 10..10.02)
  const refs = new Map<number, ReturnType<typeof faceOnReference>>();
  beforeAll(() => {
    for (const [rIn, rOut] of rings) {
      standard.set(rOut, traceTransfer({ a: 0, inclination: 0, rIn, rOut, accuracy: 'standard' }));
      refs.set(rOut, faceOnReference(0, rIn, rOut, [Math.sqrt(1 - 3 / rIn), Math.sqrt(1 - 3 / rOut)], (r) => r ** -3, isotropic, 3));
    }
    fine = traceTransfer({ a: 0, inclination: 0, rIn: 10, rOut: 10.1, accuracy: 'fine' });
  });
  /** Bins of 1e-5 in g over 0.835 .. 0.840, offset from the rings' edges 0.83666 .. 0.83815. */
  const edges = Array.from({ length: 501 }, (_, k) => 0.835 + k * 1e-5);
  const total = (t: Transfer) => binProfile(t.cells, rayWeights(t, R3_ISOTROPIC), edges).total;
  // Rounding: binProfile's ramp sums are differences of terms ~ g/(gHi - gLo) ~ 5e3 times a cell's
  // flux (these rings' cells span 1.5e-4 in g and more), accumulated over up to 5e4 cells:
  // measured 8e-12 to 1.8e-10 of the total (both rings, standard and fine); 1e-9 allowed.
  const ROUNDING = 1e-9;

  it.each(rings)('ring %s..%s rg (standard): gMin = sqrt(1 - 3/rIn), gMax = sqrt(1 - 3/rOut) within 1e-7 (exact), all the flux in bins of 1e-5 between them', (rIn, rOut) => {
    expectFaceOnSupport(standard.get(rOut)!, rIn, rOut, edges, ROUNDING);
  });

  it.each(rings)('ring %s..%s rg (standard): total photon flux (r^-3, isotropic) within 7 % of the independent reference', (rIn, rOut) => {
    // Measured against the reference (totals 8.2265e-4 and 4.0889e-3): standard -3.7 % and -5.8 %,
    // fine -1.2 % and -1.5 % (fine traced while writing this test). At 'standard' the error is
    // mostly the share of an edge cell the disk covers, sampled 8 x 8: up to 1/16 of a cell per
    // edge, and systematic for a face-on ring, whose edge sits at the same place in every cell
    // around (with 64 x 64 samples the error drops to 0.3 %, tried on a copy of the code). The
    // tolerances, 7 % here and 2.5 % at 'fine' below, are 1.2 and 1.7 times the worst measured error.
    expect(Math.abs(total(standard.get(rOut)!) / refs.get(rOut)!.total - 1)).toBeLessThan(0.07);
  });

  it('ring 10..10.1 rg (fine): exact support; total flux within 2.5 % of the reference and closer than at standard', () => {
    expectFaceOnSupport(fine, 10, 10.1, edges, ROUNDING);
    const ref = refs.get(10.1)!;
    const errFine = total(fine) / ref.total - 1;
    expect(Math.abs(errFine)).toBeLessThan(0.025);
    expect(Math.abs(errFine)).toBeLessThan(Math.abs(total(standard.get(10.1)!) / ref.total - 1));
    // What is left at 'fine' is the higher-order images (1.7 % of the ring's flux in the reference),
    // which the refinement of thin cells does not look for (it follows the first crossing): the
    // fine total lies between the direct image alone and all orders, within 1 % (measured 0.3 %
    // above the direct image; 10..10.02: 0.6 %).
    expect(ref.byOrder[1] / ref.total).toBeGreaterThan(0.01);
    expect(total(fine)).toBeGreaterThan(0.99 * ref.byOrder[0]);
    expect(total(fine)).toBeLessThan(1.01 * ref.total);
  });
});

describe('Newtonian limit far from the hole (common practice: g = 1 +- v sin i, v = r^-1/2, up to O(1/r))', () => {
  const r = 1e4;
  it.each([10, 30, 60, 85])('ring at r = 1e4, i = %s deg: extremes 1 +- sin(i)/sqrt(r) within 3/r', (iDeg) => {
    // The relativistic corrections are O(1/r): gravitational and transverse Doppler -3/(2r), and (v sin i)^2 <= 1/r.
    const s = Math.sin(iDeg * DEG) / Math.sqrt(r);
    const rr = ringRedshiftRange(0, iDeg * DEG, r);
    expect(Math.abs(rr.gMax - (1 + s))).toBeLessThan(3 / r);
    expect(Math.abs(rr.gMin - (1 - s))).toBeLessThan(3 / r);
  });

  it('a far ring (1e4..1.2e4 rg, i = 30 deg, standard) gives a double-horned line with its horns at 1 -+ v sin i', () => {
    const inc = 30 * DEG;
    const rIn = 1e4;
    const rOut = 1.2e4;
    // 20 % wide in r (yet only ~1e-3 wide in g); a ring of 1 %, thinner than the image grid's
    // base cells, is checked under 'whole disks' below
    const t = traceTransfer({ a: 0, inclination: inc, rIn, rOut, accuracy: 'standard' });
    const edges = Array.from({ length: 101 }, (_, k) => 0.99 + k * 2e-4);
    const p = binProfile(t.cells, rayWeights(t, { emissivity: powerLaw(3), law: isotropic, power: 3 }), edges);
    const f = Array.from(p.flux);
    // The horns of the rings between rIn and rOut lie between 1 -+ sin(i)/sqrt(rIn) and 1 -+ sin(i)/sqrt(rOut), shifted by O(1/r).
    const sIn = Math.sin(inc) / Math.sqrt(rIn);
    const sOut = Math.sin(inc) / Math.sqrt(rOut);
    const tol = 3 / rIn;
    const red = f.slice(0, 50);
    const blue = f.slice(50);
    const kRed = red.indexOf(Math.max(...red));
    const kBlue = 50 + blue.indexOf(Math.max(...blue));
    // the peak bins overlap the horn windows
    expect(edges[kRed + 1]).toBeGreaterThan(1 - sIn - tol);
    expect(edges[kRed]).toBeLessThan(1 - sOut + tol);
    expect(edges[kBlue + 1]).toBeGreaterThan(1 + sOut - tol);
    expect(edges[kBlue]).toBeLessThan(1 + sIn + tol);
    // double-horned: the line centre (bins around g = 1) is well below both horns (for one ring the
    // Newtonian profile is proportional to 1/sqrt((v sin i)^2 - (g - 1)^2): least at the centre)
    const centre = Math.max(f[49], f[50]);
    expect(centre).toBeLessThan(0.5 * f[kRed]);
    expect(centre).toBeLessThan(0.5 * f[kBlue]);
    // nothing outside 1 +- (sin(i)/sqrt(rIn) + 3/r)
    f.forEach((x, k) => {
      if (edges[k + 1] < 1 - sIn - tol || edges[k] > 1 + sIn + tol) expect(x).toBeLessThanOrEqual(1e-12 * p.total); // zero up to the rounding of the ramp sums
    });
  });
});

describe('single rings: extremes of g against the independent quadrature', () => {
  it.each([
    [0, 30, 6],
    [0, 60, 10],
    [0.998, 75, 3],
    [0.998, 30, 2],
    [-0.9, 60, 10],
  ])('a* = %s, i = %s deg, r = %s: ringRedshiftRange gMin and gMax to 1e-8', (a, iDeg, r) => {
    const inc = iDeg * DEG;
    const rr = ringRedshiftRange(a, inc, r);
    expect(Math.abs(rr.gMax - ringExtremeRef(a, inc, r, 1))).toBeLessThan(1e-8);
    expect(Math.abs(rr.gMin - ringExtremeRef(a, inc, r, -1))).toBeLessThan(1e-8);
  });

  it('ringImageRadius: the image radius of a ring at a given image angle (a* = 0.9, i = 50 deg)', () => {
    const a = 0.9;
    const inc = 50 * DEG;
    const tracer = new KerrRayTracer({ a, inclination: inc, rIn: 5, rOut: 5, rtol: 1e-11 });
    for (const [r, ph] of [[5, 0.3], [5, 2.5], [20, 4], [80, 5.5]]) {
      const s = ringImageRadius(tracer, r, ph, r);
      // the reference ray through (rho cos ph, rho sin ph) first crosses the plane at r
      expect(rel(planeCrossing(a, inc, s.rho * Math.cos(ph), s.rho * Math.sin(ph), 1), r)).toBeLessThan(1e-8);
      expect(rel(s.lambda, -s.rho * Math.cos(ph) * Math.sin(inc))).toBeLessThan(1e-14);
    }
  });
});

describe('whole disks: transfer extremes against ring extremes', () => {
  // The disk's extremes of g are the extremes over r of the ring extremes (direct image).
  const ringMaxOver = (a: number, inc: number, r0: number, r1: number, sign: 1 | -1) =>
    sign * golden((r) => sign * (sign > 0 ? ringRedshiftRange(a, inc, r).gMax : ringRedshiftRange(a, inc, r).gMin), r0, r1, 30).f;

  it('a* = 0, i = 30 deg, disk 25..35 rg (blue edge inside the disk): gMax = max over r of the ring maximum, to 1e-7', () => {
    const inc = 30 * DEG;
    const t = traceTransfer({ a: 0, inclination: inc, rIn: 25, rOut: 35, accuracy: 'fast' });
    const best = ringMaxOver(0, inc, 25, 35, 1);
    expect(Math.abs(t.gMax - best)).toBeLessThan(1e-7);
    // and it is interior: larger than at both edges
    expect(best).toBeGreaterThan(ringRedshiftRange(0, inc, 25).gMax + 1e-4);
    expect(best).toBeGreaterThan(ringRedshiftRange(0, inc, 35).gMax + 1e-4);
  });

  it('a* = 0.998, i = 75 deg, narrow disk 3..3.3 rg: gMax equals the ring maximum within its variation over the disk width; gMin is not above the direct image minimum', () => {
    const a = 0.998;
    const inc = 75 * DEG;
    const t = traceTransfer({ a, inclination: inc, rIn: 3, rOut: 3.3, accuracy: 'fast' });
    const at3 = ringRedshiftRange(a, inc, 3);
    const at33 = ringRedshiftRange(a, inc, 3.3);
    expect(Math.abs(t.gMax - at3.gMax)).toBeLessThanOrEqual(Math.abs(at33.gMax - at3.gMax) + 1e-7);
    expect(Math.abs(t.gMax - ringMaxOver(a, inc, 3, 3.3, 1))).toBeLessThan(1e-7);
    // At this inclination the images of order 2 and 3 (rays that pass around the hole) reach lower
    // g than the direct image (about 0.252 against 0.282, seen by tracing a dense image grid with
    // KerrRayTracer while writing this test); the
    // transfer's gMin includes them (sampled), so it may only be lower than the direct-image minimum.
    expect(t.gMin).toBeLessThanOrEqual(ringMaxOver(a, inc, 3, 3.3, -1) + 1e-7);
  });

  it('a* = 0, i = 30 deg, thin far ring 1e4..1.01e4 rg (standard): gMin, gMax = the extremes of the edge rings to 1e-7; flux near the flat-space value', () => {
    // The ring is 1 % wide in image radius, a tenth of a base cell of the grid (0.10 in
    // ln(image radius) here): before thin cells were refined it was only partly seen (gMin off by
    // 1.2e-3, 95 % of the flux missing at 'standard').
    const inc = 30 * DEG;
    const rIn = 1e4;
    const rOut = 1.01e4;
    const rings = [ringRedshiftRange(0, inc, rIn), ringRedshiftRange(0, inc, rOut)];
    // the ring extremes against the independent quadrature here too (measured 1e-13)
    for (const [k, r] of [rIn, rOut].entries()) {
      expect(Math.abs(rings[k].gMax - ringExtremeRef(0, inc, r, 1))).toBeLessThan(1e-8);
      expect(Math.abs(rings[k].gMin - ringExtremeRef(0, inc, r, -1))).toBeLessThan(1e-8);
    }
    const t = traceTransfer({ a: 0, inclination: inc, rIn, rOut, accuracy: 'standard' });
    // g's extremes over the disk sit on its edges (far out, g ~ 1 - 3/(2r) +- sin(i)/sqrt(r) is
    // monotonic in r; both on the inner edge here): measured 1e-12 from the edge rings'
    expect(Math.abs(t.gMin - Math.min(rings[0].gMin, rings[1].gMin))).toBeLessThan(1e-7);
    expect(Math.abs(t.gMax - Math.max(rings[0].gMax, rings[1].gMax))).toBeLessThan(1e-7);
    // Photon flux (r^-3, isotropic) against the flat-space closed form: the ring's image is the
    // projected annulus, area 2 pi r dr cos i, so the total is 2 pi cos i (1/rIn - 1/rOut); the
    // relativistic corrections (g^3 - 1, lensing) are O(1/r) ~ 1e-4 to 1e-3. Measured: +5.5 % at
    // 'standard' (+1.5 % at 'fine'): on the far side the rays just outside the ring leave beyond
    // rOut before crossing the plane, so edge cells there fall back to the share of corners that
    // hit (hits/4). Tolerance 8 %.
    const total = binProfile(t.cells, rayWeights(t, R3_ISOTROPIC), [0.99, 1.01]).total;
    expect(rel(total, 2 * Math.PI * Math.cos(inc) * (1 / rIn - 1 / rOut))).toBeLessThan(0.08);
  });
});

describe('Schwarzschild blue edge, r_in = 6 (the geometry of Fabian et al. 1989, MNRAS 238, 729)', () => {
  // No published number is used here: the values are not remembered with enough confidence.
  // Instead the blue edge is computed with the independent quadrature. For a Schwarzschild disk
  // the blue edge depends on r_out only while r_out is inside the radius r* of the largest ring
  // maximum (Fabian et al. 1989 noted the weak dependence on r_out, from memory).
  it('i = 60 deg: the blue edge is the inner edge ring maximum (quadrature, 1e-7), the same for r_out = 100 and 1000', () => {
    const inc = 60 * DEG;
    const edge = ringExtremeRef(0, inc, 6, 1);
    expect(ringExtremeRef(0, inc, 6.3, 1)).toBeLessThan(edge); // decreasing outward: the maximum sits on the inner edge
    for (const rOut of [100, 1000]) {
      const t = traceTransfer({ a: 0, inclination: inc, rIn: 6, rOut, accuracy: 'fast' });
      expect(Math.abs(t.gMax - edge)).toBeLessThan(1e-7);
    }
  });

  it('i = 30 deg: the blue edge comes from r* ~ 30 rg inside the disk (quadrature, 1e-7): the same for r_out = 100 and 1000, lower for r_out = 20', () => {
    const inc = 30 * DEG;
    // r* from the ring extremes (checked against the quadrature above), then the value at r* from the quadrature
    const rStar = golden((r) => ringRedshiftRange(0, inc, r).gMax, 15, 60, 30).x;
    const top = ringExtremeRef(0, inc, rStar, 1);
    expect(ringExtremeRef(0, inc, 0.8 * rStar, 1)).toBeLessThan(top);
    expect(ringExtremeRef(0, inc, 1.25 * rStar, 1)).toBeLessThan(top);
    for (const rOut of [100, 1000]) {
      const t = traceTransfer({ a: 0, inclination: inc, rIn: 6, rOut, accuracy: 'fast' });
      expect(Math.abs(t.gMax - top)).toBeLessThan(1e-7);
    }
    const short = traceTransfer({ a: 0, inclination: inc, rIn: 6, rOut: 20, accuracy: 'fast' });
    expect(Math.abs(short.gMax - ringExtremeRef(0, inc, 20, 1))).toBeLessThan(1e-7);
    expect(short.gMax).toBeLessThan(top - 1e-3);
  });

  it('Doppler boosting: the blue peak is higher than the red peak (Fabian et al. 1989; Laor 1991; qualitative, from memory), i = 30 and 60 deg', () => {
    for (const iDeg of [30, 60]) {
      const t = traceTransfer({ a: 0, inclination: iDeg * DEG, rIn: 6, rOut: 50, accuracy: 'fast' });
      const edges = Array.from({ length: 41 }, (_, k) => t.gMin + ((t.gMax - t.gMin) * k) / 40);
      for (const power of [3, 4] as const) {
        const f = Array.from(binProfile(t.cells, rayWeights(t, { emissivity: powerLaw(3), law: isotropic, power }), edges).flux);
        expect(Math.max(...f.slice(20))).toBeGreaterThan(Math.max(...f.slice(0, 20)));
      }
    }
  });
});

describe('spin dependence at i = 30 deg, disk from the ISCO to 100 rg (fast)', () => {
  const spins = [0, 0.5, 0.9, 0.998];
  let transfers: Transfer[] = [];
  beforeAll(() => {
    transfers = spins.map((a) => traceTransfer({ a, inclination: 30 * DEG, rIn: isco(a), rOut: 100, accuracy: 'fast' }));
  });

  it('the red wing reaches lower g as the spin grows (Laor 1991, ApJ 376, 90: qualitative, from memory)', () => {
    for (let k = 1; k < spins.length; k++) expect(transfers[k].gMin).toBeLessThan(transfers[k - 1].gMin);
    // and a* = 0: the red edge is the inner ring's minimum from the quadrature
    expect(Math.abs(transfers[0].gMin - ringExtremeRef(0, 30 * DEG, 6, -1))).toBeLessThan(1e-7);
  });

  it('the blue edge hardly depends on spin: it comes from r* ~ 30 rg (quadrature for a* = 0, 1e-7), where spin enters at O(a r^-3/2)', () => {
    // The issue expected g_max to grow with spin; at this inclination it does not (see the report):
    // the maximum of g lies at r* ~ 30 rg for every spin, where the spin changes Omega by
    // a/r^(3/2) ~ 6e-3 of itself, i.e. g by at most ~ 6e-3 (g - 1) ~ 3e-4 (our order-of-magnitude
    // estimate, not a published value).
    const rStar = golden((r) => ringRedshiftRange(0, 30 * DEG, r).gMax, 15, 60, 30).x;
    expect(Math.abs(transfers[0].gMax - ringExtremeRef(0, 30 * DEG, rStar, 1))).toBeLessThan(1e-7);
    for (const t of transfers) expect(Math.abs(t.gMax - transfers[0].gMax)).toBeLessThan(3e-4);
  });
});

describe('convergence of the benchmark profile (issue): a* = 0.998, i = 30 deg, r isco..400, eps = r^-3, isotropic, photon flux', () => {
  // 300 logarithmic bins in E from 1 to 9 keV for a 6.4 keV line: g edges E/6.4.
  const gEdges = Array.from({ length: 301 }, (_, k) => Math.exp((Math.log(9) * k) / 300) / 6.4);
  const geom = { a: 0.998, inclination: 30 * DEG, rIn: isco(0.998), rOut: 400 };
  const opts = { emissivity: powerLaw(3), law: isotropic, power: 3 as const };
  let standard: Transfer;
  let fine: Transfer;
  beforeAll(() => {
    standard = traceTransfer({ ...geom, accuracy: 'standard' });
    fine = traceTransfer({ ...geom, accuracy: 'fine' }, { measureDrift: true }); // ~4 s: traced once for this file
  });

  it('the accuracy levels use the issue tolerances: rtol 1e-7, 1e-9, 1e-11', () => {
    expect([ACCURACY.fast.rtol, ACCURACY.standard.rtol, ACCURACY.fine.rtol]).toEqual([1e-7, 1e-9, 1e-11]);
  });

  it('every ray of the fine transfer keeps its first integrals to 1e-9 (ray-tracing.md)', () => {
    expect(fine.drift).toBeGreaterThan(0); // measured
    expect(fine.drift).toBeLessThanOrEqual(1e-9);
  });

  it('standard and fine profiles differ by <= 1 % in L1; the standard accuracy estimate is not smaller than that', () => {
    const pStd = binProfile(standard.cells, rayWeights(standard, opts), gEdges);
    const pFine = binProfile(fine.cells, rayWeights(fine, opts), gEdges);
    const diff = l1Distance(pStd.flux, pFine.flux);
    expect(diff).toBeLessThanOrEqual(0.01);
    const estimate = l1Distance(pStd.flux, binProfile(standard.coarse, rayWeights(standard, opts), gEdges).flux);
    expect(estimate).toBeGreaterThanOrEqual(diff);
  });

  it('the line lies within [gMin, gMax]: no flux in bins outside, and the extremes agree between accuracies to 1e-7', () => {
    const p = binProfile(fine.cells, rayWeights(fine, opts), gEdges);
    for (let k = 0; k < 300; k++) {
      if (gEdges[k + 1] < fine.gMin || gEdges[k] > fine.gMax) expect(p.flux[k]).toBeLessThanOrEqual(1e-12 * p.total);
    }
    expect(Math.abs(standard.gMax - fine.gMax)).toBeLessThan(1e-7);
    expect(Math.abs(standard.gMin - fine.gMin)).toBeLessThan(1e-7);
  });

  it('binning bookkeeping: with edges covering [gMin, gMax] the binned flux adds up to the total (1e-12)', () => {
    for (const t of [standard, fine]) {
      const edges = Array.from({ length: 1001 }, (_, k) => t.gMin * 0.999 + ((t.gMax * 1.001 - t.gMin * 0.999) * k) / 1000);
      for (const power of [3, 4] as const) {
        const p = binProfile(t.cells, rayWeights(t, { ...opts, power }), edges);
        expect(rel(sum(p.flux), p.total)).toBeLessThan(1e-12);
      }
    }
  });
});

describe('binProfile, rayWeights and mergeTransfers: exact bookkeeping', () => {
  /** Leaf cells from plain arrays. */
  const cells = (area: number[], gLo: number[], gHi: number[], corners: number[]): Cells => ({
    area: Float64Array.from(area),
    gLo: Float64Array.from(gLo),
    gHi: Float64Array.from(gHi),
    corners: Int32Array.from(corners),
  });

  it('a cell spreads its flux (area x mean corner weight) uniformly over [gLo, gHi] (closed form)', () => {
    // one cell, area 2, corner weights 1, 1, 1, 0 -> flux 1.5, spread over [0.2, 0.6]
    const c = cells([2], [0.2], [0.6], [0, 1, 2, 3]);
    const w = Float64Array.from([1, 1, 1, 0]);
    const p = binProfile(c, w, [0, 0.3, 0.5, 1]);
    expect(p.total).toBeCloseTo(1.5, 15);
    expect(p.flux[0]).toBeCloseTo(1.5 * (0.1 / 0.4), 14);
    expect(p.flux[1]).toBeCloseTo(1.5 * (0.2 / 0.4), 14);
    expect(p.flux[2]).toBeCloseTo(1.5 * (0.1 / 0.4), 14);
    // edges covering only part of the cell: the rest is outside the bins but in the total
    const q = binProfile(c, w, [0.3, 0.4, 0.7]);
    expect(q.total).toBeCloseTo(1.5, 15);
    expect(q.flux[0]).toBeCloseTo(1.5 * 0.25, 14);
    expect(q.flux[1]).toBeCloseTo(1.5 * 0.5, 14);
    // a cell of zero width goes to the bin that holds it
    const d = binProfile(cells([1], [0.45], [0.45], [0, 0, 0, 0]), Float64Array.from([2]), [0, 0.3, 0.5, 1]);
    expect(Array.from(d.flux)).toEqual([0, 2, 0]);
  });

  it('rayWeights: g^3 eps I for photon flux, g^4 eps I for energy flux, 0 for misses', () => {
    const t = { nodeR: Float64Array.from([10, -1, 3]), nodeG: Float64Array.from([0.9, 0, 0.5]), nodeMu: Float64Array.from([0.5, 0, 1]), nodeLnR: Float64Array.from([Math.log(10), 0, Math.log(3)]) };
    const w3 = rayWeights(t, { emissivity: powerLaw(2), law: laorLimbDarkening, power: 3 });
    const w4 = rayWeights(t, { emissivity: powerLaw(2), law: laorLimbDarkening, power: 4 });
    // the power-law fast path forms r^-q as exp(-q ln r): a few ulp
    expect(rel(w3[0], 0.9 ** 3 / 100 * (1 + 2.06 * 0.5))).toBeLessThan(2e-15);
    expect(rel(w4[2], 0.5 ** 4 / 9 * (1 + 2.06))).toBeLessThan(2e-15);
    expect(w3[1]).toBe(0);
    expect(w4[1]).toBe(0);
    // the generic path (any function of r) gives the same weights
    const generic = rayWeights(t, { emissivity: (r) => r ** -2, law: laorLimbDarkening, power: 3 });
    generic.forEach((x, i) => expect(Math.abs(x - w3[i])).toBeLessThanOrEqual(2e-15 * Math.abs(x)));
  });

  it('mergeTransfers: three parts traced separately give the same transfer as one trace (a* = 0.5, i = 45 deg, fast)', () => {
    const geom = { a: 0.5, inclination: 45 * DEG, rIn: isco(0.5), rOut: 60, accuracy: 'fast' as const };
    const whole = traceTransfer(geom);
    const merged = mergeTransfers([0, 1, 2].map((index) => traceTransfer(geom, { part: { index, of: 3 } })));
    // the extremes are refined per part (from each part's own best ray): equal to rounding
    expect(Math.abs(merged.gMax - whole.gMax)).toBeLessThan(1e-12);
    expect(Math.abs(merged.gMin - whole.gMin)).toBeLessThan(1e-12);
    const edges = Array.from({ length: 101 }, (_, k) => whole.gMin + ((whole.gMax - whole.gMin) * k) / 100);
    const opts = { emissivity: powerLaw(3), law: laorLimbDarkening, power: 3 as const };
    for (const pick of [(t: Transfer) => t.cells, (t: Transfer) => t.coarse]) {
      const a = binProfile(pick(whole), rayWeights(whole, opts), edges);
      const b = binProfile(pick(merged), rayWeights(merged, opts), edges);
      expect(rel(b.total, a.total)).toBeLessThan(1e-12);
      expect(l1Distance(a.flux, b.flux)).toBeLessThan(1e-12);
    }
  });
});

describe('emissivity and emission laws', () => {
  it('laorLimbDarkening(mu) = 1 + 2.06 mu (Laor 1991, from memory); isotropic = 1', () => {
    for (const mu of [0, 0.25, 0.5, 1]) {
      expect(laorLimbDarkening(mu)).toBeCloseTo(1 + 2.06 * mu, 15);
      expect(isotropic(mu)).toBe(1);
    }
  });

  it('powerLaw(q) = r^-q', () => {
    expect(powerLaw(3)(10)).toBeCloseTo(1e-3, 18);
    expect(rel(powerLaw(2.5)(4), 1 / 32)).toBeLessThan(1e-15);
  });

  it('brokenPowerLaw: continuous at the break, slope -inner inside and -outer outside', () => {
    const eps = brokenPowerLaw(5, 3, 8);
    const below = eps(8 * (1 - 1e-12));
    const above = eps(8);
    expect(rel(below, above)).toBeLessThan(1e-10);
    expect(rel(above, 8 ** -5)).toBeLessThan(1e-14); // continuous with r^-5 inside
    // logarithmic slopes
    expect(Math.log(eps(4) / eps(2)) / Math.log(2)).toBeCloseTo(-5, 12);
    expect(Math.log(eps(40) / eps(20)) / Math.log(2)).toBeCloseTo(-3, 12);
  });

  it('tabulated: a power law given as a table is reproduced exactly between the points (log-log interpolation)', () => {
    const rs = [2, 3, 5, 10, 30, 100, 400];
    const eps = tabulated(rs, rs.map((r) => r ** -2.7));
    for (const r of [2, 2.5, 4.1, 7, 10, 55, 399]) expect(rel(eps(r), r ** -2.7)).toBeLessThan(1e-13);
  });

  it('l1Distance: normalised L1 (closed forms)', () => {
    expect(l1Distance([1, 0], [0, 1])).toBe(2);
    expect(l1Distance([1, 2, 3], [2, 4, 6])).toBeCloseTo(0, 15);
    expect(l1Distance([1, 1], [1, 3])).toBeCloseTo(Math.abs(0.5 - 0.25) + Math.abs(0.5 - 0.75), 15);
  });
});
