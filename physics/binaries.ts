/**
 * Relativistic binaries at first post-Newtonian order, as seen in pulsar timing: the
 * post-Keplerian (PK) parameters of general relativity as functions of the two masses and the
 * Keplerian orbit (Damour & Deruelle 1986, Ann. Inst. Henri Poincare Phys. Theor. 44, 263;
 * Taylor & Weisberg 1989, ApJ 345, 434; Lorimer & Kramer 2005, Handbook of Pulsar Astronomy,
 * §8.4, eqs. 8.52-8.56), their inversion to the two masses, and the gravitational-wave driven
 * decay of the orbit (Peters & Mathews 1963, Phys. Rev. 131, 435; Peters 1964, Phys. Rev. 136,
 * B1224).
 *
 * Masses enter only as mass parameters in units of time, T_i = G m_i / c^3 (s): a mass in
 * nominal solar masses is m T_sun with T_sun = GM_sun^N / c^3 = 4.925490947... us (IAU 2015 B3),
 * never G times a mass. Every formula below is written with the dimensionless combination
 * nu = n T (n = 2 pi / Pb the mean motion, T = T1 + T2), whose 2/3 power is GM/(a c^2) (~ v^2/c^2),
 * so nothing under- or overflows for any astrophysical binary.
 *
 * Units: times and periods in s, rates in rad s^-1, frequencies in Hz; pb_dot is dimensionless.
 * Pure functions; no I/O.
 */
import { C, GM_SUN } from './constants.js';
import { PhysicsDomainError, describeNumber } from './errors.js';
import { gaussLegendre } from './quadrature.js';

/** Nominal solar mass parameter in time units, T_sun = GM_sun^N / c^3, s (IAU 2015 Resolution B3). */
export const T_SUN = GM_SUN / (C * C * C);

/** Peters & Mathews 1963 (Phys. Rev. 131, 435) eq. 17: the eccentricity enhancement of GW emission,
 * f(e) = (1 + 73/24 e^2 + 37/96 e^4) (1 - e^2)^(-7/2) (dimensionless). */
export function enhancementFactor(e: number): number {
  const e2 = e * e;
  const oneMinus = (1 - e) * (1 + e); // 1 - e^2 without cancellation near e = 1
  return (1 + (73 / 24) * e2 + (37 / 96) * e2 * e2) / Math.pow(oneMinus, 3.5);
}

/** The inputs of the forward problem: Pb (s), e, and the masses as T1 = G m1/c^3, T2 = G m2/c^3 (s). */
export interface Binary {
  pb: number;
  e: number;
  /** Pulsar mass parameter G m1 / c^3, s. */
  t1: number;
  /** Companion mass parameter G m2 / c^3, s. */
  t2: number;
}

/** n T = 2 pi T / Pb (dimensionless): (n T)^(2/3) = GM/(a c^2) by Kepler's third law. */
function nuOf(b: Binary): number {
  return ((2 * Math.PI) / b.pb) * (b.t1 + b.t2);
}

/** Rate of periastron advance, rad/s: omega_dot = 3 (Pb/2pi)^(-5/3) (T_sun M)^(2/3) / (1 - e^2)
 * (Lorimer & Kramer 2005, eq. 8.52; Taylor & Weisberg 1989, eq. 3), written as 3 n nu^(2/3)/(1 - e^2). */
export function periastronAdvanceRate(b: Binary): number {
  const n = (2 * Math.PI) / b.pb;
  return (3 * n * Math.cbrt(nuOf(b)) ** 2) / ((1 - b.e) * (1 + b.e));
}

/** Einstein delay amplitude gamma, s: e (Pb/2pi)^(1/3) T_sun^(2/3) M^(-4/3) m2 (m1 + 2 m2)
 * (Lorimer & Kramer 2005, eq. 8.53; Taylor & Weisberg 1989, eq. 4), as (e/n) nu^(2/3) (T2/T)(1 + T2/T). */
export function einsteinDelay(b: Binary): number {
  const n = (2 * Math.PI) / b.pb;
  const t = b.t1 + b.t2;
  const x2 = b.t2 / t;
  return (b.e / n) * Math.cbrt(nuOf(b)) ** 2 * x2 * (1 + x2);
}

/** Orbital period derivative from quadrupole GW emission (dimensionless, < 0):
 * -(192 pi/5) (Pb/2pi)^(-5/3) f(e) T_sun^(5/3) m1 m2 M^(-1/3) (Lorimer & Kramer 2005, eq. 8.54;
 * Peters & Mathews 1963), as -(192 pi/5) nu^(5/3) f(e) (T1/T)(T2/T). */
