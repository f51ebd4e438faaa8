/**
 * Characteristic radii and equatorial circular orbits of the Kerr metric.
 *
 * Pure functions in geometric units (G = c = 1 with the hole's mass M as the scale):
 *   - lengths in units of r_g = GM/c^2 (Boyer–Lindquist radius r),
 *   - frequencies (angular velocities) in units of c^3/(GM),
 *   - specific energy in units of c^2, specific angular momentum in units of GM/c,
 *   - surface gravity in units of c^4/(GM) (an acceleration: kappa_SI = kappa * c^4/(GM)),
 *   - the dimensionless spin a = a* = cJ/(GM^2), |a| <= 1.
 *
 * Sign convention. Functions about an equatorial circular orbit (`photonOrbit`,
 * `marginallyBound`, `isco`, `iscoEnergy`, `efficiency`, `circular*`) take a *signed*
 * spin measured relative to the orbit: a > 0 means the orbit co-rotates with the hole
 * (prograde), a < 0 that it counter-rotates (retrograde). The prograde value at spin
 * magnitude |a| is f(+|a|), the retrograde one f(-|a|). Quantities of the hole itself
 * (`horizonOuter`, `horizonInner`, `surfaceGravity`, ...) depend on a only through a^2,
 * except `horizonAngularVelocity`, whose sign is the sense of the hole's rotation.
 *
 * References:
 *   BPT72: J. M. Bardeen, W. H. Press & S. A. Teukolsky 1972, ApJ 178, 347.
 *   Thorne 1974: K. S. Thorne, ApJ 191, 507.
 *   Hawking 1975: S. W. Hawking, Commun. Math. Phys. 43, 199.
 *
 * Numerics: every closed form of BPT72 that cancels catastrophically somewhere in
 * -1 <= a <= 1 is rearranged here into sums of non-negative terms, so each radius is
 * accurate to a few ulp over the whole range, including |a| -> 1 and a -> 0. All functions
 * are finite at |a| = 1 exactly wherever the quantity is defined there.
 *
 * Domain errors (|a| > 1, non-finite input, a radius inside the allowed range) throw a
 * `RangeError` whose message names the allowed range.
 */

// ---------------------------------------------------------------------------
// Validation

function describe(x: number): string {
  return Number.isNaN(x) ? 'NaN' : String(x);
}

/** Throws a RangeError unless `a` is a finite spin with -1 <= a <= 1; returns `a`. */
export function assertSpin(a: number, name = 'a'): number {
  if (typeof a !== 'number' || !Number.isFinite(a) || a < -1 || a > 1) {
    throw new RangeError(`${name} must be a finite dimensionless spin with -1 <= ${name} <= 1; got ${describe(a)}`);
  }
  return a;
}

function assertFinite(x: number, name: string, range: string): void {
  if (typeof x !== 'number' || !Number.isFinite(x)) {
    throw new RangeError(`${name} must be finite (${range}); got ${describe(x)}`);
  }
}

// ---------------------------------------------------------------------------
// Horizons and ergosphere

/** (1 - a)(1 + a) = 1 - a^2 without cancellation near |a| = 1. */
function oneMinusASquared(a: number): number {
  return (1 - a) * (1 + a);
}

/** Outer (event) horizon r+ = 1 + sqrt(1 - a^2), units GM/c^2. r+ = 2 at a = 0, 1 at |a| = 1. */
export function horizonOuter(a: number): number {
  assertSpin(a);
  return 1 + Math.sqrt(oneMinusASquared(a));
}

/**
 * Inner (Cauchy) horizon r- = 1 - sqrt(1 - a^2), units GM/c^2, evaluated as
 * a^2 / (1 + sqrt(1 - a^2)) (= a^2 / r+), which keeps full relative accuracy for small a
 * (r- ~ a^2/2). r- = 0 at a = 0, 1 at |a| = 1.
 */
export function horizonInner(a: number): number {
  assertSpin(a);
  return (a * a) / (1 + Math.sqrt(oneMinusASquared(a)));
}

/**
 * Static limit (outer boundary of the ergoregion) r_E(theta) = 1 + sqrt(1 - a^2 cos^2 theta),
 * units GM/c^2, for polar angle 0 <= theta <= pi. Evaluated as
 * 1 + sqrt((1 - a)(1 + a) + (a sin theta)^2), a sum of non-negative terms, which is stable
 * for every a and theta (r_E = r+ on the axis, 2 on the equator).
 */
export function staticLimit(a: number, theta: number): number {
  assertSpin(a);
  if (typeof theta !== 'number' || !Number.isFinite(theta) || theta < 0 || theta > Math.PI) {
    throw new RangeError(`theta must be a finite polar angle with 0 <= theta <= pi; got ${describe(theta)}`);
  }
  const s = a * Math.sin(theta);
  return 1 + Math.sqrt(oneMinusASquared(a) + s * s);
}

