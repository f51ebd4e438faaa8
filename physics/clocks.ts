/**
 * Clock rates in gravitational fields: static, orbiting and moving clocks (Schwarzschild,
 * Kerr, weak field), fractional offsets between clocks, the geoid (TT) reference, the GPS
 * eccentricity correction, and the inverse problems (where does a clock run at a given rate).
 *
 * Conventions
 *   - `rate` = dtau/dt: proper time of the clock per unit coordinate time t, i.e. relative to
 *     a clock at rest at infinity (for the Earth-only field: relative to TCG). `dilation` =
 *     dt/dtau = 1/rate.
 *   - The fractional offset of clock A against clock B is rate_A/rate_B - 1 (> 0 when A runs
 *     fast), computed as expm1(ln rate_A - ln rate_B).
 *   - rate - 1 and ln(rate) are primary results, computed without cancellation, so the
 *     ~1e-10 offsets of the Earth's field keep full relative precision.
 *   - Geometric units inside (r in GM/c^2, signed spin for circular orbits, a > 0 prograde);
 *     SI wrappers take gm = GM (m^3 s^-2), r (m), v (m/s), c (m/s, default exact SI).
 *
 * The lapse core (g^2 = n/d, 1 - g^2 = m/d) is shared with ./redshift.ts.
 *
 * References
 *   MTW: Misner, Thorne & Wheeler 1973, "Gravitation", ch. 31 (Schwarzschild), ch. 33 (Kerr).
 *   BPT72: Bardeen, Press & Teukolsky 1972, ApJ 178, 347 (circular orbits).
 *   IERS Conventions 2010 (IERS Technical Note 36, Petit & Luzum eds.), ch. 10; IAU 2000
 *     Resolution B1.9 (L_G, defining constant: dTT/dTCG = 1 - L_G).
 *   IS-GPS-200 (GPS interface specification), §20.3.3.3.3.1 (relativistic correction
 *     Delta t_r = F e sqrt(A) sin E_k, F = -2 sqrt(mu)/c^2).
 *   N. Ashby 2003, Living Rev. Relativity 6, 1 (weak-field clock rates, GPS).
 */
import { C, L_G } from './constants.js';
import { PhysicsDomainError, describeNumber, requireFinite, requirePositive } from './errors.js';
import {
  type CircularOrbitSolution,
  type KerrStaticPosition,
  type LapseParts,
  type LapseTarget,
  type LapseValue,
  type SchwarzschildPosition,
  type StaticPositionSI,
  circularOrbitLapse,
  circularOrbitRadiusForLapse,
  evaluateLapse,
  lapseTargetFromRedshift,
  potentialSI,
  requireC,
  staticKerrLapse,
  staticKerrLapseHeight,
  staticKerrPositionForLapse,
  staticPositionForLapseSI,
  staticPotentialLapse,
  staticSchwarzschildLapseHeight,
  staticSchwarzschildPositionForLapse,
} from './redshift.js';
import type { BrentOptions } from './roots.js';

// ---------------------------------------------------------------------------
// Results

/** Rate of a clock against coordinate time t (a clock at rest at infinity); dimensionless. */
export interface ClockRate {
  /** dtau/dt, in (0, 1]. */
  readonly rate: number;
  /** dtau/dt - 1 (<= 0), full relative precision. */
  readonly rateMinusOne: number;
  /** ln(dtau/dt) (<= 0). */
  readonly lnRate: number;
  /** dt/dtau = 1/rate (>= 1). */
  readonly dilation: number;
  /** dt/dtau - 1 (>= 0), full relative precision. */
  readonly dilationMinusOne: number;
}

/** Rate of a clock on a circular orbit, with the orbit's stability (r >= r_ISCO). */
export interface OrbitClockRate extends ClockRate {
  readonly stable: boolean;
}

function clockOf(v: LapseValue): ClockRate {
  return {
    rate: v.g,
    rateMinusOne: v.gMinusOne,
    lnRate: v.lnG,
    dilation: v.inverse,
    dilationMinusOne: v.inverseMinusOne,
  };
}

/** Clock rate from lapse parts (see ./redshift.ts `LapseParts`). */
export function clockRateFromLapse(p: LapseParts): ClockRate {
  return clockOf(evaluateLapse(p));
}

// ---------------------------------------------------------------------------
// Static clocks

/**
 * Static clock in Schwarzschild at x = (r - r_s)/r_s > 0 (dimensionless height above the
 * horizon): rate = sqrt(1 - r_s/r) = sqrt(x/(1 + x)) (MTW ch. 31).
 */
