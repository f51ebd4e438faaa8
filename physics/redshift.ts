/**
 * Gravitational redshift of static and circularly orbiting emitters (Schwarzschild, Kerr,
 * weak field), forward and inverse.
 *
 * Units and conventions
 *   - Geometric units inside: radii r in r_g = GM/c^2 (Boyer–Lindquist r for Kerr), spin
 *     a = a* = cJ/(GM^2) with |a| <= 1, polar angle theta in radians, 0 <= theta <= pi.
 *   - Circular equatorial orbits take a *signed* spin relative to the orbit (a > 0: prograde).
 *   - Schwarzschild "height" inputs are x = (r - r_s)/r_s (dimensionless, r_s = 2GM/c^2), Kerr
 *     static "height" inputs are h = r - r_E(theta) in r_g (r_E: static limit). Passing the
 *     height instead of r keeps full relative precision arbitrarily close to the horizon /
 *     static limit (z up to ~1e150).
 *   - SI wrappers take gm = GM in m^3 s^-2, radii and heights in m, speeds in m/s, c in m/s
 *     (default: the exact SI value).
 *   - 1+z = nu_emitted / nu_received (received at rest at infinity, or by the named observer),
 *     g = 1/(1+z) = nu_received / nu_emitted. z is always computed directly (never as
 *     (1+z) - 1), so it keeps full relative precision also for z ~ 1e-10 (Sun, Earth).
 *
 * Numerical core: every observable here is a "lapse" g = dtau/dt of the emitter (its proper
 * time per unit coordinate time of a clock at rest at infinity), written as
 *     g^2 = n/d,   1 - g^2 = m/d,   with n, d, m >= 0
 * each evaluated without cancellation. Then g, 1+z, z = (1-g)/g, g - 1 and ln g all follow
 * without cancellation (see `evaluateLapse`). The inverse problems use the pair
 * (g^2, 1 - g^2), likewise computed without cancellation (`LapseTarget`).
 *
 * References
 *   MTW: C. W. Misner, K. S. Thorne & J. A. Wheeler 1973, "Gravitation" (Freeman):
 *        Schwarzschild geometry ch. 31, Kerr(–Newman) geometry in Boyer–Lindquist form ch. 33
 *        (chapter-level citations; equation numbers not quoted).
 *   BPT72: J. M. Bardeen, W. H. Press & S. A. Teukolsky 1972, ApJ 178, 347 (circular
 *        orbits, eqs. 2.12–2.16; photon orbit eq. 2.18; ISCO eq. 2.21).
 *   Einstein 1911, Ann. Phys. 35, 898 (weak-field redshift z ~ GM/(r c^2)).
 */
import { C } from './constants.js';
import { PhysicsDomainError, describeNumber, requireFinite, requirePositive } from './errors.js';
import { isco, photonOrbit } from './kerr.js';
import { brent, type BrentOptions } from './roots.js';

// ---------------------------------------------------------------------------
// Numerical core

/**
 * Squared lapse g^2 = n/d and its complement 1 - g^2 = m/d (dimensionless); n, d, m >= 0 each
 * computed without cancellation (common practice: carry 1 - g^2 alongside g^2).
 */
export interface LapseParts {
  readonly n: number;
  readonly d: number;
  readonly m: number;
}

/** Every form of one lapse value, each to full relative precision. */
export interface LapseValue {
  /** g = dtau/dt (dimensionless, 0 < g <= 1). */
  readonly g: number;
  /** g - 1 = -(1 - g^2)/(1 + g) (<= 0). */
  readonly gMinusOne: number;
  /** ln g (<= 0). */
  readonly lnG: number;
  /** 1/g = 1 + z = dt/dtau (>= 1). */
  readonly inverse: number;
  /** 1/g - 1 = z = (1 - g^2) / (g (1 + g)) (>= 0). */
  readonly inverseMinusOne: number;
}

