/**
 * Tidal accelerations near massive bodies, tidal disruption of stars by black holes, and the
 * classical Roche limits.
 *
 * Pure functions in SI units: GM in m^3 s^-2, lengths in m, masses in kg, accelerations in
 * m s^-2, tidal rates (relative acceleration per unit separation) in s^-2, forces in N, times
 * in s, densities in kg m^-3. Spins are the dimensionless Kerr a* = cJ/(GM^2).
 *
 * References:
 *   MTW: C. W. Misner, K. S. Thorne & J. A. Wheeler 1973, Gravitation (Freeman):
 *        eq. (31.4) (Riemann tensor in the orthonormal frame of a radially moving observer in
 *        Schwarzschild, R_TRTR = -2M/r^3, R_T(th)T(th) = R_T(ph)T(ph) = M/r^3), §1.6 and eq. (11.10)
 *        (geodesic deviation), §25.5 and §31.4 (radial free fall, dr/dtau = -(2M/r)^{1/2} for
 *        a fall from rest at infinity).
 *   Teukolsky 1973, ApJ 185, 635: the Kerr Weyl scalar Psi_2 = M rho^3, rho = -1/(r - i a cos theta)
 *        (Kinnersley tetrad); Lima Junior, Crispino & Higuchi 2020 (arXiv:2003.09506): the tidal
 *        tensor for a fall along the spin axis, which vanishes at r = sqrt(3) a.
 *   Rees 1988, Nature 333, 523: tidal radius r_t ~ R* (M/M*)^{1/3}.
 *   Hills 1975, Nature 254, 295: above a critical mass the tidal radius lies inside the
 *        horizon and stars are swallowed whole.
 *   BPT72: Bardeen, Press & Teukolsky 1972, ApJ 178, 347 (horizon, marginally bound orbit).
 *   Roche 1849 (Acad. Sci. Montpellier; fluid coefficient 2.44); Darwin 1906, Phil. Trans. R.
 *        Soc. A 206, 161 (recomputed coefficient 2.455); Chandrasekhar 1969, Ellipsoidal Figures
 *        of Equilibrium (Yale), ch. 8 (Roche ellipsoids).
 *
 * Numerics: every power is arranged so that no intermediate overflows or underflows before the
 * result does (GM/r is formed before dividing by r^2, cube roots of ratios, and so on).
 */
import { C, G } from './constants.js';
import { PhysicsDomainError } from './errors.js';

// ---------------------------------------------------------------------------
// Tidal tensor along a radial geodesic (Schwarzschild)

/**
 * Radial eigenvalue of the tidal tensor for a radial geodesic in Schwarzschild,
 * k_r = 2GM/r^3 (MTW eq. 31.4; also the Newtonian value), s^-2: the relative acceleration of two
 * points separated by xi along the radial direction is +k_r xi (a stretch). Independent of the
 * fall speed (the radial boost leaves these components unchanged) and valid inside the horizon.
 */
export function radialTidalRate(gm: number, r: number): number {
  const g = gm / r; // GM/r, m^2 s^-2 (formed first so that r^3 cannot overflow on its own)
  return (2 * g) / r / r;
}

/**
 * Transverse eigenvalue of the same tidal tensor, k_t = -GM/r^3 (MTW eq. 31.4), s^-2: points
 * separated across the radial direction approach each other at GM xi/r^3 (a compression).
 */
export function transverseTidalRate(gm: number, r: number): number {
  const g = gm / r;
  return -g / r / r;
}

/**
 * Relative acceleration across an object of extent `length` (m) for a tidal rate k (s^-2):
 * Delta a = k L, m s^-2 (geodesic deviation to first order in L/r, MTW eq. 11.10).
 */
export function tidalAcceleration(rate: number, length: number): number {
  return rate * length;
}

/**
 * Tension at the middle of a uniform rod of mass m (kg) and length L (m) lying along a principal
 * direction of the tidal tensor with eigenvalue k (s^-2), its centre falling freely:
 *   T(x) = integral from x to L/2 of (m/L) k x' dx' = (m k/(2L)) (L^2/4 - x^2),
 *   T(0) = m k L/8, N,
 * i.e. (1/8) m L (2GM/r^3) along the radial direction (geodesic deviation, MTW eq. 31.4, with
 * Newtonian statics in the freely falling frame; the rod's self-gravity is neglected). Negative k
 * gives a compression (negative tension).
 */