export function staticClockSchwarzschildHeight(x: number): ClockRate {
  return clockRateFromLapse(staticSchwarzschildLapseHeight(x));
}

/** Static clock in Schwarzschild at r > 2 (GM/c^2): rate = sqrt(1 - 2/r) (MTW ch. 31). */
export function staticClockSchwarzschild(r: number): ClockRate {
  const allowed = 'r > 2 GM/c^2 (outside the horizon)';
  requireFinite(r, 'r', allowed);
  if (!(r > 2)) {
    throw new PhysicsDomainError(`a static clock needs ${allowed}; got r = ${describeNumber(r)}`, allowed, 'r');
  }
  return staticClockSchwarzschildHeight((r - 2) / 2);
}

/**
 * Static clock in Kerr at height h = r - r_E(theta) > 0 (GM/c^2) above the static limit:
 * rate = sqrt(-g_tt) = sqrt(1 - 2r/Sigma) (Boyer–Lindquist, MTW ch. 33).
 */
export function staticClockKerrHeight(h: number, a: number, theta: number): ClockRate {
  return clockRateFromLapse(staticKerrLapseHeight(h, a, theta));
}

/** Static clock in Kerr at Boyer–Lindquist r (GM/c^2) outside the static limit (MTW ch. 33). */
export function staticClockKerr(r: number, a: number, theta: number): ClockRate {
  return clockRateFromLapse(staticKerrLapse(r, a, theta));
}

/**
 * Static clock at areal radius r (m) outside a spherical body of gravitational parameter gm
 * (m^3 s^-2): rate = sqrt(1 - 2GM/(r c^2)) (exact Schwarzschild exterior, MTW ch. 31). With
 * phi = GM/(r c^2): rate - 1 = -2 phi/(1 + rate), no cancellation.
 */
export function staticClockSI(gm: number, r: number, c: number = C): ClockRate {
  const phi = potentialSI(gm, r, c);
  if (!(phi < 0.5)) {
    const allowed = `r > r_s = 2GM/c^2 = ${(2 * gm) / c / c} m`;
    throw new PhysicsDomainError(`a static clock needs ${allowed}; got r = ${r} m`, allowed, 'r');
  }
  return clockRateFromLapse(staticPotentialLapse(phi));
}

// ---------------------------------------------------------------------------
// Orbiting and moving clocks

/**
 * Clock on a circular equatorial geodesic (Kerr, r in GM/c^2, signed spin a, a > 0 prograde):
 * rate = 1/u^t = r^{3/4} sqrt(r^{3/2} - 3 r^{1/2} + 2a) / (r^{3/2} + a) (BPT72 §II).
 * Domain r > r_ph(a); stable = (r >= r_ISCO(a)).
 */
export function circularOrbitClock(r: number, a: number): OrbitClockRate {
  const lapse = circularOrbitLapse(r, a);
  return { ...clockRateFromLapse(lapse), stable: lapse.stable };
}

/**
 * Clock on a circular geodesic orbit of areal radius r (m) around a spherical body (exact
 * Schwarzschild, a = 0 case of BPT72): rate = sqrt(1 - 3 GM/(r c^2)), n = 1 - 3 phi, m = 3 phi.
 * Domain r > 3GM/c^2 (photon orbit); stable = (r >= 6GM/c^2). The orbital speed is implied
 * (v^2 = GM/r in the weak field), so for the Earth this is the GPS-style circular-orbit clock.
 */
export function circularOrbitClockSI(gm: number, r: number, c: number = C): OrbitClockRate {
  const phi = potentialSI(gm, r, c);
  if (!(phi < 1 / 3)) {
    const allowed = `r > 3GM/c^2 = ${(3 * gm) / c / c} m (outside the photon orbit)`;
    throw new PhysicsDomainError(`no timelike circular orbit: need ${allowed}; got r = ${r} m`, allowed, 'r');
  }
  return { ...clockRateFromLapse({ n: 1 - 3 * phi, d: 1, m: 3 * phi }), stable: phi <= 1 / 6 };
}

function requireBeta(beta: number): number {
  const allowed = '0 <= |beta| < 1 (local speed v/c measured by a static observer)';
  requireFinite(beta, 'beta', allowed);
  if (!(Math.abs(beta) < 1)) {
    throw new PhysicsDomainError(`beta must satisfy ${allowed}; got ${describeNumber(beta)}`, allowed, 'beta');
  }
  return Math.abs(beta);
}

