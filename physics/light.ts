/**
 * Light propagation past a spherical body: the Shapiro (excess) time delay of a signal between
 * two points, and the deflection of a light ray, both in the weak-field (PPN) approximation and,
 * for the deflection, exactly in the Schwarzschild metric.
 *
 * Conventions:
 *   - SI inputs for the delay (GM in m^3 s^-2, lengths in m, delays in s);
 *   - the deflection takes q = GM/(c^2 b), the dimensionless inverse impact parameter in units of
 *     the gravitational radius rg = GM/c^2 (so the functions never overflow for tiny masses or
 *     huge b), and returns angles in rad; orbit radii are in rg;
 *   - gamma is the PPN parameter (1 in general relativity).
 *
 * References:
 *   Shapiro 1964: I. I. Shapiro, Phys. Rev. Lett. 13, 789 ("Fourth test of general relativity").
 *   Will 2014: C. M. Will, Living Rev. Relativity 17, 4 (PPN deflection and delay, section 3.4).
 *   Epstein & Shapiro 1980: R. Epstein & I. I. Shapiro, Phys. Rev. D 22, 2947 (second order).
 *   Chandrasekhar 1983: The Mathematical Theory of Black Holes, ch. 3, section 20 (null geodesics
 *     of the Schwarzschild metric: the orbit equation (du/dphi)^2 = 1/b^2 - u^2 (1 - 2 u), u = rg/r).
 *   Press et al. 2007: Numerical Recipes 3rd ed., section 4.6 (Gauss-Legendre nodes, "gauleg").
 */
import { C } from './constants.js';
import { PhysicsDomainError, describeNumber } from './errors.js';
import { gaussLegendre } from './quadrature.js';

/** The critical impact parameter of the Schwarzschild metric, sqrt(27) rg (Chandrasekhar 1983, section 20), rg. */
export const B_CRITICAL = 3 * Math.sqrt(3);

// ---------------------------------------------------------------------------
// Shapiro delay

/** Where the point of the straight path closest to the body lies. */
export type DelayGeometry = 'between' | 'outside';

export interface ShapiroDelay {
  /** One-way excess delay, s. */
  oneWay: number;
  /** Straight-line emitter-receiver distance R, m. */
  distance: number;
  /** r_e + r_r - R, m (computed without cancellation). */
  shortfall: number;
  /** The b << r form (1 + gamma) GM/c^3 ln(4 r_e r_r / b^2), s ("between" geometry only; NaN otherwise). */
  smallB: number;
}

function finiteNonNegative(x: number, name: string): void {
  if (typeof x !== 'number' || !Number.isFinite(x) || x < 0) {
    throw new PhysicsDomainError(`${name} must be a finite number >= 0; got ${describeNumber(x)}`, `${name} >= 0`, name);
  }
}

/**
 * Excess (Shapiro) delay of a signal travelling in a straight line from an emitter at distance
 * rE from the body's centre to a receiver at distance rR, the line passing the centre at the
 * impact parameter b (m). `geometry` says whether the foot of the perpendicular from the centre
 * lies between the two ends ("between": the signal passes the body, as at superior conjunction)
 * or beyond one of them ("outside"). gm in m^3 s^-2; result in s.
 *
 *   Delta t = (1 + gamma) GM/c^3 ln[(r_e + r_r + R)/(r_e + r_r - R)]
 *
 * (Shapiro 1964, eq. 1 for gamma = 1; PPN form: Will 2014, section 3.4), with R the emitter-
 * receiver distance: R = sqrt(r_e^2 - b^2) + sqrt(r_r^2 - b^2) ("between") or their difference
 * ("outside"). r_e + r_r - R is formed from b^2/(r + sqrt(r^2 - b^2)) terms, which keeps full
 * precision when b << r (where it is about b^2 (r_e + r_r)/(2 r_e r_r)); the logarithm is log1p.
 */