/**
 * Evaluates g = sqrt(n/d) and its derived forms (algebraic identities, common practice):
 *   1/g - 1 = m / (sqrt(n) (sqrt(d) + sqrt(n))),  g - 1 = -(m/d)/(1 + g),
 *   ln g = log1p(-m/d)/2 when m/d <= 1/2, else ln(n/d)/2.
 * Square roots are taken separately so nothing overflows or underflows before it must.
 */
export function evaluateLapse(p: LapseParts): LapseValue {
  const sn = Math.sqrt(p.n);
  const sd = Math.sqrt(p.d);
  const g = sn / sd;
  const w = p.m / p.d; // 1 - g^2
  const gMinusOne = -w / (1 + g);
  let lnG: number;
  if (w <= 0.5) {
    lnG = 0.5 * Math.log1p(-w);
  } else {
    const ratio = p.n / p.d;
    lnG = ratio > 0 ? 0.5 * Math.log(ratio) : 0.5 * (Math.log(p.n) - Math.log(p.d));
  }
  return {
    g,
    gMinusOne,
    lnG,
    inverse: sd / sn,
    inverseMinusOne: p.m / (sd + sn) / sn,
  };
}

/**
 * Target value of a lapse for the inverse problems: g^2 and 1 - g^2 (dimensionless), both
 * computed without cancellation from whatever the caller gave (z, a rate, ...).
 */
export interface LapseTarget {
  /** g^2, in (0, 1). */
  readonly g2: number;
  /** 1 - g^2, in (0, 1). */
  readonly omg2: number;
}

/**
 * Lapse target for a redshift z > 0 of light received at infinity (1+z = 1/g):
 *   g^2 = (1/(1+z))^2,  1 - g^2 = z (2 + z)/(1+z)^2 = (z/(1+z)) ((2+z)/(1+z))   (algebra).
 * A static or circular emitter is never blueshifted at infinity, and z = 0 needs r = infinity:
 * z <= 0 is a domain error.
 */
export function lapseTargetFromRedshift(z: number): LapseTarget {
  const allowed = 'z > 0 (a static or orbiting emitter is always redshifted as seen from infinity; achievable range 0 < z < infinity, z -> 0 only as r -> infinity)';
  requireFinite(z, 'z', allowed);
  if (!(z > 0)) {
    throw new PhysicsDomainError(`no radius gives z = ${describeNumber(z)}: ${allowed}`, allowed, 'z');
  }
  const inv = 1 / (1 + z);
  const g2 = inv * inv;
  const omg2 = z * inv * ((2 + z) * inv);
  if (!(g2 > 0) || !(omg2 > 0)) {
    const range = 'z between ~1e-300 and ~1e150 (double-precision range of the result)';
    throw new PhysicsDomainError(`z = ${z} is outside the representable range: ${range}`, range, 'z');
  }
  return { g2, omg2 };
}

/** ln g of a lapse target (dimensionless, < 0), accurate in both limits. */
export function lnLapseTarget(t: LapseTarget): number {
  return t.omg2 <= 0.5 ? 0.5 * Math.log1p(-t.omg2) : 0.5 * Math.log(t.g2);
}

// ---------------------------------------------------------------------------
// Redshift results

/** A gravitational redshift (dimensionless). */
export interface Redshift {
  /** 1 + z = nu_emitted / nu_received = lambda_received / lambda_emitted. */
  readonly onePlusZ: number;
  /** z, computed directly (full relative precision for tiny z). */
  readonly z: number;
  /** g = 1/(1+z) = nu_received / nu_emitted. */
  readonly g: number;
  /** ln(1+z) = -ln g. */
  readonly lnOnePlusZ: number;
}

/** Redshift of a circularly orbiting emitter, with the orbit's stability. */
export interface CircularRedshift extends Redshift {
  /** True when r >= r_ISCO(a) (BPT72 eq. 2.21); orbits between the photon orbit and the ISCO are unstable. */
  readonly stable: boolean;
}

function redshiftOf(v: LapseValue): Redshift {
  return { onePlusZ: v.inverse, z: v.inverseMinusOne, g: v.g, lnOnePlusZ: -v.lnG };
}

// ---------------------------------------------------------------------------
// Validation helpers