/**
 * Lapse of a clock moving with speed beta = v/c relative to the local static observer, in
 * Schwarzschild at x = (r - r_s)/r_s: rate = sqrt(1 - r_s/r) sqrt(1 - beta^2)
 * (static lapse, MTW ch. 31, times the special-relativistic factor measured locally):
 *   n = (x/(1+x)) (1 - beta)(1 + beta),  d = 1,  m = beta^2 + (1/(1+x)) (1 - beta)(1 + beta)  (algebra).
 */
function movingLapseHeight(x: number, beta: number): LapseParts {
  const b = requireBeta(beta);
  const base = staticSchwarzschildLapseHeight(x);
  const sr = (1 - b) * (1 + b);
  return { n: (base.n / base.d) * sr, d: 1, m: b * b + sr / base.d };
}

/**
 * Clock moving with local speed beta = v/c (relative to static observers) at x = (r - r_s)/r_s
 * in Schwarzschild: rate = sqrt(1 - r_s/r) sqrt(1 - beta^2) (MTW ch. 31 + special relativity).
 */
export function movingClockSchwarzschildHeight(x: number, beta: number): ClockRate {
  return clockRateFromLapse(movingLapseHeight(x, beta));
}

/** As `movingClockSchwarzschildHeight` at areal radius r > 2 (GM/c^2). */
export function movingClockSchwarzschild(r: number, beta: number): ClockRate {
  const allowed = 'r > 2 GM/c^2 (outside the horizon)';
  requireFinite(r, 'r', allowed);
  if (!(r > 2)) {
    throw new PhysicsDomainError(`a clock needs ${allowed}; got r = ${describeNumber(r)}`, allowed, 'r');
  }
  return movingClockSchwarzschildHeight((r - 2) / 2, beta);
}

/**
 * Clock at areal radius r (m) around gm (m^3 s^-2) moving at local speed v (m/s, relative to the
 * static observer there): rate = sqrt(1 - 2 phi) sqrt(1 - v^2/c^2), phi = GM/(r c^2), with
 *   1 - rate^2 = beta^2 + 2 phi (1 - beta^2)  (algebra, no cancellation).
 * Weak-field use (Earth): v is then, to O(phi beta^2) ~ 1e-19, the speed in the non-rotating
 * geocentric frame, and the rate is against TCG for an Earth-only (spherical) potential.
 */
export function movingClockSI(gm: number, r: number, v: number, c: number = C): ClockRate {
  const phi = potentialSI(gm, r, c);
  requireFinite(v, 'v', '|v| < c (m/s)');
  const b = requireBeta(v / c);
  if (!(phi < 0.5)) {
    const allowed = `r > r_s = 2GM/c^2 = ${(2 * gm) / c / c} m`;
    throw new PhysicsDomainError(`a clock needs ${allowed}; got r = ${r} m`, allowed, 'r');
  }
  // 1 - beta^2 = (c - |v|)(c + |v|)/c^2: c - |v| is exact for |v| near c (Sterbenz), so speeds
  // close to c keep the precision of v itself (1 - v/c would lose it).
  const speed = Math.abs(v);
  const sr = ((c - speed) / c) * ((c + speed) / c);
  return clockRateFromLapse({ n: (1 - 2 * phi) * sr, d: 1, m: b * b + 2 * phi * sr });
}

/**
 * First-order (weak-field, slow-motion) clock offset against coordinate time:
 *   rate - 1 ~ -GM/(r c^2) - v^2/(2 c^2)
 * (IERS Conventions 2010 ch. 10; Ashby 2003; error O(phi^2, beta^4, phi beta^2),
 * ~1e-19 for the Earth). `movingClockSI` is the exact Schwarzschild counterpart.
 */
export function weakFieldRateMinusOne(gm: number, r: number, v: number, c: number = C): number {
  const phi = potentialSI(gm, r, c);
  requireFinite(v, 'v', 'finite speed (m/s)');
  const beta = v / c;
  return -phi - 0.5 * beta * beta;
}

// ---------------------------------------------------------------------------
// Comparing clocks

/** Anything with a natural-log clock rate (a `ClockRate`, or a reference built by hand). */
export interface HasLnRate {
  readonly lnRate: number;
}

/**
 * Fractional offset of clock A against clock B, rate_A/rate_B - 1 = expm1(ln rate_A - ln rate_B)
 * (dimensionless; > 0 when A runs fast). Common practice: the logarithms carry the tiny
 * offsets (~1e-10) with absolute error ~1e-26, so the difference keeps its precision.
 */
