/**
 * The shadow (apparent boundary of the photon capture region) of a Kerr black hole seen by a
 * distant observer, in Bardeen's celestial coordinates.
 *
 * Units: lengths in rg = GM/c^2; a is the signed dimensionless spin (a > 0: the hole rotates in
 * the positive sense about the axis the observer's inclination is measured from); the
 * inclination i in rad, 0 <= i <= pi, measured from the spin axis.
 *
 * The outline is traced by the spherical photon orbits of radius r between the prograde and
 * retrograde equatorial photon orbits, with constants of motion (Bardeen 1973, eqs. for the
 * unstable spherical orbits; Chandrasekhar 1983, section 63)
 *
 *   xi(r)  = L/E     = -(r^3 - 3 r^2 + a^2 r + a^2) / (a (r - 1)),
 *   eta(r) = Q/E^2   = r^3 (4 a^2 - r (r - 3)^2) / (a^2 (r - 1)^2),
 *
 * and seen at celestial coordinates (Bardeen 1973)
 *
 *   alpha = -xi / sin i,    beta = +- sqrt(eta + a^2 cos^2 i - xi^2 cot^2 i).
 *
 * Sign convention (Bardeen's): beta runs along the projection of the spin axis on the sky and
 * alpha perpendicular to it, with alpha = -xi/sin i: for a > 0 the photons that co-rotate with the
 * hole (xi > 0) appear at alpha < 0, so the flattened (prograde) edge of the shadow is on the
 * negative-alpha side; for a = 1 seen edge-on, alpha runs from -2 (prograde orbit r = 1) to +7
 * (retrograde orbit r = 4). A negative spin mirrors the outline (alpha -> -alpha). The outline is
 * symmetric in beta, and i and pi - i give the same outline.
 *
 * Parametrisation (ours). Both xi and eta are 0/0 as a -> 0 (all orbits at r = 3) and xi is 0/0
 * at r = 1 for |a| = 1; we label the orbits instead by t in [-1, 1] with
 *
 *   (r - 3) sqrt(r) = 2 a t,   i.e.   sqrt(r) = 2 cos(phi),  phi = arccos(a t)/3
 *
 * (the trigonometric root of the cubic in sqrt(r); t = -1 and +1 are the two equatorial photon
 * orbits of Bardeen, Press & Teukolsky 1972, eq. 2.18). Substituting 4 a^2 - r (r - 3)^2 =
 * 4 a^2 (1 - t^2) and r - 1 = sin(3 phi)/sin(phi) gives forms without 1/a:
 *
 *   eta = 4 r^3 sin^2(phi) (1 - t^2)/(1 - a^2 t^2),
 *   xi  = -(2 t r^{3/2} + a (r + 1))/(r - 1),       or, near r = 1,
 *   xi  = -[(r - 1)^2 - 2 - (1 - a^2)(r + 1)/(r - 1)]/a.
 * At a = 0 these give xi = -sqrt(27) t, eta = 27 (1 - t^2): the circle of radius sqrt(27)
 * (Synge 1966; Chandrasekhar 1983, section 20).
 *
 * References:
 *   Bardeen 1973: J. M. Bardeen, in Black Holes (Les Houches 1972), eds. C. DeWitt & B. S. DeWitt,
 *     Gordon & Breach, p. 215.
 *   Chandrasekhar 1983: The Mathematical Theory of Black Holes, OUP, section 63.
 *   Bardeen, Press & Teukolsky 1972, ApJ 178, 347 (circular photon orbits, eq. 2.18).
 *   Teo 2003: E. Teo, Gen. Relativ. Gravit. 35, 1909 (spherical photon orbits; the polar orbit).
 *   Kiefer 1953, Proc. AMS 4, 502 (golden-section search).
 */
import { PhysicsDomainError, describeNumber } from './errors.js';
import { brent } from './roots.js';

export interface SphericalPhotonOrbit {
  /** Boyer-Lindquist radius, rg. */
  r: number;
  /** xi = L/E, rg. */
  xi: number;
  /** eta = Q/E^2, rg^2. */
  eta: number;
}

function checkSpin(a: number): void {
  if (typeof a !== 'number' || !Number.isFinite(a) || a < -1 || a > 1) {
    throw new PhysicsDomainError(`the spin must be a finite number with -1 <= a <= 1; got ${describeNumber(a)}`, '-1 <= a* <= 1', 'a');
  }
}