export function shapiroDelay(gm: number, rE: number, rR: number, b: number, gamma = 1, geometry: DelayGeometry = 'between', c: number = C): ShapiroDelay {
  finiteNonNegative(gm, 'GM');
  finiteNonNegative(b, 'b');
  finiteNonNegative(rE, 'r_emitter');
  finiteNonNegative(rR, 'r_receiver');
  if (!(b <= rE && b <= rR)) {
    throw new PhysicsDomainError(
      `a straight path with impact parameter b = ${b} m cannot reach points at ${rE} m and ${rR} m from the centre`,
      'b <= min(r_emitter, r_receiver)',
      'b',
    );
  }
  // sqrt(r^2 - b^2) as sqrt((r - b)(r + b)): exact-ish also when b is close to r, m
  const pE = Math.sqrt((rE - b) * (rE + b));
  const pR = Math.sqrt((rR - b) * (rR + b));
  // r - sqrt(r^2 - b^2) = b^2/(r + sqrt(r^2 - b^2)) (no cancellation), m
  const gapE = rE + pE > 0 ? b * (b / (rE + pE)) : 0;
  const gapR = rR + pR > 0 ? b * (b / (rR + pR)) : 0;
  let distance: number;
  let shortfall: number;
  if (geometry === 'between') {
    distance = pE + pR;
    shortfall = gapE + gapR;
  } else {
    // |pE - pR| = |rE - rR| (rE + rR)/(pE + pR); the shortfall is (r_far - p_far) + (r_near + p_near)
    distance = pE + pR > 0 ? (Math.abs(rE - rR) * (rE + rR)) / (pE + pR) : 0;
    shortfall = pR >= pE ? gapR + (rE + pE) : gapE + (rR + pR);
  }
  const scale = ((1 + gamma) * gm) / (c * c * c); // (1 + gamma) GM/c^3, s
  if (!(shortfall > 0)) {
    throw new PhysicsDomainError('the straight path runs through the centre of the body (b = 0 between the two ends)', 'b > 0 when the path passes the body', 'b');
  }
  const oneWay = scale * Math.log1p((2 * distance) / shortfall); // Shapiro 1964; Will 2014, s
  // b << r: (1 + gamma) GM/c^3 ln(4 r_e r_r / b^2) (Shapiro 1964; Will 2014), logs taken apart against overflow, s
  const smallB = geometry === 'between' && b > 0 ? scale * (Math.log(4) + Math.log(rE) + Math.log(rR) - 2 * Math.log(b)) : NaN;
  return { oneWay, distance, shortfall, smallB };
}

// ---------------------------------------------------------------------------
// Deflection: weak field

/**
 * First post-Newtonian deflection of a ray with q = GM/(c^2 b): 2 (1 + gamma) q, rad
 * (Will 2014, section 3.4: (1 + gamma)/2 x 4 GM/(c^2 b)).
 */
export function deflectionFirstOrder(q: number, gamma = 1): number {
  return 2 * (1 + gamma) * q;
}

/**
 * Second-order (post-post-Newtonian) deflection in general relativity, (15 pi/4) q^2, rad
 * (Epstein & Shapiro 1980; in terms of the invariant impact parameter b). Its dependence on the
 * PPN parameters (beta, gamma and a post-linear parameter) is not modelled: this is the GR value.
 */
export function deflectionSecondOrderGR(q: number): number {
  return ((15 * Math.PI) / 4) * q * q;
}

// ---------------------------------------------------------------------------
// Deflection: exact Schwarzschild


const GL = gaussLegendre(24);

/** Composite Gauss-Legendre quadrature of f over [lo, hi] with `panels` equal panels. */
function integrate(f: (x: number) => number, lo: number, hi: number, panels: number): number {
  const h = (hi - lo) / panels;
  let sum = 0;
  for (let p = 0; p < panels; p++) {
    const mid = lo + (p + 0.5) * h;
    let s = 0;
    for (let k = 0; k < GL.x.length; k++) s += GL.w[k] * f(mid + 0.5 * h * GL.x[k]);
    sum += 0.5 * h * s;
  }
  return sum;
}

export interface TurningPoint {
  /** u0 = rg/r0, the inverse radius of closest approach (dimensionless). */
  u0: number;
  /** r0 = 1/u0, radius of closest approach, rg (Infinity when q = 0). */
  r0: number;
  /** 1 - 3 u0 = (r0 - 3)/r0, computed without cancellation near the photon sphere. */
  oneMinus3u0: number;
  /** r0/b = r0 q, in [1/sqrt 3, 1]: r0 in metres is this times b in metres (no overflow for small q). */
  r0OverB: number;
}

/** sqrt(27) - B_CRITICAL (the rounding of the double), from 50-digit arithmetic. */
const B_CRITICAL_LO = -1.4303668319585554e-16;

/** Dekker's exact product: a b = p + e with p = fl(a b) (Dekker 1971, Numer. Math. 18, 224; Veltkamp splitting). */
function twoProduct(a: number, b: number): [number, number] {
  const p = a * b;
  const SPLIT = 134217729; // 2^27 + 1
  const ta = SPLIT * a;
  const ah = ta - (ta - a);
  const al = a - ah;
  const tb = SPLIT * b;
  const bh = tb - (tb - b);
  const bl = b - bh;
  return [p, ah * bh - p + ah * bl + al * bh + al * bl];
}

/**
 * 1 - sqrt(27) q, the relative distance of the impact parameter b = 1/q (rg) from the critical one,
 * to full relative precision also as b -> sqrt(27) (sqrt 27 as a double-double, exact product).
 * Positive exactly when the ray has a turning point outside the photon sphere.
 */
export function criticalMargin(q: number): number {
  if (!(q < 1)) return 1 - B_CRITICAL * q;
  const [p, e] = twoProduct(B_CRITICAL, q);
  return 1 - p - e - B_CRITICAL_LO * q; // 1 - p is exact (Sterbenz) where it matters
}