export function fractionalOffset(clockA: HasLnRate, clockB: HasLnRate): number {
  return Math.expm1(clockA.lnRate - clockB.lnRate);
}

/** ln of the geoid (TT) clock rate against TCG: ln(1 - L_G) (IAU 2000 Res. B1.9: dTT/dTCG = 1 - L_G). */
export function geoidLnRate(lG: number = L_G): number {
  requireFinite(lG, 'lG', '0 <= L_G < 1');
  if (!(lG >= 0 && lG < 1)) {
    throw new PhysicsDomainError(`L_G must satisfy 0 <= L_G < 1; got ${lG}`, '0 <= L_G < 1', 'lG');
  }
  return Math.log1p(-lG);
}

/**
 * Fractional offset of a clock against clocks on the geoid (TT), rate_A/(1 - L_G) - 1
 * (IAU 2000 Res. B1.9; IERS Conventions 2010 ch. 10: dTT/dTCG = 1 - L_G, L_G = 6.969290134e-10
 * defining). `clock.rate` must be against TCG, i.e. computed in the Earth's field with the
 * clock at infinity as reference (e.g. `movingClockSI` / `circularOrbitClockSI` with the Earth's
 * GM). Approximation: Earth-only potential (spherical, no J2, tides or Sun/Moon), and the
 * Earth's rotation only insofar as the clock's speed in the non-rotating geocentric frame is
 * included in its rate; the geoid itself enters only through L_G.
 */
export function fractionalOffsetAgainstGeoid(clock: HasLnRate, lG: number = L_G): number {
  return Math.expm1(clock.lnRate - geoidLnRate(lG));
}

/**
 * Fractional offset of a static clock `height` metres above a static clock at areal radius
 * rLower (m), around gm (m^3 s^-2), exact Schwarzschild (MTW ch. 31): with
 * u = 2 (phi_lower - phi_upper)/(1 - 2 phi_lower), phi_lower - phi_upper = GM h/(r (r + h) c^2),
 *   rate_upper/rate_lower - 1 = sqrt(1 + u) - 1 = u/(1 + sqrt(1 + u))   (algebra, no cancellation).
 * To first order g h/c^2 with g = GM/r^2 (the Pound–Rebka shift). Negative height: upper below.
 */
export function staticClockOffsetSI(gm: number, rLower: number, height: number, c: number = C): number {
  const phiLower = potentialSI(gm, rLower, c);
  requireFinite(height, 'height', 'finite height (m)');
  const rUpper = rLower + height;
  const rs = (2 * gm) / c / c;
  const allowed = `both clocks outside r_s = 2GM/c^2 = ${rs} m`;
  if (!(phiLower < 0.5) || !(rUpper * c * c > 2 * gm)) {
    throw new PhysicsDomainError(`static clocks need ${allowed}`, allowed, 'height');
  }
  const dPhi = ((gm / c / c) * height) / rLower / rUpper;
  const u = (2 * dPhi) / (1 - 2 * phiLower);
  return u / (1 + Math.sqrt(1 + u));
}

// ---------------------------------------------------------------------------
// GPS eccentricity correction (IS-GPS-200 §20.3.3.3.3.1)

/**
 * F = -2 sqrt(mu)/c^2 (s m^-1/2), the constant of the GPS relativistic clock correction
 * (IS-GPS-200 §20.3.3.3.3.1; -4.442807633e-10 s/m^1/2 for mu = 3.986005e14 m^3 s^-2).
 */
export function gpsRelativisticConstantF(gm: number, c: number = C): number {
  requirePositive(gm, 'gm', 'gm = GM > 0 (m^3 s^-2)');
  requireC(c);
  return (-2 * Math.sqrt(gm)) / c / c;
}

function requireOrbit(semiMajorAxis: number, e: number): void {
  requirePositive(semiMajorAxis, 'semiMajorAxis', 'semi-major axis > 0 (m)');
  requireFinite(e, 'e', '0 <= e < 1 (bound orbit)');
  if (!(e >= 0 && e < 1)) {
    throw new PhysicsDomainError(`eccentricity must satisfy 0 <= e < 1; got ${e}`, '0 <= e < 1 (bound orbit)', 'e');
  }
}

/**
 * Periodic relativistic clock correction of an eccentric orbit (s):
 *   Delta t_r = F e sqrt(A) sin E,  F = -2 sqrt(GM)/c^2   (IS-GPS-200 §20.3.3.3.3.1),
 * A = semi-major axis (m), e eccentricity, E eccentric anomaly (rad). Sign as in IS-GPS-200:
 * the correction to add to the broadcast clock (negative near E = pi/2, where the satellite
 * clock has gained time since perigee).
 */