function checkInclination(i: number): void {
  if (typeof i !== 'number' || !Number.isFinite(i) || i < 0 || i > Math.PI) {
    throw new PhysicsDomainError(`the inclination must be a finite angle with 0 <= i <= pi; got ${describeNumber(i)}`, '0 <= i <= pi rad', 'inclination');
  }
}

/** 1 + a t for |a|, |t| <= 1, as a sum of non-negative terms when a t is near -1. */
function onePlus(a: number, t: number): number {
  const c = a * t;
  if (c >= -0.5) return 1 + c;
  return t < 0 ? 1 + t - t * (1 - a) : 1 - t + t * (1 + a);
}

/** 1 - a t for |a|, |t| <= 1, as a sum of non-negative terms when a t is near +1. */
function oneMinus(a: number, t: number): number {
  const c = a * t;
  if (c <= 0.5) return 1 - c;
  return t > 0 ? 1 - t + t * (1 - a) : 1 + t - t * (1 + a);
}

/**
 * The spherical photon orbit with label t in [-1, 1] (see the header): r (rg), xi (rg), eta (rg^2)
 * from Bardeen 1973 / Chandrasekhar 1983 section 63, in our cancellation-free forms.
 */
export function sphericalPhotonOrbit(a: number, t: number): SphericalPhotonOrbit {
  const opc = onePlus(a, t); // 1 + a t
  const omc = oneMinus(a, t); // 1 - a t
  const sm = Math.sqrt(omc);
  const sp = Math.sqrt(opc);
  const phi = (2 / 3) * Math.atan2(sm, sp); // arccos(a t)/3, in [0, pi/3]
  const phiC = (2 / 3) * Math.atan2(sp, sm); // pi/3 - phi
  const y = 2 * Math.cos(phi); // sqrt(r)
  const r = y * y;
  // y - 1 = 2 [cos(phi) - cos(pi/3)] = 4 sin((pi/3 + phi)/2) sin((pi/3 - phi)/2) >= 0
  const yMinus1 = 4 * Math.sin((Math.PI / 3 + phi) / 2) * Math.sin(phiC / 2);
  const rMinus1 = yMinus1 * (y + 1);
  const sinPhi = Math.sin(phi);
  // (1 - t^2)/(1 - a^2 t^2): 1 for |a| = 1 (also in the 0/0 limit t = +-1)
  const den = omc * opc;
  const ratio = den > 0 ? ((1 - t) * (1 + t)) / den : 1;
  const eta = 4 * r * r * r * sinPhi * sinPhi * ratio;
  let xi: number;
  if (rMinus1 >= 0.5) {
    xi = -(2 * t * y * r + a * (r + 1)) / rMinus1;
  } else {
    // r < 1.5 only when |a| > 0.9: the form with 1/a, exact at r = 1 for |a| = 1
    const oneMinusA2 = (1 - a) * (1 + a);
    const term = oneMinusA2 === 0 ? 0 : (oneMinusA2 * (r + 1)) / rMinus1;
    xi = -(rMinus1 * rMinus1 - 2 - term) / a;
  }
  return { r, xi, eta };
}

/**
 * Radius of the spherical photon orbit with xi = 0 (the polar orbit, seen by an observer on the
 * axis): the root in [1 + sqrt 2, 3] of r^3 - 3 r^2 + a^2 r + a^2 = 0 (Bardeen's xi = 0), by the
 * trigonometric solution of the cubic (Teo 2003):
 * r = 1 + 2 sqrt(1 - a^2/3) cos[(1/3) arccos((1 - a^2)/(1 - a^2/3)^{3/2})], rg.
 */
export function polarPhotonOrbit(a: number): number {
  checkSpin(a);
  const a2 = a * a;
  const k = 1 - a2 / 3;
  const arg = Math.min(1, ((1 - a) * (1 + a)) / (k * Math.sqrt(k)));
  return 1 + 2 * Math.sqrt(k) * Math.cos(Math.acos(arg) / 3);
}

/** The label t of the polar orbit: (r - 3) sqrt(r) = 2 a t with r^3 - 3r^2 = -a^2 (r + 1), so t = -a (r + 1)/(2 r^{3/2}). */
function polarLabel(a: number): number {
  const r = polarPhotonOrbit(a);
  return (-a * (r + 1)) / (2 * r * Math.sqrt(r));
}