function requireSpin(a: number, name = 'a'): number {
  const allowed = `-1 <= ${name} <= 1 (dimensionless spin cJ/(GM^2))`;
  requireFinite(a, name, allowed);
  if (a < -1 || a > 1) {
    throw new PhysicsDomainError(`${name} must satisfy ${allowed}; got ${describeNumber(a)}`, allowed, name);
  }
  return a;
}

function requireTheta(theta: number): number {
  const allowed = '0 <= theta <= pi (polar angle, radians)';
  requireFinite(theta, 'theta', allowed);
  if (theta < 0 || theta > Math.PI) {
    throw new PhysicsDomainError(`theta must satisfy ${allowed}; got ${describeNumber(theta)}`, allowed, 'theta');
  }
  return theta;
}

/** Speed of light argument check (m/s). */
export function requireC(c: number): number {
  return requirePositive(c, 'c', 'c > 0 (speed of light, m/s)');
}

// ---------------------------------------------------------------------------
// Static emitters: Schwarzschild

/**
 * Lapse of a static observer in Schwarzschild at x = (r - r_s)/r_s > 0:
 * g^2 = -g_tt = 1 - r_s/r = x/(1 + x)  (MTW ch. 31), so n = x, d = 1 + x, m = 1.
 */
export function staticSchwarzschildLapseHeight(x: number): LapseParts {
  const allowed = 'x = (r - r_s)/r_s > 0 (outside the horizon)';
  requireFinite(x, 'x', allowed);
  if (!(x > 0)) {
    throw new PhysicsDomainError(`a static emitter needs ${allowed}; got x = ${describeNumber(x)}`, allowed, 'x');
  }
  return { n: x, d: 1 + x, m: 1 };
}

/**
 * Redshift at infinity of a static emitter in Schwarzschild, from its height above the
 * horizon in units of r_s: x = (r - r_s)/r_s > 0 (dimensionless).
 *   1 + z = 1/sqrt(1 - r_s/r) = sqrt((1 + x)/x)   (MTW ch. 31; Einstein 1911).
 * z = 1/(x + sqrt(x (1 + x))) keeps full relative precision for every x > 0.
 */
export function staticRedshiftSchwarzschildHeight(x: number): Redshift {
  return redshiftOf(evaluateLapse(staticSchwarzschildLapseHeight(x)));
}

/**
 * Redshift at infinity of a static emitter in Schwarzschild at areal radius r > 2 (units GM/c^2):
 * 1 + z = 1/sqrt(1 - 2/r) (MTW ch. 31). Uses x = (r - 2)/2 (exact subtraction near r = 2, so
 * the only error is the one inherent to giving r rather than the height).
 */
export function staticRedshiftSchwarzschild(r: number): Redshift {
  const allowed = 'r > 2 GM/c^2 (outside the horizon r_s = 2 GM/c^2)';
  requireFinite(r, 'r', allowed);
  if (!(r > 2)) {
    throw new PhysicsDomainError(`a static emitter needs ${allowed}; got r = ${describeNumber(r)}`, allowed, 'r');
  }
  return staticRedshiftSchwarzschildHeight((r - 2) / 2);
}

// ---------------------------------------------------------------------------
// Static emitters: Kerr

/** sqrt(1 - a^2 cos^2 theta) = sqrt((1 - a)(1 + a) + (a sin theta)^2), free of cancellation. */
function staticLimitRoot(a: number, theta: number): number {
  const s = a * Math.sin(theta);
  return Math.sqrt((1 - a) * (1 + a) + s * s);
}

/**
 * Static limit (outer boundary of the ergoregion) of a Kerr hole, units GM/c^2:
 * r_E(theta) = 1 + sqrt(1 - a^2 cos^2 theta), the larger root of g_tt = 0 (MTW ch. 33 metric;
 * static limit: g_tt = 0). Equals the horizon on the axis and 2 on the equator.
 */
export function staticLimitRadius(a: number, theta: number): number {
  requireSpin(a);
  requireTheta(theta);
  return 1 + staticLimitRoot(a, theta);
}