export function rodMidpointTension(mass: number, length: number, rate: number): number {
  return (mass * length * rate) / 8;
}

/**
 * Radius where the radial tidal acceleration across L reaches `limit` (m s^-2):
 * 2GM L/r^3 = a  =>  r = (2GM L/a)^{1/3} (from MTW eq. 31.4), m.
 */
export function survivalRadiusForAcceleration(gm: number, length: number, limit: number): number {
  return Math.cbrt(2 * gm) * Math.cbrt(length / limit);
}

/**
 * Radius where the tension at the middle of a radial uniform rod reaches `tension` (N):
 * m L GM/(4 r^3) = T  =>  r = (GM m L/(4 T))^{1/3} (rodMidpointTension with k = 2GM/r^3), m.
 */
export function survivalRadiusForTension(gm: number, mass: number, length: number, tension: number): number {
  return Math.cbrt(gm / 4) * Math.cbrt((mass * length) / tension);
}

/**
 * Proper time of a fall from rest at infinity (E = 1) from radius r to the singularity r = 0 in
 * Schwarzschild: dr/dtau = -(2GM/r)^{1/2} (MTW §25.5, §31.4) integrates to
 * tau = (2/3) r^{3/2}/(2GM)^{1/2} = (2/3) r (r/(2GM))^{1/2}, s.
 */
export function properTimeToSingularity(gm: number, r: number): number {
  return (2 / 3) * r * Math.sqrt(r / (2 * gm));
}

/**
 * Proper time of the same fall (from rest at infinity) from r1 to r2, s:
 * tau = (2/3)(r1^{3/2} - r2^{3/2})/(2GM)^{1/2} (MTW §25.5), negative when r1 < r2, evaluated as
 * (2/3)(r1 - r2)(r1 + sqrt(r1 r2) + r2)/((sqrt(r1) + sqrt(r2)) sqrt(2GM)) without cancellation.
 */
export function properTimeBetween(gm: number, r1: number, r2: number): number {
  const s1 = Math.sqrt(r1);
  const s2 = Math.sqrt(r2);
  return ((2 / 3) * (r1 - r2) * (r1 + s1 * s2 + r2)) / ((s1 + s2) * Math.sqrt(2 * gm));
}

/**
 * Tidal eigenvalues for a fall along the spin axis of a Kerr hole (exact on the axis, any fall
 * speed): with Psi_2 = -M/(r - i a cos theta)^3 (Teukolsky 1973) at theta = 0, the radial
 * eigenvalue is -2 Re Psi_2 = 2GM R (R^2 - 3A^2)/(R^2 + A^2)^3 and the transverse one minus half
 * of it (Lima Junior, Crispino & Higuchi 2020), s^-2, with R = r (Boyer-Lindquist, m) and
 * A = a* GM/c^2 (m). Both vanish at R = sqrt(3) A and change sign inside it.
 * Evaluated as (2GM/R^3)(1 - 3u^2)/(1 + u^2)^3 with u = A/R when |A| <= R, else as
 * (2GM/|A|^3) v (v^2 - 3)/(v^2 + 1)^3 with v = R/|A|, so that nothing overflows.
 */
export function kerrAxisTidalRates(gm: number, r: number, spin: number): { radial: number; transverse: number } {
  const A = Math.abs(spin) * (gm / C / C); // |a*| GM/c^2, m
  let radial: number;
  if (A <= r) {
    const u = A / r;
    const u2 = u * u;
    const q = 1 + u2;
    radial = radialTidalRate(gm, r) * ((1 - 3 * u2) / (q * q * q));
  } else {
    const v = r / A;
    const v2 = v * v;
    const q = v2 + 1;
    radial = radialTidalRate(gm, A) * ((v * (v2 - 3)) / (q * q * q));
  }
  return { radial, transverse: -radial / 2 };
}

// ---------------------------------------------------------------------------
// Tidal disruption of a star