/** Golden-section search for the maximum of a unimodal f on [lo, hi] (Kiefer 1953); returns f at the best point. */
function maximize(f: (x: number) => number, lo: number, hi: number): number {
  const g = (Math.sqrt(5) - 1) / 2;
  let a = lo;
  let b = hi;
  let x1 = b - g * (b - a);
  let x2 = a + g * (b - a);
  let f1 = f(x1);
  let f2 = f(x2);
  let best = Math.max(f(lo), f(hi), f1, f2);
  for (let k = 0; k < 200 && b - a > 1e-10 * (hi - lo) && b - a > 1e-300; k++) {
    if (f1 < f2) {
      a = x1;
      x1 = x2;
      f1 = f2;
      x2 = a + g * (b - a);
      f2 = f(x2);
      if (f2 > best) best = f2;
    } else {
      b = x2;
      x2 = x1;
      f2 = f1;
      x1 = b - g * (b - a);
      f1 = f(x1);
      if (f1 > best) best = f1;
    }
  }
  return Math.max(best, f1, f2);
}

/**
 * Below this sin(i) the observer is taken to be on the axis: the outline is the circle of the polar
 * orbit. The true outline differs from it by O(sin i) rg (the edges shift by about 1.5 a sin i),
 * below 1e-11 rg here; closer to the axis xi(t0), zero in exact arithmetic but ~1e-16 in doubles,
 * divided by sin i would swamp beta^2.
 */
const POLE_SIN = 1e-12;
/** Below this sin(i) the largest beta is searched over alpha instead of the orbit label (see shadowEdges). */
const SMALL_SIN = 1e-6;

export interface ShadowEdges {
  a: number;
  inclination: number;
  /** Seen from (numerically) on the axis: a circle. */
  poleOn: boolean;
  /** Orbit labels of the two horizontal edges and of the polar orbit (t1 <= t0 <= t2). */
  t1: number;
  t2: number;
  t0: number;
  /** Whether an edge is a straight segment at t = -1 or +1 (only |a| = 1 seen from i beyond about 47 deg). */
  segment1: boolean;
  segment2: boolean;
  /** Horizontal edges (alpha at beta = 0, or of the straight segment), rg. */
  alphaMin: number;
  alphaMax: number;
  /** Half the vertical extent, max beta, rg. */
  betaMax: number;
  /** Radius of the pole-on circle sqrt(eta + a^2) at the polar orbit (used when poleOn), rg. */
  rho0: number;
}

/** beta^2 at orbit label t, rg^2 (Bardeen 1973). */
function betaSquared(a: number, t: number, cosI: number, sinI: number): number {
  const o = sphericalPhotonOrbit(a, t);
  const x = (o.xi * cosI) / sinI; // xi cot i
  return o.eta + a * a * cosI * cosI - x * x;
}

/**
 * The extent of the shadow: the horizontal edges alphaMin, alphaMax (where beta = 0, or the
 * straight segment of an extremal hole) and the largest beta, rg.
 *
 * The visible orbits are the labels t with beta^2 >= 0, an interval [t1, t2] around the polar
 * orbit t0 (xi = 0, where beta^2 = eta + a^2 cos^2 i > 0); t1 and t2 are found by Brent's method.
 * At beta = 0 we use |alpha| = rho with rho^2 = alpha^2 + beta^2 = xi^2 + eta + a^2 cos^2 i
 * (from Bardeen's alpha and beta), which keeps full precision as i -> 0 where alpha = -xi/sin i
 * is 0/0. On the axis (sin i < 1e-12) the outline is the circle of radius sqrt(eta + a^2) of the
 * polar orbit (the limit i -> 0).
 */