/**
 * Lapse of a static observer (u proportional to d/dt) in Kerr at height h = r - r_E(theta) > 0
 * above the static limit (units GM/c^2):
 *   g^2 = -g_tt = 1 - 2r/Sigma,  Sigma = r^2 + a^2 cos^2 theta   (Boyer–Lindquist, MTW ch. 33)
 *       = (r - r_E+)(r - r_E-)/Sigma = h (h + 2 delta)/Sigma,  delta = sqrt(1 - a^2 cos^2 theta),
 *   1 - g^2 = 2r/Sigma   (algebra: r_E± = 1 ± delta).
 * Divided through by r^2 so nothing overflows: n = (h/r)((h + 2 delta)/r),
 * d = 1 + (a cos theta / r)^2, m = 2/r.
 */
export function staticKerrLapseHeight(h: number, a: number, theta: number): LapseParts {
  requireSpin(a);
  requireTheta(theta);
  const delta = staticLimitRoot(a, theta);
  const allowed = `h = r - r_E(theta) > 0 (outside the static limit r_E = ${1 + delta} GM/c^2; no static observer exists inside the ergosphere)`;
  requireFinite(h, 'h', allowed);
  if (!(h > 0)) {
    throw new PhysicsDomainError(`a static emitter needs ${allowed}; got h = ${describeNumber(h)}`, allowed, 'h');
  }
  const r = 1 + delta + h;
  const k = (a * Math.cos(theta)) / r;
  return { n: (h / r) * ((h + 2 * delta) / r), d: 1 + k * k, m: 2 / r };
}

/**
 * Redshift at infinity of a static emitter in Kerr at height h = r - r_E(theta) > 0 (units
 * GM/c^2) above the static limit, polar angle theta, spin a (|a| <= 1):
 *   1 + z = 1/sqrt(-g_tt) = 1/sqrt(1 - 2r/Sigma)   (Boyer–Lindquist metric, MTW ch. 33).
 */
export function staticRedshiftKerrHeight(h: number, a: number, theta: number): Redshift {
  return redshiftOf(evaluateLapse(staticKerrLapseHeight(h, a, theta)));
}

/**
 * Same as `staticRedshiftKerrHeight` from the Boyer–Lindquist radius r (units GM/c^2); r must
 * lie outside the static limit r_E(theta), else PhysicsDomainError (inside the ergosphere no
 * observer can stay static).
 */
export function staticRedshiftKerr(r: number, a: number, theta: number): Redshift {
  return redshiftOf(evaluateLapse(staticKerrLapse(r, a, theta)));
}

/** Lapse of a static Kerr observer at Boyer–Lindquist radius r (units GM/c^2); see `staticKerrLapseHeight`. */
export function staticKerrLapse(r: number, a: number, theta: number): LapseParts {
  const rE = staticLimitRadius(a, theta);
  const allowed = `r > r_E(theta) = ${rE} GM/c^2 (outside the static limit; no static observer exists inside the ergosphere)`;
  requireFinite(r, 'r', allowed);
  if (!(r > rE)) {
    throw new PhysicsDomainError(`a static emitter needs ${allowed}; got r = ${describeNumber(r)}`, allowed, 'r');
  }
  return staticKerrLapseHeight(r - rE, a, theta);
}

// ---------------------------------------------------------------------------
// Circular equatorial orbits (Kerr, signed spin)

/**
 * Lapse 1/u^t of a circular equatorial geodesic at Boyer–Lindquist radius r (units GM/c^2),
 * signed spin a relative to the orbit:
 *   u^t = (r^{3/2} + a) / (r^{3/4} sqrt(r^{3/2} - 3 r^{1/2} + 2a))   (BPT72 §II, cf. eqs. 2.12–2.16),
 *   so g^2 = 1/(u^t)^2 = 1 - (3r^2 + a^2)/(r^{3/2} + a)^2   (algebra).
 * With s = sqrt(r) and t = a/r^{3/2} (divided through by r^3): d = (1 + t)^2,
 * m = 3/r + a^2/r^3 (both sums of non-negative terms, or 1 + t >= 1 - 1/sqrt(27) for a < 0),
 * n = d - m when m <= d/2 (weak field); otherwise (near the photon orbit) the product form
 * n = D/r^{3/2}, D = r^{3/2} - 3 r^{1/2} + 2a = (s - 1)^2 (s + 2) - 2(1 - a), whose relative
 * error there is the one inherent to r.
 * Throws PhysicsDomainError unless r > r_ph(a) (BPT72 eq. 2.18).
 */
