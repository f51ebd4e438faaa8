/**
 * Independent reference quadratures for photon orbits, shared by the physics tests
 * (test/physics/raytrace.test.ts, test/physics/lineprofile.test.ts). Nothing here uses
 * physics/raytrace.ts: only the project's Gauss-Legendre nodes and Brent root finder.
 *
 * Plane crossings of a Kerr ray from the Mino-time integrals. Along a ray, Mino time is
 * int du/sqrt(P(u)) = int dmu/sqrt(M(mu)) (Carter 1968, Phys. Rev. 174, 1559: R(r) and
 * Theta(theta); Mino 2003, Phys. Rev. D 67, 084027), u = 1/r, mu = cos theta, with the constants
 * per unit energy of the ray through image point (alpha, beta) of an observer at inclination i,
 * lambda = -alpha sin i (Bardeen 1973) and q = beta^2 + (alpha^2 - a^2) cos^2 i (Cunningham &
 * Bardeen 1973):
 *   P(u) = 1 + (a^2 - lambda^2 - q) u^2 + 2 (q + (lambda - a)^2) u^3 - a^2 q u^4,
 *   M(mu) = q - (q + lambda^2 - a^2) mu^2 - a^2 mu^4 = (mu+^2 - mu^2)(a^2 mu^2 + q/mu+^2).
 * Polar: with mu = mu+ sin t, int dmu/sqrt(M) = int dt/sqrt(a^2 mu+^2 sin^2 t + q/mu+^2); the ray
 * reaches mu = 0 for the n-th time after T(t_i) + (n - 1) 2 T(pi/2) (beta <= 0: mu falls straight
 * to 0) or 2 T(pi/2) - T(t_i) + (n - 1) 2 T(pi/2) (beta > 0: it first rises to mu+), with
 * sin t_i = cos i/mu+.
 * Radial: near the turning point u_t, P(u) = (u_t - u) D(u) exactly, with
 *   D(u) = -[c2 (u + u_t) + c3 (u^2 + u u_t + u_t^2) + c4 (u^3 + u^2 u_t + u u_t^2 + u_t^3)]
 * (c2, c3, c4 the coefficients of u^2, u^3, u^4), and u = u_t (1 - s^2) gives the regular
 * integrand 2 sqrt(u_t)/sqrt(D(u)): no endpoint singularity is left.
 * Composite Gauss-Legendre throughout; `scale` multiplies the panels (2 = the convergence check
 * of the reference itself).
 */
import { gaussLegendre } from '../../physics/quadrature.js';
import { brent } from '../../physics/roots.js';

const GL = gaussLegendre(20);

/** Brent's method to (nearly) the last bit. */
export const TIGHT = { xRelTol: 1e-15 };

/** Composite 20-point Gauss-Legendre integral of f over the panels with boundaries `cuts`. */
export function gl(f: (x: number) => number, cuts: number[]): number {
  let sum = 0;
  for (let p = 0; p + 1 < cuts.length; p++) {
    const c = (cuts[p] + cuts[p + 1]) / 2;
    const h = (cuts[p + 1] - cuts[p]) / 2;
    let s = 0;
    for (let k = 0; k < GL.x.length; k++) s += GL.w[k] * f(c + h * GL.x[k]);
    sum += h * s;
  }
  return sum;
}

/** n * scale equal panels on [lo, hi]. */
export function uniformCuts(lo: number, hi: number, n: number, scale: number): number[] {
  const m = n * scale;
  return Array.from({ length: m + 1 }, (_, k) => lo + ((hi - lo) * k) / m);
}

/** Panels graded geometrically toward lo (lo, lo + d 2^-m, ..., lo + d/2, lo + d), each split into `scale` parts. */
export function gradedCuts(lo: number, hi: number, m: number, scale: number): number[] {
  const base = [lo];
  for (let k = m; k >= 0; k--) base.push(lo + (hi - lo) * Math.pow(2, -k));
  const cuts = [lo];
  for (let p = 0; p + 1 < base.length; p++) for (let j = 1; j <= scale; j++) cuts.push(base[p] + ((base[p + 1] - base[p]) * j) / scale);
  return cuts;
}

/** lambda and q of the ray through image point (alpha, beta) at inclination inc (Bardeen 1973; Cunningham & Bardeen 1973). */
export function constantsOfMotion(a: number, inc: number, alpha: number, beta: number): { lam: number; q: number } {
  return { lam: -alpha * Math.sin(inc), q: beta * beta + (alpha * alpha - a * a) * Math.cos(inc) ** 2 };
}

