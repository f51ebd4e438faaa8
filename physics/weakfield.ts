/**
 * Weak-field (first post-Newtonian) orbit effects around a slowly rotating body, in SI units:
 *
 *   - the periastron advance of a bound Keplerian orbit, with the PPN parameters gamma and beta
 *     (Will 2014, Living Rev. Relativ. 17, 4, section "perihelion shift of Mercury");
 *   - the precession of a gyroscope on a circular orbit: the geodetic (de Sitter) precession and
 *     the frame-dragging (Lense-Thirring, Schiff 1960) precession averaged over the orbit, and the
 *     drift of a chosen spin direction on the sky.
 *
 * Frame: the body's equatorial frame, z along its spin axis (the sense of positive angular
 * momentum), x toward the reference direction from which right ascensions and the ascending node
 * are counted (for the Earth: the equinox). An orbit of inclination i and ascending node Omega has
 * its normal (the direction of the orbital angular momentum) at
 * L = (sin i sin Omega, -sin i cos Omega, cos i) (standard orbital elements, e.g. Murray & Dermott
 * 1999, Solar System Dynamics, ch. 2).
 *
 * Everything uses GM, and G J for the body's angular momentum; G appears only when a J in
 * kg m^2 s^-1 is given.
 */
import { C, GM_EARTH, JULIAN_YEAR, OMEGA_EARTH, R_EARTH } from './constants.js';
import { PhysicsDomainError, requireFinite, requirePositive } from './errors.js';

/** Julian century, s: 36525 d of 86400 s (IAU, exact). */
export const JULIAN_CENTURY = 100 * JULIAN_YEAR;
/** Arcseconds per radian, 648000/pi (exact by definition of the arcsecond). */
export const ARCSEC_PER_RAD = 648000 / Math.PI;
/** Milliarcseconds per radian. */
export const MAS_PER_RAD = 1000 * ARCSEC_PER_RAD;

/**
 * The Earth's polar moment of inertia factor C/(M a^2), dimensionless, with a the equatorial
 * radius: 0.3307 (Yoder 1995, "Astrometric and geodetic properties of Earth and the Solar
 * System", AGU Reference Shelf 1, Table 3; value from memory, 4 significant digits).
 */
export const EARTH_POLAR_MOMENT_FACTOR = 0.3307;

/**
 * G J of the Earth, m^5 s^-3: J = C omega for rotation about the figure axis, so
 * G J = (C/(M a^2)) GM a^2 omega (no G needed), with GM and a from the IERS Conventions 2010,
 * Table 1.1, and omega the IERS nominal mean angular velocity. Gives J = G J / G = 5.859e33
 * kg m^2 s^-1 with CODATA 2018 G; Gravity Probe B used J = 5.86e33 kg m^2 s^-1 (Everitt et al.
 * 2011, Phys. Rev. Lett. 106, 221101; from memory).
 */
export const EARTH_GJ = EARTH_POLAR_MOMENT_FACTOR * GM_EARTH * R_EARTH * R_EARTH * OMEGA_EARTH;

export interface Vec3 {
  x: number;
  y: number;
  z: number;
}

function eccentricityCheck(e: number): number {
  requireFinite(e, 'e', '0 <= e < 1');
  if (!(e >= 0 && e < 1)) throw new PhysicsDomainError(`the eccentricity must satisfy 0 <= e < 1 (a bound orbit); got ${e}`, '0 <= e < 1', 'e');
  return e;
}

// ---------------------------------------------------------------------------
// Periastron advance

/** Orbital period of a test body, s: P = 2 pi sqrt(a^3/GM) (Kepler's third law), written 2 pi a sqrt(a/GM). */
export function keplerPeriod(gm: number, a: number): number {
  requirePositive(gm, 'GM');
  requirePositive(a, 'a');
  return 2 * Math.PI * a * Math.sqrt(a / gm); // s
}

/** PPN weight of the periastron advance, (2 + 2 gamma - beta)/3, dimensionless; 1 in GR (Will 2014, perihelion shift). */
export function ppnPeriastronFactor(gamma: number, beta: number): number {
  return (2 + 2 * gamma - beta) / 3;
}

/**
 * Periastron advance per orbit, rad, to first post-Newtonian order (test body, point-mass field):
 * Delta omega = 6 pi GM / (c^2 a (1 - e^2)) x (2 + 2 gamma - beta)/3
 * (Will 2014, Living Rev. Relativ. 17, 4, perihelion shift, J2 and preferred-frame terms dropped;
 * Einstein 1915 for gamma = beta = 1).
 */