export function orbitalDecay(b: Binary): number {
  const t = b.t1 + b.t2;
  return -((192 * Math.PI) / 5) * Math.cbrt(nuOf(b)) ** 5 * enhancementFactor(b.e) * (b.t1 / t) * (b.t2 / t);
}

/** Shapiro delay range r = T_sun m2, s (Lorimer & Kramer 2005, eq. 8.55). */
export function shapiroRange(b: Binary): number {
  return b.t2;
}

/** Shapiro delay shape s = sin i = x (Pb/2pi)^(-2/3) T_sun^(-1/3) M^(2/3) / m2 (Lorimer & Kramer 2005,
 * eq. 8.56; the mass function), as (x / T2) nu^(2/3); x = a1 sin i / c in s. Values above 1 mean
 * that no inclination fits the masses and x. */
export function shapiroShape(b: Binary, x: number): number {
  return (x / b.t2) * Math.cbrt(nuOf(b)) ** 2;
}

/** Semi-major axis of the relative orbit in light-seconds, a/c = (GM)^(1/3) (Pb/2pi)^(2/3) / c
 * (Kepler's third law), = nu^(1/3)/n, s. */
export function semiMajorAxisLightSeconds(b: Binary): number {
  return Math.cbrt(nuOf(b)) / ((2 * Math.PI) / b.pb);
}

/** GM/(a c^2) = nu^(2/3) (dimensionless), the post-Newtonian expansion parameter (~ v^2/c^2). */
export function compactness(b: Binary): number {
  return Math.cbrt(nuOf(b)) ** 2;
}

/** Dominant (n = 2) harmonic of the gravitational waves, 2/Pb, Hz (Peters & Mathews 1963): the only
 * one for a circular orbit. */
export function gwFrequency(b: Binary): number {
  return 2 / b.pb;
}

/** Harmonic of peak GW power for an eccentric orbit, Hz: f = (sqrt(GM)/pi) (1 + e)^1.1954 / (a (1 - e^2))^1.5
 * (Wen 2003, ApJ 598, 419, eq. 36, a fit to Peters & Mathews 1963), with sqrt(GM)/a^1.5 = n. */
export function gwPeakFrequency(b: Binary): number {
  const n = (2 * Math.PI) / b.pb;
  return ((n / Math.PI) * Math.pow(1 + b.e, 1.1954)) / Math.pow((1 - b.e) * (1 + b.e), 1.5);
}

// ---------------------------------------------------------------------------
// Coalescence time (Peters 1964)

/** Coalescence time of a circular orbit, s: T_c = a0^4 / (4 beta) with beta = (64/5) G^3 m1 m2 M / c^5
 * (Peters 1964, eqs. 5.9-5.10); in time units a0/c = nu^(1/3)/n and beta/c^4 = (64/5) T1 T2 T, so
 * T_c = (5/256) / (n nu^(5/3) (T1/T)(T2/T)). */
export function mergerTimeCircular(b: Binary): number {
  const n = (2 * Math.PI) / b.pb;
  const t = b.t1 + b.t2;
  return 5 / 256 / (n * Math.cbrt(nuOf(b)) ** 5 * (b.t1 / t) * (b.t2 / t));
}

/** Exponents and coefficient of Peters 1964 eqs. 5.11 and 5.14. */
const P_G = 121 / 304; // 1 + (121/304) e^2 in a(e) and in the integrand
const P_EXP_INT = 1181 / 2299; // exponent of [1 + (121/304) e^2] in the integrand of eq. 5.14
const P_EXP_C0 = 870 / 2299; // exponent of [1 + (121/304) e^2] in c0 (eq. 5.11)


const GL = gaussLegendre(20);

/**
 * Taylor coefficients h_k of H(y) = (1 + (121/304) y)^(1181/2299) (1 - y)^(-3/2), the integrand of
 * Peters 1964 eq. 5.14 without e^(29/19), as a power series in y = e^2 (Cauchy product of the two
 * binomial series). Used for e <= E_SPLIT, where y <= 1/4 and 48 terms reach below 1e-28.
 */
const SERIES_TERMS = 48;
const H_COEF: Float64Array = (() => {
  const a = new Float64Array(SERIES_TERMS); // (1 + P_G y)^P_EXP_INT
  const b = new Float64Array(SERIES_TERMS); // (1 - y)^(-3/2)
  a[0] = 1;
  b[0] = 1;
  for (let k = 1; k < SERIES_TERMS; k++) {
    a[k] = (a[k - 1] * (P_EXP_INT - (k - 1)) * P_G) / k;
    b[k] = (b[k - 1] * (k - 1 + 1.5)) / k;
  }
  const h = new Float64Array(SERIES_TERMS);
  for (let k = 0; k < SERIES_TERMS; k++) {
    let s = 0;
    for (let j = 0; j <= k; j++) s += a[j] * b[k - j];
    h[k] = s;
  }
  return h;
})();