/**
 * Equatorial radius of the static limit (ergosphere), units GM/c^2: exactly 2 for every spin
 * (at a = 0 it coincides with the horizon r+ = 2 and the ergoregion is empty).
 */
export function ergosphereEquatorial(a: number): number {
  assertSpin(a);
  return 2;
}

// ---------------------------------------------------------------------------
// Characteristic equatorial radii (signed spin, see the header)

/**
 * Circular photon orbit, BPT72 eq. (2.18): r_ph = 2{1 + cos[(2/3) arccos(-a)]}, units GM/c^2.
 * a = +1 (prograde) -> 1, a = 0 -> 3, a = -1 (retrograde) -> 4.
 *
 * With d = arccos(a) in [0, pi] (so arccos(-a) = pi - d) this equals
 * 1 + 2 sin^2(d/3) + sqrt(3) sin(2d/3), a sum of non-negative terms; d is computed as
 * 2 atan2(sqrt(1 - a), sqrt(1 + a)), accurate also near |a| = 1.
 */
export function photonOrbit(a: number): number {
  assertSpin(a);
  const d = 2 * Math.atan2(Math.sqrt(1 - a), Math.sqrt(1 + a));
  const s = Math.sin(d / 3);
  return 1 + 2 * s * s + Math.sqrt(3) * Math.sin((2 * d) / 3);
}

/**
 * Marginally bound circular orbit (E = 1), BPT72 eq. (2.19): r_mb = 2 - a + 2 sqrt(1 - a),
 * units GM/c^2. a = 1 -> 1, a = 0 -> 4, a = -1 -> 3 + 2 sqrt(2). All terms are non-negative.
 */
export function marginallyBound(a: number): number {
  assertSpin(a);
  return 2 - a + 2 * Math.sqrt(1 - a);
}

/**
 * Z1 and 3 - Z1 of BPT72 eq. (2.21) for spin magnitude b = |a| in [0, 1].
 *
 * With p = (1+b)^(1/3), q = (1-b)^(1/3) and s = p + q (so p^3 + q^3 = 2):
 *   Z1 = 1 + pq(p + q) = (s^3 + 1)/3,
 *   3 - Z1 = (8 - s^3)/3 = (2 - s)(4 + 2s + s^2)/3,
 *   2 - s = 2 b^2 (1 + p + q) / [(p^2 + pq + q^2)(1 + p + p^2)(1 + q + q^2)],
 * so 3 - Z1 (which vanishes like 8a^2/9 as a -> 0) is computed without cancellation.
 */
function iscoZ(b: number): { z1: number; threeMinusZ1: number } {
  const p = Math.cbrt(1 + b);
  const q = Math.cbrt(1 - b);
  const twoMinusS =
    (2 * b * b * (1 + p + q)) / ((p * p + p * q + q * q) * (1 + p + p * p) * (1 + q + q * q));
  const s = 2 - twoMinusS;
  const threeMinusZ1 = (twoMinusS * (4 + 2 * s + s * s)) / 3;
  const z1 = 1 + p * q * s;
  return { z1, threeMinusZ1 };
}

/**
 * Innermost stable circular orbit (marginally stable orbit r_ms), BPT72 eq. (2.21),
 * units GM/c^2:
 *   Z1 = 1 + (1 - a^2)^(1/3) [(1 + a)^(1/3) + (1 - a)^(1/3)],  Z2 = sqrt(3a^2 + Z1^2),
 *   r_ms = 3 + Z2 - sign(a) sqrt((3 - Z1)(3 + Z1 + 2 Z2)).
 * a = 0 -> 6, a = +1 -> 1, a = -1 -> 9.
 *
 * Stable evaluation: 3 - Z1 from `iscoZ`; for the prograde branch the identity
 * (3 + Z2)^2 - (3 - Z1)(3 + Z1 + 2 Z2) = (Z1 + Z2)^2 gives
 *   r_ms = (Z1 + Z2)^2 / (3 + Z2 + sqrt((3 - Z1)(3 + Z1 + 2 Z2))),
 * free of cancellation; the retrograde branch is a sum of positive terms.
 */
export function isco(a: number): number {
  assertSpin(a);
  const b = Math.abs(a);
  const { z1, threeMinusZ1 } = iscoZ(b);
  const z2 = Math.sqrt(3 * b * b + z1 * z1);
  const root = Math.sqrt(threeMinusZ1 * (3 + z1 + 2 * z2));
  if (a >= 0) {
    const sum = z1 + z2;
    return (sum * sum) / (3 + z2 + root);
  }
  return 3 + z2 + root;
}