function checkQ(q: number): void {
  if (typeof q !== 'number' || !Number.isFinite(q) || q < 0) {
    throw new PhysicsDomainError(`GM/(c^2 b) must be a finite number >= 0; got ${describeNumber(q)}`, 'b > 0', 'b');
  }
  if (!(criticalMargin(q) > 0)) {
    throw new PhysicsDomainError(
      `a ray with impact parameter b = ${1 / q} GM/c^2 is captured by the black hole (no turning point outside the photon sphere)`,
      `b > sqrt(27) GM/c^2 = ${B_CRITICAL} GM/c^2 (the critical impact parameter; Chandrasekhar 1983, section 20)`,
      'b',
    );
  }
}

/**
 * Radius of closest approach of a ray with impact parameter b = 1/q (rg): the largest root of
 * r^3 - b^2 r + 2 b^2 = 0 (the turning point of the orbit equation, Chandrasekhar 1983, section 20),
 * by the trigonometric solution of the cubic, r0 = (2b/sqrt 3) cos[(1/3) arccos(-sqrt(27)/b)],
 * rearranged with nu = arccos(sqrt(27)/b) as r0 q = cos(nu/3)/sqrt 3 + sin(nu/3), and
 * r0 - 3 = sin(nu/3) [1 + 2 sin(2 nu/3)/sqrt 3]/q (sums of non-negative terms), rg.
 */
export function turningPoint(q: number): TurningPoint {
  checkQ(q);
  const m = criticalMargin(q); // 1 - sqrt(27)/b = 1 - cos(nu), full precision
  const nu = Math.atan2(Math.sqrt(m * (2 - m)), 1 - m);
  const s3 = Math.sin(nu / 3);
  const k = Math.cos(nu / 3) / Math.sqrt(3) + s3; // r0 q
  const kMinus3q = s3 * (1 + (2 * Math.sin((2 * nu) / 3)) / Math.sqrt(3)); // (r0 - 3) q
  return { u0: q / k, r0: k / q, oneMinus3u0: kMinus3q / k, r0OverB: k };
}

/**
 * Exact deflection of a light ray in the Schwarzschild metric, rad, for q = GM/(c^2 b) with
 * b > sqrt(27) GM/c^2:
 *
 *   Delta phi = 2 int_0^u0 du / sqrt(1/b^2 - u^2 (1 - 2u)) - pi     (u = rg/r; Chandrasekhar 1983, section 20)
 *
 * evaluated in one of two forms, both free of the inverse-square-root singularity at u0:
 *   - u0 <= 0.2 (r0 >= 5 rg): with u = u0 sin(theta) the flat-space part (pi/2) is subtracted
 *     analytically, Delta phi = 4 u0 int_0^{pi/2} (1 + x + x^2) / [sqrt(P) (sqrt(P) + sqrt(1 + x))] dtheta,
 *     x = sin(theta), P = (1 + x) - 2 u0 (1 + x + x^2): no cancellation, full relative precision
 *     down to the weak field (where Delta phi -> 4 q);
 *   - u0 > 0.2: the cubic 1/b^2 - u^2 + 2u^3 = 2 (u0 - u)(u - u1)(u2 - u) has its two roots u0, u2
 *     approach each other near the photon sphere (logarithmic divergence); with
 *     u0 - u = delta sinh^2(w), delta = u2 - u0, the integrand becomes 2/sqrt(2 (u - u1)), smooth
 *     and bounded on w in [0, asinh(sqrt(u0/delta))].
 * Composite 24-point Gauss-Legendre; converged to about 1e-15 relative (checked by refinement
 * and against Darwin's elliptic-integral form in the tests).
 */
export function deflectionExact(q: number): number {
  const tp = turningPoint(q);
  const u0 = tp.u0;
  if (u0 === 0) return 0;
  if (u0 <= 0.2) {
    const twoU0 = 2 * u0;
    const f = (theta: number): number => {
      const x = Math.sin(theta);
      const s = 1 + x + x * x;
      const p = 1 + x - twoU0 * s;
      const sp = Math.sqrt(p);
      return s / (sp * (sp + Math.sqrt(1 + x)));
    };
    return 4 * u0 * integrate(f, 0, Math.PI / 2, 2);
  }
  const oneMinus2u0 = 1 - 2 * u0;
  const sA = Math.sqrt(oneMinus2u0 * (1 + 6 * u0));
  const delta = (4 * u0 * tp.oneMinus3u0) / (sA + 6 * u0 - 1); // u2 - u0 without cancellation
  const u1 = (-2 * u0 * oneMinus2u0) / (oneMinus2u0 + sA); // negative root
  const top = u0 - u1;
  const W = Math.asinh(Math.sqrt(u0 / delta));
  const g = (w: number): number => {
    const sh = Math.sinh(w);
    return 2 / Math.sqrt(2 * (top - delta * sh * sh));
  };
  const panels = Math.max(1, Math.ceil(W / 0.25));
  return 2 * integrate(g, 0, W, panels) - Math.PI;
}