export function circularOrbitLapse(r: number, a: number): LapseParts & { stable: boolean } {
  requireSpin(a);
  const rPh = photonOrbit(a);
  const allowed = `r > r_ph(a) = ${rPh} GM/c^2 (outside the circular photon orbit, BPT72 eq. 2.18)`;
  requireFinite(r, 'r', allowed);
  const lapse = circularOrbitLapseUnchecked(r, a);
  if (!(r > rPh) || lapse === undefined) {
    throw new PhysicsDomainError(`no timelike circular orbit: need ${allowed}; got r = ${describeNumber(r)}`, allowed, 'r');
  }
  return { ...lapse, stable: r >= isco(a) };
}

/** As `circularOrbitLapse` without validation; undefined where the orbit is not timelike. */
function circularOrbitLapseUnchecked(r: number, a: number): LapseParts | undefined {
  const s = Math.sqrt(r);
  const r32 = r * s;
  const t = a / r32;
  const ar = a / r;
  const d = (1 + t) * (1 + t);
  const m = 3 / r + (ar * ar) / r;
  let n: number;
  if (m <= 0.5 * d) {
    n = d - m;
  } else {
    const sMinus1 = (r - 1) / (s + 1);
    const D = sMinus1 * sMinus1 * (s + 2) - 2 * (1 - a);
    n = D / r32;
  }
  return n > 0 && 1 + t > 0 ? { n, d, m } : undefined;
}

/**
 * Redshift at infinity of an emitter on a circular equatorial geodesic (Kerr, r in GM/c^2,
 * signed spin a, a > 0 prograde), for photons of zero axial angular momentum (e.g. a face-on
 * observer): 1 + z = u^t (BPT72 §II; includes the transverse Doppler shift).
 * Domain: r > r_ph(a); orbits with r_ph < r < r_ISCO are returned with stable = false.
 */
export function circularOrbitRedshift(r: number, a: number): CircularRedshift {
  const lapse = circularOrbitLapse(r, a);
  return { ...redshiftOf(evaluateLapse(lapse)), stable: lapse.stable };
}

// ---------------------------------------------------------------------------
// Weak field / SI

/**
 * Lapse of a static observer at Newtonian-normalised potential phi = GM/(r c^2) in
 * Schwarzschild (areal radius r): g^2 = 1 - 2 phi (MTW ch. 31), n = 1 - 2 phi, d = 1, m = 2 phi.
 * Exact, and free of cancellation for the weak fields of the Earth or Sun (phi ~ 1e-9..1e-6).
 */
export function staticPotentialLapse(phi: number): LapseParts {
  const allowed = '0 <= phi = GM/(r c^2) < 1/2 (outside the horizon)';
  requireFinite(phi, 'phi', allowed);
  if (!(phi >= 0 && phi < 0.5)) {
    throw new PhysicsDomainError(`phi must satisfy ${allowed}; got ${describeNumber(phi)}`, allowed, 'phi');
  }
  return { n: 1 - 2 * phi, d: 1, m: 2 * phi };
}

/**
 * Redshift at infinity of a static emitter at potential phi = GM/(r c^2) (dimensionless):
 * 1 + z = 1/sqrt(1 - 2 phi) (Schwarzschild, MTW ch. 31); z = phi + (3/2) phi^2 + ... reduces
 * to Einstein's (1911) z = GM/(r c^2) at first order. z keeps full precision for phi ~ 1e-10.
 */
export function staticRedshiftPotential(phi: number): Redshift {
  return redshiftOf(evaluateLapse(staticPotentialLapse(phi)));
}