/**
 * Specific energy at the ISCO, E_ms = sqrt(1 - 2/(3 r_ms)) (BPT72), units c^2.
 * a = 0 -> sqrt(8/9), a = +1 -> 1/sqrt(3), a = -1 -> sqrt(25/27).
 */
export function iscoEnergy(a: number): number {
  return Math.sqrt(1 - 2 / (3 * isco(a)));
}

/**
 * Radiative efficiency of a Novikov–Thorne thin disk, eta = 1 - E_ms (fraction of rest-mass
 * energy radiated by matter reaching the ISCO), computed as x / (1 + sqrt(1 - x)) with
 * x = 2/(3 r_ms) to avoid the cancellation in 1 - sqrt(1 - x).
 * a = 0 -> 1 - sqrt(8/9) ~ 0.0572, a = +1 -> 1 - 1/sqrt(3) ~ 0.4226,
 * a = -1 -> 1 - sqrt(25/27) ~ 0.0377; a = 0.998 -> ~0.32 (Thorne 1974).
 */
export function efficiency(a: number): number {
  const x = 2 / (3 * isco(a));
  return x / (1 + Math.sqrt(1 - x));
}

// ---------------------------------------------------------------------------
// Equatorial circular orbits (BPT72 eqs. 2.12, 2.13, 2.16)

/**
 * Validates (r, a) for a timelike circular equatorial orbit and returns
 * u = sqrt(r), u - 1 and D = r^(3/2) - 3 r^(1/2) + 2a (> 0 exactly outside the photon orbit).
 *
 * D is evaluated as (u - 1)^2 (u + 2) - 2(1 - a), which is algebraically identical
 * (u^3 - 3u + 2 = (u - 1)^2 (u + 2)) but keeps relative accuracy near the extremal
 * prograde limit r -> 1, a -> 1, where both forms tend to 0.
 */
/**
 * Beyond this radius (well outside every photon orbit and marginally bound orbit, r <= 3 + 2 sqrt 2)
 * the circular-orbit formulas are evaluated divided through by r^(3/2), which is accurate there
 * and cannot overflow for huge r.
 */
const FAR = 16;

function circularOrbitTerms(r: number, a: number): { u: number; uMinus1: number; d: number } {
  assertSpin(a);
  const rPh = photonOrbit(a);
  const range = `r > r_ph(a) = ${rPh} GM/c^2, the circular photon orbit`;
  assertFinite(r, 'r', range);
  const u = Math.sqrt(r);
  const uMinus1 = (r - 1) / (u + 1);
  const d = uMinus1 * uMinus1 * (u + 2) - 2 * (1 - a);
  if (!(r > rPh) || !(d > 0)) {
    throw new RangeError(`r must satisfy ${range}, for a timelike circular orbit; got r = ${describe(r)}`);
  }
  return { u, uMinus1, d };
}

/**
 * Specific energy (units c^2) of a circular equatorial geodesic at Boyer–Lindquist radius r
 * (units GM/c^2), signed spin a relative to the orbit, BPT72 eq. (2.12):
 *   E = (r^(3/2) - 2 r^(1/2) + a) / (r^(3/4) sqrt(r^(3/2) - 3 r^(1/2) + 2a)).
 * Defined for r strictly outside the photon orbit (E -> infinity there); E = 1 at r_mb,
 * E is minimal (= `iscoEnergy(a)`) at r_ms. The numerator is evaluated as
 * (u - 1)(u^2 + u - 1) - (1 - a), u = sqrt(r), for accuracy near r -> 1, a -> 1.
 * At a = 1 the degenerate radius r = 1 (= r+ = r_ph = r_mb = r_ms in Boyer–Lindquist
 * coordinates) is excluded: the limit there depends on how it is approached.
 */
export function circularEnergy(r: number, a: number): number {
  const { u, uMinus1, d } = circularOrbitTerms(r, a);
  if (r > FAR) {
    // Divided through by r^(3/2): no cancellation out here, and no overflow for huge r.
    const w = a / (r * u);
    return (1 - 2 / r + w) / Math.sqrt(1 - 3 / r + 2 * w);
  }
  const num = uMinus1 * (u * u + u - 1) - (1 - a);
  return num / (u * Math.sqrt(u) * Math.sqrt(d));
}

/**
 * Specific angular momentum (units GM/c) of a circular equatorial geodesic, BPT72 eq. (2.13),
 * measured along the direction of the orbit (so it is positive for both prograde, a > 0, and
 * retrograde, a < 0, orbits; BPT72's retrograde L carries an overall minus sign):
 *   L = (r^2 - 2a r^(1/2) + a^2) / (r^(3/4) sqrt(r^(3/2) - 3 r^(1/2) + 2a)).
 * Same domain as `circularEnergy`. For a > 0 the numerator is evaluated as
 * (r - a)^2 + 2a u (u - 1), a sum of non-negative terms.
 */