/**
 * Tidal radius r_t = eta R* (M/M*)^{1/3} (Rees 1988, Nature 333, 523; Hills 1975), m, with the
 * mass ratio taken as GM/GM* (G cancels). eta: order-unity factor (1 in Rees 1988).
 */
export function tidalRadius(eta: number, starRadius: number, gm: number, gmStar: number): number {
  return eta * starRadius * Math.cbrt(gm / gmStar);
}

/**
 * Mass parameter of the hole whose tidal radius equals x GM/c^2 (x = 2 for the Schwarzschild
 * horizon; the outer horizon r+ or the marginally bound radius r_mb of BPT72 for a spinning
 * hole), m^3 s^-2. From eta R* (GM/GM*)^{1/3} = x GM/c^2:
 *   GM_H = (eta R* c^2/x)^{3/2} (GM*)^{-1/2}
 * (the Hills 1975 mass; for x = 2: (eta R* c^2/2)^{3/2}/sqrt(GM*)). Evaluated as q sqrt(q/GM*),
 * q = eta R* c^2/x.
 */
export function hillsGm(eta: number, starRadius: number, gmStar: number, x: number): number {
  const q = (eta * starRadius * (C * C)) / x; // eta R* c^2/x, m^3 s^-2
  return q * Math.sqrt(q / gmStar);
}

/** Mean density of a sphere of mass parameter GM and radius R, 3GM/(4 pi G R^3) (CODATA 2018 G), kg m^-3. */
export function meanDensity(gm: number, radius: number): number {
  return ((3 / (4 * Math.PI)) * (gm / G)) / radius / radius / radius;
}

// ---------------------------------------------------------------------------
// Classical Roche limits

/**
 * Rigid-satellite coefficient 2^{1/3} = 1.2599...: a rigid spherical satellite of density rho_m
 * held together only by its own gravity loses a surface particle where the tidal acceleration
 * 2GM R_m/d^3 equals its surface gravity G m/R_m^2, i.e. d = R_M (2 rho_M/rho_m)^{1/3}
 * (textbook derivation; exact for this model).
 */
export const ROCHE_RIGID_COEFFICIENT = Math.cbrt(2);

/**
 * Fluid-satellite coefficient 2.455: a homogeneous incompressible satellite in synchronous
 * rotation (Roche ellipsoid) has no equilibrium inside d = 2.455 R_M (rho_M/rho_m)^{1/3}
 * (Darwin 1906, Phil. Trans. R. Soc. A 206, 161; Chandrasekhar 1969, ch. 8). Roche (1849) found 2.44.
 */
export const ROCHE_FLUID_COEFFICIENT = 2.455;

/** Roche's own (1849) rounded value of the fluid coefficient, for reference. */
export const ROCHE_FLUID_COEFFICIENT_1849 = 2.44;

/**
 * Roche limit d = k R_M (rho_M/rho_m)^{1/3}, m. Since rho_M R_M^3 = 3M/(4 pi), the primary's
 * radius cancels: d = k (3M/(4 pi rho_m))^{1/3} with M = GM/G (CODATA 2018 G), so only the
 * primary's mass and the satellite's density are needed.
 */
export function rocheLimit(coefficient: number, gm: number, satelliteDensity: number): number {
  return coefficient * Math.cbrt((3 / (4 * Math.PI)) * (gm / G)) / Math.cbrt(satelliteDensity);
}

// ---------------------------------------------------------------------------
// Domain checks shared by the routes

/**
 * A star must be larger than its own Schwarzschild radius 2 GM_star/c^2 (else it is a black hole);
 * throws a PhysicsDomainError naming `pointer` otherwise.
 */
export function assertStarRadius(gmStar: number, radius: number, pointer: string): void {
  const rs = (2 * gmStar) / C / C; // 2GM*/c^2, m
  if (!(radius > rs)) {
    throw new PhysicsDomainError(
      `a star of GM* = ${gmStar} m3.s-2 and radius ${radius} m lies inside its own Schwarzschild radius ${rs} m`,
      `star radius > 2GM*/c^2 = ${rs} m`,
      pointer,
    );
  }
}