/** phi = GM/(r c^2) (dimensionless) from gm (m^3 s^-2), r (m), c (m/s), all validated. */
export function potentialSI(gm: number, r: number, c: number = C): number {
  requirePositive(gm, 'gm', 'gm = GM > 0 (m^3 s^-2)');
  requirePositive(r, 'r', 'r > 0 (m)');
  requireC(c);
  return gm / c / c / r;
}

/**
 * Redshift at infinity of a static emitter at areal radius r (m) from a spherical body of
 * gravitational parameter gm = GM (m^3 s^-2), exact Schwarzschild: 1 + z = 1/sqrt(1 - 2GM/(r c^2))
 * (MTW ch. 31). For r > r_s only (PhysicsDomainError otherwise).
 */
export function staticRedshiftSI(gm: number, r: number, c: number = C): Redshift {
  const phi = potentialSI(gm, r, c);
  if (!(phi < 0.5)) {
    const rs = (2 * gm) / c / c;
    const allowed = `r > r_s = 2GM/c^2 = ${rs} m`;
    throw new PhysicsDomainError(`a static emitter needs ${allowed}; got r = ${r} m`, allowed, 'r');
  }
  return staticRedshiftPotential(phi);
}

/** Schwarzschild radius r_s = 2GM/c^2 (m) for gm in m^3 s^-2 and c in m/s (MTW ch. 31). */
export function schwarzschildRadiusSI(gm: number, c: number = C): number {
  requirePositive(gm, 'gm', 'gm = GM > 0 (m^3 s^-2)');
  requireC(c);
  return (2 * gm) / c / c;
}

/**
 * Redshift at infinity of a static emitter `height` metres above the horizon of a
 * Schwarzschild hole (gm in m^3 s^-2): x = height / r_s, 1 + z = sqrt((1 + x)/x) (MTW ch. 31).
 */
export function staticRedshiftAboveHorizonSI(gm: number, height: number, c: number = C): Redshift {
  const rs = schwarzschildRadiusSI(gm, c);
  requirePositive(height, 'height', 'height > 0 (m above the horizon)');
  return staticRedshiftSchwarzschildHeight(height / rs);
}

// ---------------------------------------------------------------------------
// Observables -> z

/** z from observed and rest-frame wavelengths (same unit): z = (lambda_obs - lambda_rest)/lambda_rest (definition). */
export function redshiftFromWavelengths(observed: number, rest: number): number {
  requirePositive(observed, 'observed', 'observed wavelength > 0');
  requirePositive(rest, 'rest', 'rest wavelength > 0');
  return (observed - rest) / rest;
}

/** z from observed and rest-frame frequencies (same unit): z = (nu_rest - nu_obs)/nu_obs (definition). */
export function redshiftFromFrequencies(observed: number, rest: number): number {
  requirePositive(observed, 'observed', 'observed frequency > 0');
  requirePositive(rest, 'rest', 'rest frequency > 0');
  return (rest - observed) / observed;
}

/**
 * z from a redshift quoted as a velocity v = c z (m/s), the convention of white-dwarf
 * gravitational-redshift measurements (e.g. Barstow et al. 2005, MNRAS 362, 1134): z = v/c.
 */
export function redshiftFromVelocity(v: number, c: number = C): number {
  requireFinite(v, 'v', 'finite velocity (m/s)');
  requireC(c);
  return v / c;
}

// ---------------------------------------------------------------------------
// Inverse problems

/** Position of a static Schwarzschild observer: height and radius. */
export interface SchwarzschildPosition {
  /** x = (r - r_s)/r_s (dimensionless height above the horizon). */
  readonly x: number;
  /** r / r_s. */
  readonly rOverRs: number;
  /** r in GM/c^2 (= 2 r/r_s). */
  readonly r: number;
}

/**
 * Static Schwarzschild observer with a given lapse: from g^2 = x/(1+x) (MTW ch. 31),
 *   x = g^2/(1 - g^2),  r/r_s = 1/(1 - g^2).
 */