export function periastronAdvancePerOrbit(gm: number, a: number, e: number, gamma = 1, beta = 1, c: number = C): number {
  requirePositive(gm, 'GM');
  requirePositive(a, 'a');
  eccentricityCheck(e);
  const p = a * (1 - e) * (1 + e); // semi-latus rectum a (1 - e^2), m
  return ((6 * Math.PI * (gm / (c * c))) / p) * ppnPeriastronFactor(gamma, beta); // rad per orbit
}

/** Mean periastron advance rate, rad s^-1: Delta omega per orbit / Kepler period (Will 2014). */
export function periastronAdvanceRate(gm: number, a: number, e: number, gamma = 1, beta = 1, c: number = C): number {
  return periastronAdvancePerOrbit(gm, a, e, gamma, beta, c) / keplerPeriod(gm, a); // rad/s
}

/**
 * Semi-latus rectum of the separatrix between bound and plunging geodesics of a Schwarzschild
 * field, in units of GM/c^2: p_s = 6 + 2e (Cutler, Kennefick & Poisson 1994, Phys. Rev. D 50,
 * 3816). No bound orbit of eccentricity e has p <= p_s.
 */
export function separatrixSemiLatusRectum(e: number): number {
  eccentricityCheck(e);
  return 6 + 2 * e; // GM/c^2
}

// ---------------------------------------------------------------------------
// Gyroscope precession on a circular orbit

/**
 * Geodetic (de Sitter) precession rate of a gyroscope on a circular orbit of radius r, rad s^-1:
 * Omega_geo = (gamma + 1/2) (GM)^{3/2} / (c^2 r^{5/2}), i.e. (3/2) (GM)^{3/2}/(c^2 r^{5/2}) x
 * (1 + 2 gamma)/3 (de Sitter 1916, MNRAS 77, 155; Schiff 1960, Phys. Rev. Lett. 4, 215; PPN form
 * Omega_G = (gamma + 1/2) v x grad U, Will 2014, gyroscope precession). Directed along the orbit
 * normal. Written (gamma + 1/2) (GM/(c^2 r)) sqrt(GM/r)/r so that no power overflows.
 */
export function geodeticRate(gm: number, r: number, gamma = 1, c: number = C): number {
  requirePositive(gm, 'GM');
  requirePositive(r, 'r');
  return (gamma + 0.5) * (gm / (c * c * r)) * (Math.sqrt(gm / r) / r); // rad/s
}

/**
 * Relative size below which a vector component is rounding residue and is set to 0: e.g.
 * cos(pi/2) = 6.1e-17 for an inclination of exactly 90 deg, or the drift of a spin that lies
 * exactly in the orbit plane. Keeps such components (and their derivatives) exactly zero.
 */
const ROUNDING = 1e-14;

function snap(x: number, scale: number): number {
  return Math.abs(x) <= ROUNDING * scale ? 0 : x;
}

/**
 * Unit normal of an orbit (direction of its angular momentum) in the body's equatorial frame,
 * L = (sin i sin Omega, -sin i cos Omega, cos i) (module header); components below 1e-14 are 0.
 */
export function orbitNormal(inclination: number, node: number): Vec3 {
  const s = Math.sin(inclination);
  return { x: snap(s * Math.sin(node), 1), y: snap(-s * Math.cos(node), 1), z: snap(Math.cos(inclination), 1) };
}

/**
 * Lense-Thirring rate scale G J_z/(c^2 r^3), rad s^-1, of a body whose angular momentum is given
 * as G J_z/c^2 (m^3 s^-1, signed: J = J_z z).
 */
export function lenseThirringScale(gjOverC2: number, r: number): number {
  requireFinite(gjOverC2, 'GJ/c^2', 'a finite G J/c^2');
  requirePositive(r, 'r');
  return gjOverC2 / r / r / r; // G J/(c^2 r^3), rad/s
}

/**
 * The same scale for a Kerr hole of spin a* = cJ/(GM^2) (Bardeen, Press & Teukolsky 1972):
 * G J/(c^2 r^3) = a* c (GM/(c^2 r))^2 / r, rad s^-1, written so that no power of GM overflows.
 */
export function lenseThirringScaleKerr(aStar: number, gm: number, r: number, c: number = C): number {
  requireFinite(aStar, 'a', '-1 <= a <= 1');
  requirePositive(gm, 'GM');
  requirePositive(r, 'r');
  const x = gm / (c * c) / r; // GM/(c^2 r)
  return (aStar * c * x * x) / r; // rad/s
}