const E_SPLIT = 0.5;
const W_SPLIT = Math.atanh(E_SPLIT);
/** Widest Gauss-Legendre panel in w = artanh(e); the nearest singularities of the integrand are at
 * Im w = +-pi/2 (poles of tanh) and at w = 0, so 20 nodes per panel of width <= 1.25 reach ~1e-17. */
const PANEL = 1.25;

/**
 * J(e0) = e0^(-48/19) \int_0^e0 e^(29/19) H(e^2) de for e0 <= E_SPLIT, as a series: term by term,
 * \int_0^e0 e^(29/19 + 2k) de = e0^(48/19 + 2k) / (48/19 + 2k), so J = sum_k h_k e0^(2k) / (48/19 + 2k).
 * Smooth in e0, and J(0) = 19/48.
 */
function lowEccentricityIntegral(e0: number): number {
  const y = e0 * e0;
  let sum = 0;
  for (let k = SERIES_TERMS - 1; k >= 0; k--) sum = sum * y + H_COEF[k] / (48 / 19 + 2 * k);
  return sum;
}

/**
 * \int_{E_SPLIT}^{e0} e^(29/19) H(e^2) de with e = tanh w (de / (1 - e^2)^(3/2) = cosh w dw):
 * \int tanh(w)^(29/19) (1 + (121/304) tanh^2 w)^(1181/2299) cosh w dw over [artanh 0.5, artanh e0],
 * composite 20-point Gauss-Legendre on equal panels no wider than PANEL. The integrand grows like
 * e^w but stays smooth, so the rule keeps full relative precision up to e0 = 1 - 2^-53.
 */
function highEccentricityIntegral(e0: number): number {
  // artanh(e0) = (1/2) ln((1 + e0)/(1 - e0)); 1 - e0 is exact for e0 >= 0.5 (Sterbenz).
  const w0 = 0.5 * Math.log((1 + e0) / (1 - e0));
  const span = w0 - W_SPLIT;
  if (!(span > 0)) return 0;
  const panels = Math.max(1, Math.ceil(span / PANEL));
  const h = span / panels;
  let total = 0;
  for (let p = 0; p < panels; p++) {
    const mid = W_SPLIT + (p + 0.5) * h;
    let s = 0;
    for (let i = 0; i < GL.x.length; i++) {
      const w = mid + 0.5 * h * GL.x[i];
      const e = Math.tanh(w);
      s += GL.w[i] * Math.pow(e, 29 / 19) * Math.pow(1 + P_G * e * e, P_EXP_INT) * Math.cosh(w);
    }
    total += 0.5 * h * s;
  }
  return total;
}

/**
 * T(a0, e0) / T_c(a0): the coalescence time of an eccentric orbit in units of that of a circular
 * orbit of the same semi-major axis, from Peters 1964 eq. 5.14,
 *   T(a0, e0) = (12/19) (c0^4 / beta) \int_0^e0 e^(29/19) [1 + (121/304) e^2]^(1181/2299) (1 - e^2)^(-3/2) de,
 * with c0 = a0 (1 - e0^2) e0^(-12/19) [1 + (121/304) e0^2]^(-870/2299) (eq. 5.11) and T_c = a0^4/(4 beta)
 * (eq. 5.10), so that
 *   T/T_c = (48/19) (1 - e0^2)^4 [1 + (121/304) e0^2]^(-3480/2299) e0^(-48/19) \int_0^e0 ... de.
 * The integral is split at e = 0.5: a power series below (exact, smooth at e0 -> 0, where the ratio
 * tends to 1) and Gauss-Legendre in w = artanh e above (the (1 - e^2)^(-3/2) growth becomes cosh w).
 * Limits: 1 - 3.651 e0^2 + O(e0^4) for small e0; (768/425)(1 - e0^2)^(7/2) as e0 -> 1 (Peters 1964).
 */