export function eccentricOrbitClockCorrection(gm: number, semiMajorAxis: number, e: number, eccentricAnomaly: number, c: number = C): number {
  requireOrbit(semiMajorAxis, e);
  requireFinite(eccentricAnomaly, 'eccentricAnomaly', 'finite eccentric anomaly (rad)');
  return gpsRelativisticConstantF(gm, c) * e * Math.sqrt(semiMajorAxis) * Math.sin(eccentricAnomaly);
}

/**
 * Amplitude of that periodic term, 2 sqrt(GM A) e / c^2 (s) (= |F| e sqrt(A), IS-GPS-200
 * §20.3.3.3.3.1).
 */
export function eccentricOrbitClockAmplitude(gm: number, semiMajorAxis: number, e: number, c: number = C): number {
  requireOrbit(semiMajorAxis, e);
  return -gpsRelativisticConstantF(gm, c) * e * Math.sqrt(semiMajorAxis);
}

// ---------------------------------------------------------------------------
// Inverse problems: where does a clock run at a given rate?

/**
 * A requested clock rate, in any of its forms. For `offset` the rate is
 * rate = reference.rate (1 + offset); for `offsetAgainstGeoid` it is (1 - L_G)(1 + offset)
 * against TCG (Earth-only field, see `fractionalOffsetAgainstGeoid`).
 */
export type ClockTarget =
  | { readonly rate: number }
  | { readonly rateMinusOne: number }
  | { readonly lnRate: number }
  | { readonly dilation: number }
  | { readonly dilationMinusOne: number }
  | { readonly offset: number; readonly reference: HasLnRate }
  | { readonly offsetAgainstGeoid: number; readonly lG?: number };

const RATE_RANGE = 'a static or orbiting clock runs slower than a clock at infinity: 0 < rate < 1';

function rateDomain(message: string, parameter: string): PhysicsDomainError {
  return new PhysicsDomainError(`no radius gives ${message}: ${RATE_RANGE}`, RATE_RANGE, parameter);
}

/** Target from ln(rate) = L < 0: g^2 = exp(2L), 1 - g^2 = -expm1(2L) (no cancellation). */
function targetFromLnRate(L: number, describe: string, parameter: string, achievable?: string): LapseTarget {
  requireFinite(L, parameter, RATE_RANGE);
  if (!(L < 0)) {
    if (achievable !== undefined) {
      throw new PhysicsDomainError(`no radius gives ${describe}: achievable range ${achievable}`, achievable, parameter);
    }
    throw rateDomain(describe, parameter);
  }
  const g2 = Math.exp(2 * L);
  const omg2 = -Math.expm1(2 * L);
  if (!(g2 > 0) || !(omg2 > 0)) {
    const range = 'ln(rate) between ~-350 and ~-1e-300 (double-precision range)';
    throw new PhysicsDomainError(`${describe} is outside the representable range: ${range}`, range, parameter);
  }
  return { g2, omg2 };
}

/**
 * Converts a clock target to (g^2, 1 - g^2), each without cancellation (algebra):
 * rate g: (g^2, (1 - g)(1 + g)); rate - 1 = delta: ((1 + delta)^2, -delta (2 + delta));
 * ln rate L: (e^{2L}, -expm1(2L)); dilation D or D - 1 = zeta: as a redshift z = zeta.
 */