/**
 * Orbit-averaged frame-dragging precession of a gyroscope on a circular orbit, rad s^-1, as a
 * vector in the body's equatorial frame. Schiff's instantaneous rate
 * Omega_LT = (G/(c^2 r^3)) [3 (J.n) n - J] (Schiff 1960, Phys. Rev. Lett. 4, 215; Everitt et al.
 * 2011, Phys. Rev. Lett. 106, 221101), averaged with <n n> = (1 - L L)/2 over a circular orbit of
 * normal L, gives <Omega_LT> = (G/(2 c^2 r^3)) [J - 3 (J.L) L]; PPN weight (1 + gamma)/2
 * (Will 2014: Omega_FD = -(1/2)(1 + gamma + alpha_1/4) curl g, alpha_1 = 0 here).
 *
 * `scale` is G J_z/(c^2 r^3) in rad s^-1 (lenseThirringScale, lenseThirringScaleKerr).
 */
export function frameDraggingAveraged(scale: number, inclination: number, node: number, gamma = 1): Vec3 {
  requireFinite(scale, 'GJ/(c^2 r^3)', 'a finite G J/(c^2 r^3)');
  const k = ((1 + gamma) / 2) * (scale / 2); // (1+gamma)/2 G J_z/(2 c^2 r^3), rad/s
  const L = orbitNormal(inclination, node);
  const cosI = L.z; // cos i = z . L
  // J - 3 (J.L) L = J_z (z - 3 cos i L)
  return { x: k * (-3 * cosI * L.x), y: k * (-3 * cosI * L.y), z: k * (1 - 3 * cosI * L.z) };
}

/**
 * Magnitude of the orbit-averaged frame-dragging precession, rad s^-1:
 * |<Omega_LT>| = (1 + gamma)/2 x G |J| / (2 c^2 r^3) x sqrt(1 + 3 cos^2 i)
 * (from |z - 3 cos i L|^2 = 1 - 6 cos^2 i + 9 cos^2 i; G J/(2 c^2 r^3) for a polar orbit,
 * G J/(c^2 r^3) for an equatorial one). `scale` as in frameDraggingAveraged.
 */
export function frameDraggingMagnitude(scale: number, inclination: number, gamma = 1): number {
  requireFinite(scale, 'GJ/(c^2 r^3)', 'a finite G J/(c^2 r^3)');
  const cosI = orbitNormal(inclination, 0).z; // cos i, as in frameDraggingAveraged
  return Math.abs(((1 + gamma) / 2) * (scale / 2)) * Math.sqrt(1 + 3 * cosI * cosI); // rad/s
}

/** Unit vector toward right ascension ra and declination dec in the body's equatorial frame. */
export function direction(ra: number, dec: number): Vec3 {
  const cd = Math.cos(dec);
  return { x: cd * Math.cos(ra), y: cd * Math.sin(ra), z: Math.sin(dec) };
}

export function cross(a: Vec3, b: Vec3): Vec3 {
  return { x: a.y * b.z - a.z * b.y, y: a.z * b.x - a.x * b.z, z: a.x * b.y - a.y * b.x };
}

export function norm(a: Vec3): number {
  return Math.hypot(a.x, a.y, a.z);
}

export interface SpinDrift {
  /** d(dec)/dt, rad s^-1 (positive toward the body's north pole, +z). */
  north: number;
  /** cos(dec) d(ra)/dt, rad s^-1 (positive toward increasing right ascension). */
  east: number;
  /** Angular speed of the spin direction on the sky, |Omega x s|, rad s^-1. */
  rate: number;
}

/**
 * Drift of a gyroscope's spin direction s (at ra, dec) under a precession vector Omega: ds/dt =
 * Omega x s (precession of a spin, Schiff 1960), resolved on the local north
 * e_N = (-sin dec cos ra, -sin dec sin ra, cos dec) and east e_E = (-sin ra, cos ra, 0) directions;
 * components below 1e-14 |Omega| are rounding residue and are set to 0.
 */
export function spinDrift(omega: Vec3, ra: number, dec: number): SpinDrift {
  const s = direction(ra, dec);
  const d = cross(omega, s);
  const sd = Math.sin(dec);
  const cr = Math.cos(ra);
  const sr = Math.sin(ra);
  const size = norm(omega);
  // components below 1e-14 |Omega| are rounding residue (e.g. a spin exactly in the orbit plane)
  const north = snap(-sd * cr * d.x - sd * sr * d.y + Math.cos(dec) * d.z, size);
  const east = snap(-sr * d.x + cr * d.y, size);
  return { north, east, rate: Math.hypot(north, east) };
}