export function mergerTimeFactor(e0: number): number {
  if (!(e0 >= 0 && e0 < 1)) {
    throw new PhysicsDomainError(`the eccentricity must satisfy 0 <= e < 1; got ${describeNumber(e0)}`, '0 <= e < 1 (bound orbit)', 'e');
  }
  const oneMinus = (1 - e0) * (1 + e0);
  const g0 = 1 + P_G * e0 * e0;
  // e0^(-48/19) \int_0^e0 ... de: the series gives it directly up to E_SPLIT (also at e0 = 0);
  // beyond, the series part is rescaled from E_SPLIT to e0 and the Gauss-Legendre part divided.
  const scaled =
    e0 <= E_SPLIT
      ? lowEccentricityIntegral(e0)
      : Math.pow(E_SPLIT / e0, 48 / 19) * lowEccentricityIntegral(E_SPLIT) + highEccentricityIntegral(e0) / Math.pow(e0, 48 / 19);
  return (48 / 19) * oneMinus ** 4 * Math.pow(g0, -4 * P_EXP_C0) * scaled;
}

/** Coalescence time under GW emission, s (Peters 1964 eq. 5.14 via mergerTimeFactor, eq. 5.10). */
export function mergerTime(b: Binary): number {
  return mergerTimeCircular(b) * mergerTimeFactor(b.e);
}

// ---------------------------------------------------------------------------
// Masses from two PK parameters

export interface MassSolution {
  /** T = G M / c^3, s. */
  t: number;
  t1: number;
  t2: number;
}

/**
 * The two masses from the periastron advance and the Einstein delay (Taylor & Weisberg 1989 §III;
 * Lorimer & Kramer 2005 §8.4): omega_dot fixes the total mass,
 *   T = G M / c^3 = [omega_dot (1 - e^2) / 3]^(3/2) (Pb / 2 pi)^(5/2)          (inverse of eq. 8.52),
 * and gamma = e (Pb/2pi)^(1/3) T^(-4/3) T2 (T1 + 2 T2) with T1 = T - T2 is T2 (T + T2) = K,
 * K = gamma T^(4/3) / (e (Pb/2pi)^(1/3))  (eq. 8.53). With q = K / T^2 and s = sqrt(1 + 4 q), the
 * positive root and its complement, both free of cancellation, are
 *   T2 / T = 2 q / (1 + s),    T1 / T = 2 (2 - q) / (3 + s).
 * m1 > 0 needs q < 2, i.e. gamma < 2 e (Pb/2pi)^(1/3) T^(2/3); e = 0 leaves gamma = 0 for any masses.
 * Errors name the input ('e', 'gamma', 'omega_dot') as the PhysicsDomainError parameter.
 */
export function massesFromPeriastronAndEinstein(pb: number, e: number, omegaDot: number, gamma: number): MassSolution {
  if (!(e > 0 && e < 1)) {
    throw new PhysicsDomainError(
      `the Einstein delay vanishes on a circular orbit, so gamma cannot fix the masses for e = ${describeNumber(e)}`,
      '0 < e < 1 (an eccentric orbit)',
      'e',
    );
  }
  const over = pb / (2 * Math.PI); // 1/n, s
  // T from omega_dot, through logarithms so that no intermediate power overflows.
  const lnT = 1.5 * Math.log((omegaDot * (1 - e) * (1 + e)) / 3) + 2.5 * Math.log(over);
  const t = Math.exp(lnT);
  if (!(t > 0) || !Number.isFinite(t)) {
    throw new PhysicsDomainError(
      `omega_dot gives a total mass parameter GM/c^3 = exp(${lnT.toPrecision(6)}) s outside the representable range`,
      'an omega_dot whose total mass parameter GM/c^3 = [omega_dot (1 - e^2)/3]^(3/2) (Pb/2pi)^(5/2) is a positive finite double',
      'omega_dot',
    );
  }
  // gamma_max = 2 e (Pb/2pi)^(1/3) T^(2/3): the Einstein delay when m1 -> 0 (eq. 8.53 with m1 = 0).
  const half = e * Math.exp(lnT * (2 / 3) + Math.log(over) / 3); // gamma_max / 2, s
  const q = gamma / half;
  if (!(q > 0 && q < 2)) {
    const max = 2 * half;
    throw new PhysicsDomainError(
      `no positive masses give gamma = ${describeNumber(gamma)} s with this omega_dot, pb and e (the total mass is ${(t / T_SUN).toPrecision(6)} solMass)`,
      `0 < gamma < ${max.toPrecision(6)} s, the Einstein delay of a massless pulsar (m1 -> 0) for these pb, e and omega_dot`,
      'gamma',
    );
  }
  const s = Math.sqrt(1 + 4 * q);
  const x2 = (2 * q) / (1 + s);
  const x1 = (2 * (2 - q)) / (3 + s);
  return { t, t1: t * x1, t2: t * x2 };
}