export function shadowEdges(a: number, inclination: number): ShadowEdges {
  checkSpin(a);
  checkInclination(inclination);
  const sinI = Math.sin(inclination);
  const cosI = Math.cos(inclination);
  const t0 = polarLabel(a);
  const o0 = sphericalPhotonOrbit(a, t0);
  const rho0 = Math.sqrt(o0.eta + a * a * cosI * cosI);
  const base = { a, inclination, t0, rho0 };
  if (sinI < POLE_SIN || !(betaSquared(a, t0, cosI, sinI) > 0)) {
    return { ...base, poleOn: true, t1: t0, t2: t0, segment1: false, segment2: false, alphaMin: -rho0, alphaMax: rho0, betaMax: rho0 };
  }
  const b2 = (t: number) => betaSquared(a, t, cosI, sinI);
  const rho = (t: number) => {
    const o = sphericalPhotonOrbit(a, t);
    return Math.sqrt(o.xi * o.xi + o.eta + a * a * cosI * cosI);
  };
  const segment1 = b2(-1) >= 0;
  const segment2 = b2(1) >= 0;
  // t in [-1, 1]: an absolute tolerance of 1e-17 (the edges depend on t only through rho(t),
  // which is flat to that level) also ends the search when the interval shrinks to t0 ~ 0
  const t1 = segment1 ? -1 : brent(b2, -1, t0, { xAbsTol: 1e-17 }).root;
  const t2 = segment2 ? 1 : brent(b2, t0, 1, { xAbsTol: 1e-17 }).root;
  // alpha = -xi/sin i at a segment (sin i > 0.7 there); -rho and +rho at the roots
  const alphaMin = segment1 ? -sphericalPhotonOrbit(a, t1).xi / sinI : -rho(t1);
  const alphaMax = segment2 ? -sphericalPhotonOrbit(a, t2).xi / sinI : rho(t2);
  const edges: ShadowEdges = { ...base, poleOn: false, t1, t2, segment1, segment2, alphaMin, alphaMax, betaMax: 0 };
  // The largest beta: over t, unless the observer is within ~0.2 arcsec of the axis, where
  // xi cot i (xi near 0, known to ~1e-15 absolute) loses precision as 1/sin i; there the
  // search runs over alpha, with beta from shadowBetaAt (accurate for any i).
  edges.betaMax =
    sinI >= SMALL_SIN
      ? Math.sqrt(Math.max(0, maximize(b2, t1, t2)))
      : maximize((alpha) => shadowBetaAt(edges, alpha), alphaMin, alphaMax);
  return edges;
}

/**
 * |beta| of the outline at celestial coordinate alpha (rg), alphaMin <= alpha <= alphaMax: the
 * orbit with xi = -alpha sin i is found by Brent's method on [t1, t2] (xi decreases along t), then
 * beta^2 = eta + (a^2 - alpha^2) cos^2 i (Bardeen 1973 with xi cot i = -alpha cos i), which stays
 * accurate as i -> 0.
 */
export function shadowBetaAt(e: ShadowEdges, alpha: number): number {
  const a = e.a;
  if (e.poleOn) return Math.sqrt(Math.max(0, (e.rho0 - alpha) * (e.rho0 + alpha)));
  const sinI = Math.sin(e.inclination);
  const cosI = Math.cos(e.inclination);
  const target = -alpha * sinI;
  const h = (t: number) => sphericalPhotonOrbit(a, t).xi - target;
  let t: number;
  if (!(h(e.t1) > 0)) t = e.t1;
  else if (!(h(e.t2) < 0)) t = e.t2;
  else t = brent(h, e.t1, e.t2, { xAbsTol: 1e-17 }).root;
  const eta = sphericalPhotonOrbit(a, t).eta;
  return Math.sqrt(Math.max(0, eta + (a - alpha) * (a + alpha) * cosI * cosI));
}

export interface CelestialPoint {
  /** Bardeen's alpha, rg. */
  alpha: number;
  /** Bardeen's beta, rg. */
  beta: number;
}

/**
 * The closed outline as n points (n >= 4), counter-clockwise from the alphaMax edge: point k has
 * alpha = c + w cos(2 pi k/n) (c, w: centre and half-width of the horizontal extent; this
 * spacing crowds points toward the two edges, where the outline turns fastest) and beta of the
 * sign of sin(2 pi k/n). The two edge points have beta = 0 (on the straight segment of an extremal
 * hole, whose ends the neighbouring points reach).
 */
export function shadowOutline(a: number, inclination: number, n: number, edges: ShadowEdges = shadowEdges(a, inclination)): CelestialPoint[] {
  if (!Number.isInteger(n) || n < 4) throw new PhysicsDomainError(`the outline needs an integer count of at least 4 points; got ${describeNumber(n)}`, 'points >= 4', 'points');
  const out: CelestialPoint[] = new Array(n);
  const c = (edges.alphaMin + edges.alphaMax) / 2;
  const w = (edges.alphaMax - edges.alphaMin) / 2;
  for (let k = 0; 2 * k <= n; k++) {
    if (k === 0) {
      out[0] = { alpha: edges.alphaMax, beta: 0 };
      continue;
    }
    if (2 * k === n) {
      out[k] = { alpha: edges.alphaMin, beta: 0 };
      continue;
    }
    const alpha = Math.min(edges.alphaMax, Math.max(edges.alphaMin, c + w * Math.cos((2 * Math.PI * k) / n)));
    const beta = shadowBetaAt(edges, alpha);
    out[k] = { alpha, beta };
    out[n - k] = { alpha, beta: -beta };
  }
  return out;
}