export function circularAngularMomentum(r: number, a: number): number {
  const { u, uMinus1, d } = circularOrbitTerms(r, a);
  if (r > FAR) {
    const w = a / (r * u);
    return (u * (1 - 2 * w + (a / r) * (a / r))) / Math.sqrt(1 - 3 / r + 2 * w);
  }
  const num = a >= 0 ? (r - a) * (r - a) + 2 * a * u * uMinus1 : r * r - 2 * a * u + a * a;
  return num / (u * Math.sqrt(u) * Math.sqrt(d));
}

/**
 * Coordinate angular velocity dphi/dt (units c^3/(GM)) of a circular equatorial orbit,
 * BPT72 eq. (2.16): Omega = 1 / (r^(3/2) + a), positive in the direction of the orbit.
 * Defined for r >= r_ph(a) (r = r_ph gives the circular photon orbit's Omega).
 */
export function circularAngularVelocity(r: number, a: number): number {
  assertSpin(a);
  const rPh = photonOrbit(a);
  const range = `r >= r_ph(a) = ${rPh} GM/c^2, the circular photon orbit`;
  assertFinite(r, 'r', range);
  if (!(r >= rPh)) {
    throw new RangeError(`r must satisfy ${range}; got r = ${describe(r)}`);
  }
  return 1 / (r * Math.sqrt(r) + a);
}

// ---------------------------------------------------------------------------
// Horizon quantities and Hawking temperature

/**
 * Angular velocity of the horizon, Omega_H = a / (2 r+) (= a / (r+^2 + a^2)), units c^3/(GM).
 * Signed: its sign is the sense of the hole's rotation. |a| = 1 -> 1/2.
 */
export function horizonAngularVelocity(a: number): number {
  return a / (2 * horizonOuter(a));
}

/**
 * Surface gravity kappa = sqrt(1 - a^2) / (2 r+), units c^4/(GM) (kappa_SI = kappa c^4/(GM)).
 * a = 0 -> 1/4; |a| = 1 -> 0 (extremal hole).
 */
export function surfaceGravity(a: number): number {
  assertSpin(a);
  const w = Math.sqrt(oneMinusASquared(a));
  return w / (2 * (1 + w));
}

/**
 * Hawking temperature relative to a Schwarzschild hole of the same mass:
 *   T(a) = T_Schw * hawkingTemperatureFactor(a),  T_Schw = hbar c^3 / (8 pi G M k_B),
 *   hawkingTemperatureFactor(a) = 4 kappa = 2 sqrt(1 - a^2) / r+.
 * (Hawking 1975: T = hbar kappa_SI / (2 pi c k_B) with kappa_SI = kappa c^4/(GM).)
 * 1 at a = 0, 0 at |a| = 1; dimensionless.
 */
export function hawkingTemperatureFactor(a: number): number {
  return 4 * surfaceGravity(a);
}

/** Physical constants the Hawking temperature needs, in SI units. */
export interface HawkingConstants {
  /** Speed of light, m s^-1. */
  readonly c: number;
  /** Reduced Planck constant, J s. */
  readonly hbar: number;
  /** Boltzmann constant, J K^-1. */
  readonly kB: number;
}

/**
 * Hawking temperature in kelvin, T = hbar kappa_SI / (2 pi c k_B) = hbar c^3 kappa / (2 pi k_B GM)
 * (Hawking 1975), for a hole of gravitational parameter `gm` = GM (m^3 s^-2) and spin a.
 * The SI constants are passed in so this module stays free of them.
 * a = 0, one solar mass -> ~6.17e-8 K; |a| = 1 -> 0.
 */
export function hawkingTemperature(a: number, gm: number, constants: HawkingConstants): number {
  const kappa = surfaceGravity(a);
  if (typeof gm !== 'number' || !Number.isFinite(gm) || !(gm > 0)) {
    throw new RangeError(`gm must be a finite gravitational parameter GM > 0 (m^3 s^-2); got ${describe(gm)}`);
  }
  const { c, hbar, kB } = constants;
  for (const [name, v] of [['c', c], ['hbar', hbar], ['kB', kB]] as const) {
    if (typeof v !== 'number' || !Number.isFinite(v) || !(v > 0)) {
      throw new RangeError(`constants.${name} must be finite and > 0 (SI units); got ${describe(v)}`);
    }
  }
  return (hbar * c * c * c * kappa) / (2 * Math.PI * kB * gm);
}