/** The radial polynomial P(u) = 1 + c2 u^2 + c3 u^3 + c4 u^4 of a ray with constants lam, q, and its derivative. */
export function radialPolynomial(a: number, lam: number, q: number) {
  const c2 = a * a - lam * lam - q;
  const c3 = 2 * (q + (lam - a) * (lam - a));
  const c4 = -a * a * q;
  const P = (u: number) => 1 + u * u * (c2 + u * (c3 + u * c4));
  const dP = (u: number) => u * (2 * c2 + u * (3 * c3 + 4 * c4 * u));
  return { c2, c3, c4, P, dP };
}

/** u = 1/r of the outer horizon 1 + sqrt(1 - a^2). */
export const horizonU = (a: number): number => 1 / (1 + Math.sqrt(1 - a * a));

/**
 * Smallest positive root of P below uH (NaN if none): P(0) = 1, so it lies before the first local
 * minimum of P (a root of the cubic P', found on 400 sub-intervals) at which P <= 0.
 */
export function turningPoint(P: (u: number) => number, dP: (u: number) => number, uH: number): number {
  const n = 400;
  let prev = 0;
  for (let k = 1; k <= n; k++) {
    const u0 = ((k - 1) * uH) / n;
    const u1 = (k * uH) / n;
    const m = dP(u0) < 0 && dP(u1) >= 0 ? brent(dP, u0, u1, TIGHT).root : k === n ? uH : NaN;
    if (Number.isNaN(m)) continue;
    if (P(m) <= 0) return brent(P, prev, m, TIGHT).root;
    prev = m;
  }
  return NaN;
}

/**
 * Radius of the n-th equatorial-plane crossing of the ray through image point (alpha, beta):
 * 0 if the ray falls through the horizon first (or never leaves the hemisphere, q <= 1e-12),
 * +Infinity if it leaves for infinity first. `levels` is the number of geometrically graded
 * panels toward the radial turning point.
 */
export function planeCrossing(a: number, inc: number, alpha: number, beta: number, n: number, scale = 1, levels = 30): number {
  const { lam, q } = constantsOfMotion(a, inc, alpha, beta);
  if (!(q > 1e-12)) return 0;
  // polar: Mino time from the observer (mu = cos i) to the n-th crossing of mu = 0
  const B = q + lam * lam - a * a;
  const sq = Math.sqrt(B * B + 4 * a * a * q);
  const mp2 = B >= 0 ? (2 * q) / (B + sq) : (sq - B) / (2 * a * a); // mu+^2, the positive root of M in mu^2, without cancellation
  const c = q / mp2;
  const T = (t1: number) => gl((t) => 1 / Math.sqrt(a * a * mp2 * Math.sin(t) ** 2 + c), uniformCuts(0, t1, 4, scale));
  const ti = Math.asin(Math.min(1, Math.cos(inc) / Math.sqrt(mp2)));
  const half = 2 * T(Math.PI / 2);
  const L = (beta <= 0 ? T(ti) : half - T(ti)) + (n - 1) * half;
  // radial
  const { c2, c3, c4, P, dP } = radialPolynomial(a, lam, q);
  const uH = horizonU(a);
  const ut = turningPoint(P, dP, uH);
  if (Number.isNaN(ut)) {
    // no turning point: Mino time to u is int_0^u du/sqrt(P)
    const I = (u: number) => gl((x) => 1 / Math.sqrt(P(x)), uniformCuts(0, u, 8, scale));
    if (I(uH) < L) return 0;
    return 1 / brent((u) => I(u) - L, 0, uH, TIGHT).root;
  }
  const D = (u: number) => -(c2 * (u + ut) + c3 * (u * u + u * ut + ut * ut) + c4 * (u * u * u + u * u * ut + u * ut * ut + ut * ut * ut));
  const h = (s: number) => (2 * Math.sqrt(ut)) / Math.sqrt(D(ut * (1 - s * s)));
  const near = (s1: number) => (s1 === 0 ? 0 : gl(h, gradedCuts(0, s1, levels, scale)));
  const toTurn = near(1);
  const target = L <= toTurn ? L : 2 * toTurn - L; // inward: int_0^u = L; outward: 2 int_0^u_t - int_0^u = L
  if (target <= 0) return Infinity;
  const s = brent((x) => toTurn - near(x) - target, 0, 1, TIGHT).root;
  return 1 / (ut * (1 - s * s));
}