export function staticSchwarzschildPositionForLapse(t: LapseTarget): SchwarzschildPosition {
  const rOverRs = 1 / t.omg2;
  return { x: t.g2 / t.omg2, rOverRs, r: 2 * rOverRs };
}

/**
 * Where a static Schwarzschild emitter has redshift z > 0:
 *   r/r_s = 1/(1 - (1+z)^-2),  x = r/r_s - 1 = 1/((1+z)^2 - 1) = 1/(z (2 + z))   (MTW ch. 31).
 * Full relative precision for every z (also z >= 1e6, where x ~ 1/z^2).
 */
export function staticSchwarzschildPositionFromRedshift(z: number): SchwarzschildPosition {
  const t = lapseTargetFromRedshift(z);
  return { ...staticSchwarzschildPositionForLapse(t), x: 1 / z / (2 + z) };
}

/** Position of a static Kerr observer. */
export interface KerrStaticPosition {
  /** h = r - r_E(theta), height above the static limit, GM/c^2. */
  readonly h: number;
  /** Boyer–Lindquist r, GM/c^2. */
  readonly r: number;
}

/**
 * Static Kerr observer at polar angle theta with a given lapse g. From 1 - 2r/Sigma = g^2
 * (MTW ch. 33): q r^2 - 2r + q k^2 = 0 with q = 1 - g^2, k = a cos theta; the outer root is
 *   r = (1 + sqrt(1 - q^2 k^2))/q.
 * Height above r_E = 1 + delta (delta = sqrt(1 - k^2)) without cancellation (algebra):
 *   h = (g^2/q) [1 + (1 + q)/(D1 + q delta)],  D1 = sqrt(1 - q^2 k^2) = sqrt(g^2 (1 + q) + (q delta)^2).
 */
export function staticKerrPositionForLapse(t: LapseTarget, a: number, theta: number): KerrStaticPosition {
  requireSpin(a);
  requireTheta(theta);
  const delta = staticLimitRoot(a, theta);
  const q = t.omg2;
  const qd = q * delta;
  const d1 = Math.sqrt(t.g2 * (1 + q) + qd * qd);
  const h = (t.g2 / q) * (1 + (1 + q) / (d1 + qd));
  return { h, r: 1 + delta + h };
}

/** Where a static Kerr emitter at polar angle theta has redshift z > 0 (see `staticKerrPositionForLapse`). */
export function staticKerrPositionFromRedshift(z: number, a: number, theta: number): KerrStaticPosition {
  return staticKerrPositionForLapse(lapseTargetFromRedshift(z), a, theta);
}

/** Circular orbit found by the inverse problem. */
export interface CircularOrbitSolution {
  /** Boyer–Lindquist r, GM/c^2. */
  readonly r: number;
  /** r >= r_ISCO(a) (BPT72 eq. 2.21). */
  readonly stable: boolean;
  /** Brent iterations used. */
  readonly iterations: number;
}

/**
 * Circular equatorial orbit (signed spin a) whose lapse 1/u^t equals the target. 1/u^t rises
 * monotonically from 0 at the photon orbit to 1 at infinity (d/ds of (3s^4 + a^2)/(s^3 + a)^2 is
 * -6 s^2 (s^4 - 2 a s + a^2)/(s^3 + a)^3 <= 0 for s = sqrt(r) >= 1), so the root is unique and is
 * found by Brent's method on ln(1/u^t) - ln g_target.
 * Bracket (derived from the physics): above, r_hi = max(16, 4/(1 - g^2)), where
 * (3r^2 + a^2)/(r^{3/2} + a)^2 <= 4/r <= 1 - g^2 for every |a| <= 1; below, r_ph + delta with
 * delta = 1, 1/16, 1/256, ... until the lapse falls below the target (it -> 0 at r_ph).
 */