export function lapseTargetFromClock(target: ClockTarget): LapseTarget {
  if ('rate' in target) {
    const g = target.rate;
    requireFinite(g, 'rate', RATE_RANGE);
    if (!(g > 0 && g < 1)) throw rateDomain(`rate = ${g}`, 'rate');
    return { g2: g * g, omg2: (1 - g) * (1 + g) };
  }
  if ('rateMinusOne' in target) {
    const dl = target.rateMinusOne;
    requireFinite(dl, 'rateMinusOne', RATE_RANGE);
    if (!(dl > -1 && dl < 0)) throw rateDomain(`rate - 1 = ${dl}`, 'rateMinusOne');
    return { g2: (1 + dl) * (1 + dl), omg2: -dl * (2 + dl) };
  }
  if ('lnRate' in target) {
    return targetFromLnRate(target.lnRate, `ln(rate) = ${target.lnRate}`, 'lnRate');
  }
  if ('dilation' in target) {
    const D = target.dilation;
    requireFinite(D, 'dilation', RATE_RANGE);
    if (!(D > 1)) throw rateDomain(`dilation dt/dtau = ${D}`, 'dilation');
    return lapseTargetFromRedshift(D - 1);
  }
  if ('dilationMinusOne' in target) {
    const zeta = target.dilationMinusOne;
    requireFinite(zeta, 'dilationMinusOne', RATE_RANGE);
    if (!(zeta > 0)) throw rateDomain(`dilation - 1 = ${zeta}`, 'dilationMinusOne');
    return lapseTargetFromRedshift(zeta);
  }
  if ('offset' in target) {
    const y = target.offset;
    const ref = target.reference.lnRate;
    requireFinite(ref, 'reference.lnRate', 'finite ln(rate) <= 0');
    requireFinite(y, 'offset', 'offset > -1');
    const maxOffset = Math.expm1(-ref);
    const achievable = `-1 < offset < ${maxOffset} (rate/rate_ref - 1; the upper end is a clock at infinity)`;
    if (!(y > -1)) {
      throw new PhysicsDomainError(`no radius gives offset ${y}: achievable range ${achievable}`, achievable, 'offset');
    }
    return targetFromLnRate(ref + Math.log1p(y), `offset ${y} against the reference`, 'offset', achievable);
  }
  const y = target.offsetAgainstGeoid;
  const ref = geoidLnRate(target.lG ?? L_G);
  requireFinite(y, 'offsetAgainstGeoid', 'offset > -1');
  const achievable = `-1 < offsetAgainstGeoid < ${Math.expm1(-ref)} (the upper end, L_G/(1 - L_G), is a clock at infinity)`;
  if (!(y > -1)) {
    throw new PhysicsDomainError(`no radius gives offset ${y} against the geoid: achievable range ${achievable}`, achievable, 'offsetAgainstGeoid');
  }
  return targetFromLnRate(ref + Math.log1p(y), `offset ${y} against the geoid`, 'offsetAgainstGeoid', achievable);
}

/**
 * Static Schwarzschild clock with the target rate: x = g^2/(1 - g^2), r/r_s = 1/(1 - g^2)
 * (closed form of rate^2 = 1 - r_s/r, MTW ch. 31).
 */
export function staticClockPositionSchwarzschild(target: ClockTarget): SchwarzschildPosition {
  return staticSchwarzschildPositionForLapse(lapseTargetFromClock(target));
}

/** Static Kerr clock at polar angle theta with the target rate (closed form, see ./redshift.ts). */
export function staticClockPositionKerr(target: ClockTarget, a: number, theta: number): KerrStaticPosition {
  return staticKerrPositionForLapse(lapseTargetFromClock(target), a, theta);
}

/** Circular equatorial orbit (signed spin a) whose clock has the target rate (Brent, see ./redshift.ts). */
export function circularOrbitClockRadius(target: ClockTarget, a: number, options: BrentOptions = {}): CircularOrbitSolution {
  return circularOrbitRadiusForLapse(lapseTargetFromClock(target), a, options);
}

/**
 * Static clock around gm (m^3 s^-2) with the target rate: r = r_s/(1 - g^2) (m), height above
 * the horizon r_s g^2/(1 - g^2) (m) (MTW ch. 31). In the weak field r ~ GM/(c^2 |rate - 1|).
 */
export function staticClockRadiusSI(gm: number, target: ClockTarget, c: number = C): StaticPositionSI {
  return staticPositionForLapseSI(gm, lapseTargetFromClock(target), c);
}

/** Circular orbit (m) found from a clock rate. */
export interface CircularOrbitSI {
  /** Orbit radius, m. */
  readonly r: number;
  /** r >= 6GM/c^2. */
  readonly stable: boolean;
}

/**
 * Circular geodesic orbit around a spherical body gm (m^3 s^-2) whose clock has the target rate:
 * from rate^2 = 1 - 3GM/(r c^2) (BPT72 with a = 0), r = 3GM/(c^2 (1 - g^2)) (m). Every
 * 0 < rate < 1 is reachable (r from 3GM/c^2 to infinity).
 */
export function circularOrbitClockRadiusSI(gm: number, target: ClockTarget, c: number = C): CircularOrbitSI {
  requirePositive(gm, 'gm', 'gm = GM > 0 (m^3 s^-2)');
  requireC(c);
  const t = lapseTargetFromClock(target);
  return { r: (3 * gm) / c / c / t.omg2, stable: t.omg2 <= 0.5 };
}