export function circularOrbitRadiusForLapse(t: LapseTarget, a: number, options: BrentOptions = {}): CircularOrbitSolution {
  requireSpin(a);
  const rPh = photonOrbit(a);
  const target = lnLapseTarget(t);
  const f = (r: number): number => {
    const lapse = circularOrbitLapseUnchecked(r, a);
    return lapse === undefined ? Number.NEGATIVE_INFINITY : evaluateLapse(lapse).lnG - target;
  };

  let hi = Math.max(16, 4 / t.omg2);
  if (!Number.isFinite(hi)) {
    const range = 'a lapse 1 - g^2 >= ~1e-307 (the radius must be a finite double)';
    throw new PhysicsDomainError(`the orbit radius is beyond the double range: ${range}`, range);
  }
  let delta = 1;
  let lo = rPh + delta;
  let flo = f(lo);
  while (flo >= 0) {
    hi = lo;
    delta /= 16;
    lo = rPh + delta;
    if (lo === rPh) {
      const range = 'targets resolvable in double precision: the orbit must be at least one ulp outside the photon orbit';
      throw new PhysicsDomainError(
        `the requested shift needs an orbit closer to the photon orbit r_ph = ${rPh} GM/c^2 than double precision can represent`,
        range,
      );
    }
    flo = f(lo);
  }
  if (flo === Number.NEGATIVE_INFINITY) {
    const range = 'targets resolvable in double precision: the orbit must be at least one ulp outside the photon orbit';
    throw new PhysicsDomainError(
      `the requested shift needs an orbit too close to the photon orbit r_ph = ${rPh} GM/c^2 to resolve in double precision`,
      range,
    );
  }
  const sol = brent(f, lo, hi, options);
  return { r: sol.root, stable: sol.root >= isco(a), iterations: sol.iterations };
}

/**
 * Circular equatorial orbit (signed spin a) whose emitter shows redshift z > 0 to a face-on
 * observer at infinity (1 + z = u^t, BPT72 §II). Every z > 0 is reachable: z -> infinity at
 * the photon orbit, z -> 0 at infinity. Unstable solutions (inside the ISCO) are flagged.
 */
export function circularOrbitRadiusFromRedshift(z: number, a: number, options: BrentOptions = {}): CircularOrbitSolution {
  return circularOrbitRadiusForLapse(lapseTargetFromRedshift(z), a, options);
}

/**
 * Gravitational parameter GM (m^3 s^-2) of a spherical body whose surface at areal radius r (m)
 * shows gravitational redshift z > 0 (exact Schwarzschild, MTW ch. 31):
 *   GM = r c^2 (1 - (1+z)^-2)/2 = r c^2 z (2 + z) / (2 (1+z)^2)   (no cancellation for small z).
 * To first order GM = r c^2 z (Einstein 1911), the relation used for white dwarfs.
 */
export function gmFromRedshiftSI(r: number, z: number, c: number = C): number {
  requirePositive(r, 'r', 'r > 0 (m)');
  requireC(c);
  const t = lapseTargetFromRedshift(z);
  return (r * c * c * t.omg2) / 2;
}

/** Static Schwarzschild position in metres. */
export interface StaticPositionSI {
  /** Areal radius, m. */
  readonly r: number;
  /** Height above the horizon r - r_s, m. */
  readonly height: number;
}

/** Static position (m) in the field of gm (m^3 s^-2) with a given lapse: r = r_s/(1 - g^2), r - r_s = r_s g^2/(1 - g^2). */
export function staticPositionForLapseSI(gm: number, t: LapseTarget, c: number = C): StaticPositionSI {
  const rs = schwarzschildRadiusSI(gm, c);
  const p = staticSchwarzschildPositionForLapse(t);
  return { r: rs * p.rOverRs, height: rs * p.x };
}

/**
 * Areal radius (m) at which a static emitter around gm (m^3 s^-2) shows redshift z > 0:
 * r = r_s/(1 - (1+z)^-2), height above the horizon r_s/(z (2 + z)) (MTW ch. 31).
 */
export function staticPositionFromRedshiftSI(gm: number, z: number, c: number = C): StaticPositionSI {
  const rs = schwarzschildRadiusSI(gm, c);
  const p = staticSchwarzschildPositionFromRedshift(z);
  return { r: rs * p.rOverRs, height: rs * p.x };
}
