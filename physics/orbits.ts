/**
 * Circular equatorial orbits of the Kerr metric: orbital, epicyclic and precession frequencies,
 * local speed, proper period, specific energy and angular momentum; and the inverse problems
 * (the radius at which one of these frequencies takes a given value).
 *
 * Units: geometric (G = c = 1, the hole's mass as the scale), as in ./kerr.ts:
 *   - radii in r_g = GM/c^2 (Boyer-Lindquist r), angular frequencies in c^3/(GM),
 *     speeds in c, specific energy in c^2, specific angular momentum in GM/c.
 * Spin: *signed relative to the orbit* (./kerr.ts convention): a > 0 co-rotating (prograde),
 * a < 0 counter-rotating; |a| <= 1. Every frequency here is measured in coordinate time t,
 * i.e. by a distant observer, and positive in the sense of the orbit (except the nodal
 * precession, which is negative for counter-rotating orbits: the node then regresses).
 *
 * References
 *   BPT72: Bardeen, Press & Teukolsky 1972, ApJ 178, 347 (Omega, E, L, r_ph, r_mb, r_ms,
 *     u^t, speed in the locally non-rotating frame).
 *   OKF87: Okazaki, Kato & Fukue 1987, PASJ 39, 457 (radial epicyclic frequency in Kerr).
 *   Kato 1990, PASJ 42, 99 (vertical epicyclic frequency in Kerr).
 *   SV98: Stella & Vietri 1998, ApJ 492, L59 (periastron and nodal precession, Omega - Omega_r
 *     and Omega - Omega_theta).
 *   Brent 1973, Algorithms for Minimization without Derivatives, ch. 4 (root finding).
 *
 * Numerics. Each closed form is evaluated in a rearranged shape without catastrophic
 * cancellation (sums of non-negative terms, factorisations), and, beyond r = FAR, divided
 * through by powers of r so that nothing overflows up to r ~ 1e300:
 *   - Omega_r^2/Omega^2 = (r^2 - 6r + 8a r^(1/2) - 3a^2)/r^2 is factorised through the ISCO,
 *     (r - r_ms) Q(sqrt r) / ((sqrt r + sqrt r_ms) r^2), so it is exactly 0 at r = r_ms and has
 *     full relative accuracy next to it (its sign decides orbital stability);
 *   - 1 - Omega_r^2/Omega^2 = (6 (r^(1/2) - 2a/3)^2 + a^2/3)/r^2 and
 *     1 - Omega_theta^2/Omega^2 = a (4 r^(1/2) - 3a)/r^2 give the precession frequencies
 *     Omega (1 - F)/(1 + sqrt F) without the cancellation in Omega - Omega sqrt(F);
 *   - Omega_theta^2/Omega^2 for a > 0 is (r - a)^2 + 2a((r^(1/2) - 1)^2 - (1 - a)) over r^2,
 *     accurate as a -> 1, r -> 1 where it vanishes.
 */
import { PhysicsDomainError } from './errors.js';
import { assertSpin, circularAngularMomentum, circularEnergy, horizonOuter, isco, marginallyBound, photonOrbit } from './kerr.js';
import { brent } from './roots.js';

/** Beyond this radius (rg) the far-field shapes (divided through by powers of r) are used. */
const FAR = 16;

// ---------------------------------------------------------------------------
// Validation

function describe(x: number): string {
  return Number.isNaN(x) ? 'NaN' : String(x);
}

/** Throws unless r is a finite radius strictly outside the circular photon orbit r_ph(a). */
function requireOrbit(r: number, a: number): void {
  assertSpin(a);
  const rPh = photonOrbit(a); // BPT72 eq. 2.18, rg
  if (typeof r !== 'number' || !Number.isFinite(r) || !(r > rPh)) {
    throw new PhysicsDomainError(
      `no timelike circular orbit at r = ${describe(r)} GM/c^2`,
      `r > r_ph = ${rPh} GM/c^2 (the circular photon orbit, BPT72 eq. 2.18)`,
      'r',
    );
  }
}

// ---------------------------------------------------------------------------
// Building blocks (geometric units; r in rg, signed spin a)

/**
 * ln Omega, with Omega = 1/(r^(3/2) + a) the coordinate angular velocity (BPT72 eq. 2.16),
 * units c^3/(GM). Evaluated as -(3/2) ln r - ln(1 + a r^(-3/2)): finite for every finite
 * r > r_ph (Omega itself underflows beyond r ~ 1e205).
 */
export function lnOrbitalAngularVelocity(r: number, a: number): number {
  return -(1.5 * Math.log(r) + Math.log1p(a / (r * Math.sqrt(r))));
}

/**
 * Omega_r^2 / Omega^2 = 1 - 6/r + 8a r^(-3/2) - 3a^2/r^2 (OKF87; Kato 1990), dimensionless.
 * Negative between the photon orbit and the ISCO (radially unstable), 0 at r_ms, in (0, 1)
 * beyond. Near the hole: with u = sqrt(r), m = sqrt(r_ms) and P(u) = u^4 - 6u^2 + 8au - 3a^2
 * (BPT72 eq. 2.20: P(m) = 0), P(u) = (u - m) Q(u) by synthetic division, where
 * Q(u) = u^3 + m u^2 + (r_ms - 6) u + 3a^2/m (the constant term m^3 - 6m + 8a = 3a^2/m
 * because P(m) = 0), and u - m = (r - r_ms)/(u + m).
 */
export function radialEpicyclicFactor(r: number, a: number): number {
  requireOrbit(r, a);
  return radialFactorUnchecked(r, a);
}

function radialFactorUnchecked(r: number, a: number): number {
  if (r > FAR) return 1 - radialComplement(r, a);
  const u = Math.sqrt(r);
  const rMs = isco(a); // BPT72 eq. 2.21, rg
  const m = Math.sqrt(rMs);
  const q = u * u * u + m * u * u + (rMs - 6) * u + (3 * a * a) / m;
  return ((r - rMs) * q) / ((u + m) * r * r);
}

/**
 * 1 - Omega_r^2/Omega^2 = (6r - 8a r^(1/2) + 3a^2)/r^2 = (6 (1 - 2a/(3u))^2 + a^2/(3r))/r
 * (OKF87, rearranged: a sum of non-negative terms), dimensionless, > 0 for every orbit.
 */
function radialComplement(r: number, a: number): number {
  const t = 1 - (2 * a) / (3 * Math.sqrt(r));
  return (6 * t * t + (a * a) / (3 * r)) / r;
}

/**
 * Omega_theta^2 / Omega^2 = 1 - 4a r^(-3/2) + 3a^2/r^2 (Kato 1990; OKF87), dimensionless, > 0
 * outside the photon orbit for |a| < 1. For a > 0 near the hole it is evaluated as
 * [(r - a)^2 + 2a((u - 1)^2 - (1 - a))]/r^2 (u = sqrt r; algebraically identical), which keeps
 * its accuracy where it vanishes (a -> 1, r -> 1).
 */
export function verticalEpicyclicFactor(r: number, a: number): number {
  requireOrbit(r, a);
  return verticalFactorUnchecked(r, a);
}

function verticalFactorUnchecked(r: number, a: number): number {
  if (a <= 0 || r > FAR) return 1 - verticalComplement(r, a);
  const u = Math.sqrt(r);
  const uMinus1 = (r - 1) / (u + 1);
  const n = (r - a) * (r - a) + 2 * a * (uMinus1 * uMinus1 - (1 - a));
  return n / (r * r);
}

/**
 * 1 - Omega_theta^2/Omega^2 = a (4 r^(1/2) - 3a)/r^2 = a (4/u - 3a/r)/r (Kato 1990, rearranged),
 * dimensionless; same sign as a (4u - 3a >= 1 for u >= 1 >= a).
 */
function verticalComplement(r: number, a: number): number {
  return (a * (4 / Math.sqrt(r) - (3 * a) / r)) / r;
}

// ---------------------------------------------------------------------------
// The forward problem

/** Everything about one circular equatorial geodesic, geometric units (see the header). */
export interface CircularOrbit {
  /** Boyer-Lindquist radius, rg. */
  readonly r: number;
  /** Signed spin relative to the orbit. */
  readonly a: number;
  /** Coordinate angular velocity Omega = dphi/dt = 1/(r^(3/2) + a), c^3/(GM) (BPT72 eq. 2.16). */
  readonly omega: number;
  /** dtau/dt = 1/u^t = r^(3/4) sqrt(r^(3/2) - 3r^(1/2) + 2a)/(r^(3/2) + a) (BPT72 §II), dimensionless. */
  readonly dtauDt: number;
  /** Proper-time period 2 pi/(Omega u^t) = 2 pi r^(3/4) sqrt(r^(3/2) - 3 r^(1/2) + 2a), GM/c^3. */
  readonly properPeriod: number;
  /** Speed in the locally non-rotating frame (BPT72 eq. 3.10), units of c, in (0, 1). */
  readonly speedLocal: number;
  /** Specific energy E (BPT72 eq. 2.12), units of c^2. */
  readonly energy: number;
  /** 1 - E, units of c^2, computed without cancellation: > 0 exactly for bound orbits (r > r_mb). */
  readonly bindingEnergy: number;
  /** Specific angular momentum L along the orbit's sense (BPT72 eq. 2.13), units of GM/c. */
  readonly angularMomentum: number;
  /** Omega_r^2/Omega^2 (OKF87): < 0 inside the ISCO, where the orbit is radially unstable. */
  readonly radialFactor: number;
  /** Omega_theta^2/Omega^2 (Kato 1990). */
  readonly verticalFactor: number;
  /** Radial epicyclic angular frequency Omega_r = Omega sqrt(F_r) where F_r >= 0, else 0; c^3/(GM). */
  readonly omegaRadial: number;
  /** sqrt(-Omega_r^2) where Omega_r^2 < 0 (e-folding rate of a radial perturbation in t), else 0; c^3/(GM). */
  readonly radialGrowthRate: number;
  /** Vertical epicyclic angular frequency Omega_theta = Omega sqrt(F_theta), c^3/(GM). */
  readonly omegaVertical: number;
  /** Periastron precession Omega - Omega_r (SV98) where F_r >= 0; Omega inside the ISCO (Omega_r clamped to 0); c^3/(GM). */
  readonly omegaPeriastron: number;
  /** Nodal precession Omega - Omega_theta (SV98), c^3/(GM); same sign as a (0 for a = 0). */
  readonly omegaNodal: number;
  /** r >= r_ms (BPT72 eq. 2.21). */
  readonly stable: boolean;
  /** r > r_mb, i.e. E < 1 (BPT72 eq. 2.19). */
  readonly bound: boolean;
  /** r_ms (ISCO) for this spin and sense, rg. */
  readonly isco: number;
}

/**
 * The circular equatorial geodesic at Boyer-Lindquist radius r (rg) for signed spin a.
 * Throws a PhysicsDomainError (parameter "r") unless r_ph(a) < r < infinity.
 */
export function circularOrbit(r: number, a: number): CircularOrbit {
  requireOrbit(r, a);
  const u = Math.sqrt(r);
  const far = r > FAR;
  const w = a / (r * u); // a r^(-3/2)
  // Omega = 1/(r^(3/2) + a) (BPT72 eq. 2.16), c^3/(GM)
  const omega = far ? 1 / (r * u * (1 + w)) : 1 / (r * u + a);
  // s = sqrt(1 - 3/r + 2a r^(-3/2)) = r^(-3/4) sqrt(D), D = r^(3/2) - 3r^(1/2) + 2a = (u-1)^2 (u+2) - 2(1-a) (BPT72 §II)
  let s: number;
  if (far) {
    s = Math.sqrt(1 - 3 / r + 2 * w);
  } else {
    const uMinus1 = (r - 1) / (u + 1);
    const d = uMinus1 * uMinus1 * (u + 2) - 2 * (1 - a);
    s = Math.sqrt(d) / (u * Math.sqrt(u));
  }
  // dtau/dt = 1/u^t = s/(1 + a r^(-3/2)) (BPT72 §II), dimensionless
  const dtauDt = s / (1 + w);
  // T_proper = 2 pi (r^(3/2) + a) dtau/dt = 2 pi r^(3/2) s, GM/c^3
  const properPeriod = 2 * Math.PI * r * u * s;
  // v_LNRF = (r^2 - 2a r^(1/2) + a^2) / (Delta^(1/2) (r^(3/2) + a)) (BPT72 eq. 3.10), c;
  // Delta = r^2 - 2r + a^2 = (r - r+)(r - r-), r+ = 1 + sqrt(1 - a^2), r- = a^2/r+ (BPT72 §II)
  let speedLocal: number;
  if (far) {
    const num = 1 - (2 * a) / (r * u) + (a / r) * (a / r);
    const den = Math.sqrt(1 - 2 / r + (a / r) * (a / r)) * (u + a / r);
    speedLocal = num / den;
  } else {
    const uMinus1 = (r - 1) / (u + 1);
    const num = a >= 0 ? (r - a) * (r - a) + 2 * a * u * uMinus1 : r * r - 2 * a * u + a * a;
    const rPlus = horizonOuter(a);
    const delta = (r - rPlus) * (r - (a * a) / rPlus);
    speedLocal = num / (Math.sqrt(delta) * (r * u + a));
  }
  const energy = circularEnergy(r, a); // BPT72 eq. 2.12, c^2
  const angularMomentum = circularAngularMomentum(r, a); // BPT72 eq. 2.13, GM/c
  // 1 - E = (s^2 - t^2)/(s (s + t)), t = 1 - 2/r + a r^(-3/2) = E s (BPT72 eq. 2.12 rearranged);
  // s^2 - t^2 = (r^2 - 4r + 4a r^(1/2) - a^2)/r^3 = (1 - 2/u + a/r)(1 + 2/u - a/r)/r, with
  // 1 - 2/u + a/r = ((u - 1)^2 - (1 - a))/r vanishing at r_mb (BPT72 eq. 2.19).
  const uMinus1 = (r - 1) / (u + 1);
  const t = energy * s;
  const first = (uMinus1 * uMinus1 - (1 - a)) / r;
  const bindingEnergy = (first * (2 - first)) / (r * s * (s + t));
  const radialFactor = radialFactorUnchecked(r, a);
  const verticalFactor = verticalFactorUnchecked(r, a);
  const sqrtFr = radialFactor > 0 ? Math.sqrt(radialFactor) : 0;
  const sqrtFt = Math.sqrt(verticalFactor);
  const rMs = isco(a);
  return {
    r,
    a,
    omega,
    dtauDt,
    properPeriod,
    speedLocal,
    energy,
    bindingEnergy,
    angularMomentum,
    radialFactor,
    verticalFactor,
    // Omega_r = Omega sqrt(1 - 6/r + 8a r^(-3/2) - 3a^2/r^2) (OKF87), c^3/(GM)
    omegaRadial: omega * sqrtFr,
    radialGrowthRate: radialFactor < 0 ? omega * Math.sqrt(-radialFactor) : 0,
    // Omega_theta = Omega sqrt(1 - 4a r^(-3/2) + 3a^2/r^2) (Kato 1990), c^3/(GM)
    omegaVertical: omega * sqrtFt,
    // Omega - Omega_r = Omega (1 - F_r)/(1 + sqrt F_r) (SV98), c^3/(GM)
    omegaPeriastron: radialFactor >= 0 ? (omega * radialComplement(r, a)) / (1 + sqrtFr) : omega,
    // Omega - Omega_theta = Omega (1 - F_theta)/(1 + sqrt F_theta) (SV98), c^3/(GM)
    omegaNodal: (omega * verticalComplement(r, a)) / (1 + sqrtFt),
    stable: r >= rMs,
    bound: r > marginallyBound(a),
    isco: rMs,
  };
}

// ---------------------------------------------------------------------------
// Which frequency, and where it is defined

/** The frequencies of a circular orbit that can be measured (and inverted). */
export type FrequencyKind = 'orbital' | 'radial_epicyclic' | 'vertical_epicyclic' | 'periastron_precession' | 'nodal_precession';

export const FREQUENCY_KINDS: readonly FrequencyKind[] = ['orbital', 'radial_epicyclic', 'vertical_epicyclic', 'periastron_precession', 'nodal_precession'];

/** Radii (rg) where a frequency kind is real: r > r_ph for all; r >= r_ms as well for the radial ones. */
export interface FrequencyDomain {
  /** Inner edge, rg. */
  readonly lo: number;
  /** Whether r = lo is allowed (r_ms for the radial kinds when r_ms > r_ph). */
  readonly loClosed: boolean;
}

function needsStable(kind: FrequencyKind): boolean {
  return kind === 'radial_epicyclic' || kind === 'periastron_precession';
}

export function frequencyDomain(kind: FrequencyKind, a: number): FrequencyDomain {
  assertSpin(a);
  const rPh = photonOrbit(a);
  if (!needsStable(kind)) return { lo: rPh, loClosed: false };
  const rMs = isco(a);
  return { lo: Math.max(rMs, rPh), loClosed: rMs > rPh };
}

function inDomain(dom: FrequencyDomain, r: number): boolean {
  return dom.loClosed ? r >= dom.lo : r > dom.lo;
}

/**
 * The angular frequency of `kind` at radius r (rg), units c^3/(GM): Omega, Omega_r,
 * Omega_theta, Omega - Omega_r or |Omega - Omega_theta| (the nodal precession as a magnitude,
 * as it is measured). Throws a PhysicsDomainError (parameter "r") outside the kind's domain.
 */
export function angularFrequencyOf(kind: FrequencyKind, r: number, a: number): number {
  const dom = frequencyDomain(kind, a);
  if (typeof r !== 'number' || !Number.isFinite(r) || !inDomain(dom, r)) {
    const what = needsStable(kind)
      ? `r ${dom.loClosed ? '>=' : '>'} ${dom.lo} GM/c^2 (the ISCO, BPT72 eq. 2.21: inside it Omega_r^2 < 0 and the orbit is radially unstable)`
      : `r > ${dom.lo} GM/c^2 (the circular photon orbit, BPT72 eq. 2.18)`;
    throw new PhysicsDomainError(`the ${kind.replace('_', ' ')} frequency is not defined at r = ${describe(r)} GM/c^2`, what, 'r');
  }
  const o = circularOrbit(r, a);
  switch (kind) {
    case 'orbital':
      return o.omega;
    case 'radial_epicyclic':
      return o.omegaRadial;
    case 'vertical_epicyclic':
      return o.omegaVertical;
    case 'periastron_precession':
      return o.omegaPeriastron;
    case 'nodal_precession':
      return Math.abs(o.omegaNodal);
  }
}

/**
 * ln of the angular frequency of `kind` at r (rg), for root finding: finite for every finite r
 * in the kind's domain (no overflow or underflow), -Infinity where the frequency is 0.
 */
function lnFrequency(kind: FrequencyKind, r: number, a: number): number {
  const lnOmega = lnOrbitalAngularVelocity(r, a); // BPT72 eq. 2.16
  switch (kind) {
    case 'orbital':
      return lnOmega;
    case 'vertical_epicyclic':
      return lnOmega + 0.5 * Math.log(verticalFactorUnchecked(r, a)); // Kato 1990
    case 'radial_epicyclic':
      return lnOmega + 0.5 * Math.log(Math.max(radialFactorUnchecked(r, a), 0)); // OKF87
    case 'periastron_precession': {
      const fr = Math.max(radialFactorUnchecked(r, a), 0);
      return lnOmega + Math.log(radialComplement(r, a)) - Math.log1p(Math.sqrt(fr)); // SV98
    }
    case 'nodal_precession': {
      const ft = verticalFactorUnchecked(r, a);
      // |1 - F_theta| = |a| (4/u - 3a/r)/r (Kato 1990), over 1 + sqrt(F_theta) (SV98)
      return lnOmega + Math.log(Math.abs(a)) + Math.log(4 / Math.sqrt(r) - (3 * a) / r) - Math.log(r) - Math.log1p(Math.sqrt(ft));
    }
  }
}

// ---------------------------------------------------------------------------
// Peaks (where a frequency is not monotonic in r)

/**
 * Where a frequency of the kind has its maximum in r, if it has one inside its domain.
 *
 * With Omega = 1/(u^3 + a) (u = sqrt r) and F = Omega_x^2/Omega^2, d ln(Omega^2 F)/dr has the
 * sign of -h(u) (algebra on OKF87 and Kato 1990):
 *   radial:   h_r(u) = u^3 P(u) - 2 (u - a)^2 (u^3 + a),       P = u^4 - 6u^2 + 8au - 3a^2;
 *   vertical: h_t(u) = u^3 N(u) - 2a (u - a)(u^3 + a),          N = u^4 - 4au + 3a^2.
 * h_r(sqrt r_ms) = -2 (u - a)^2 (u^3 + a) < 0 and h -> +u^7 as u -> infinity, so the radial
 * epicyclic frequency always peaks outside the ISCO (at r = 8 for a = 0). h_t > 0 everywhere for
 * a <= 0; for a > 0 the vertical frequency peaks outside the photon orbit when h_t(u_ph) < 0
 * (a >~ 0.75), and outside the ISCO only for a >~ 0.9524. The orbital and precession frequencies
 * decrease monotonically (Omega, and the positive factors 1 - sqrt F_r and |1 - sqrt F_theta|,
 * all decrease outward since dF_r/dr = 6 (u - a)^2/r^3 >= 0 and dF_theta/dr = 6a (u - a)/r^3,
 * with the sign of a). The root of h is found by Brent's method on a bracket from these signs.
 */
export function frequencyPeak(kind: FrequencyKind, a: number): { r: number; omega: number } | undefined {
  assertSpin(a);
  if (kind !== 'radial_epicyclic' && kind !== 'vertical_epicyclic') return undefined;
  if (kind === 'vertical_epicyclic' && a <= 0) return undefined;
  const h =
    kind === 'radial_epicyclic'
      ? (r: number) => {
          const u = Math.sqrt(r);
          const p = radialFactorUnchecked(r, a) * r * r; // P(u), BPT72 eq. 2.20 / OKF87
          return u * u * u * p - 2 * (u - a) * (u - a) * (u * u * u + a);
        }
      : (r: number) => {
          const u = Math.sqrt(r);
          const n = verticalFactorUnchecked(r, a) * r * r; // N(u), Kato 1990
          return u * u * u * n - 2 * a * (u - a) * (u * u * u + a);
        };
  const dom = frequencyDomain(kind, a);
  let lo = dom.lo;
  if (!(h(lo) < 0)) {
    // h(lo) = 0 only for the degenerate extremal edge (a = 1, r_ph = r_ms = 1): h < 0 just outside.
    if (kind === 'vertical_epicyclic' && h(lo) > 0 && a < 1) return undefined; // monotone: no peak
    lo = lo + 1e-3;
    if (!(h(lo) < 0)) return undefined;
  }
  let hi = 2 * lo + 8;
  for (let i = 0; i < 60 && !(h(hi) > 0); i++) hi *= 2;
  const root = brent(h, lo, hi, { xRelTol: 4 * Number.EPSILON }).root;
  return { r: root, omega: Math.exp(lnFrequency(kind, root, a)) };
}

// ---------------------------------------------------------------------------
// The inverse problem: radii at which a frequency takes a given value

/** What values a frequency kind takes over its domain (angular, c^3/(GM)). */
export interface AchievableRange {
  /** Supremum of the frequency over the domain. */
  readonly max: number;
  /** Whether the supremum is reached (at a peak, or at a closed inner edge). */
  readonly maxAttained: boolean;
  /** Radius (rg) where the supremum is reached or approached. */
  readonly rMax: number;
  /** Value at the inner edge of the domain (equals max when the frequency is monotone). */
  readonly atInnerEdge: number;
  readonly domain: FrequencyDomain;
  readonly peak?: { r: number; omega: number };
}

export function achievableRange(kind: FrequencyKind, a: number): AchievableRange {
  assertSpin(a);
  const domain = frequencyDomain(kind, a);
  const peak = frequencyPeak(kind, a);
  let atInnerEdge = Math.exp(lnFrequency(kind, domain.lo, a));
  if (kind === 'nodal_precession' && a === 0) atInnerEdge = 0;
  if (peak && peak.omega >= atInnerEdge) return { max: peak.omega, maxAttained: true, rMax: peak.r, atInnerEdge, domain, peak };
  return { max: atInnerEdge, maxAttained: domain.loClosed, rMax: domain.lo, atInnerEdge, domain, peak };
}

/** A first guess of the radius (rg) where the frequency falls to w, from its large-r form. */
function farGuess(kind: FrequencyKind, w: number, a: number): number {
  switch (kind) {
    case 'periastron_precession':
      return Math.pow(3 / w, 0.4); // Omega - Omega_r ~ 3 r^(-5/2) (SV98, weak field)
    case 'nodal_precession':
      return Math.cbrt((2 * Math.abs(a)) / w); // Omega - Omega_theta ~ 2a r^(-3) (Lense-Thirring)
    default:
      return Math.pow(w, -2 / 3); // Omega ~ r^(-3/2) (Kepler)
  }
}

/** Result of an inversion: every radius (rg, ascending) with the frequency w. */
export interface RadiiForFrequency {
  readonly roots: number[];
  readonly range: AchievableRange;
}

/**
 * The radii (rg, ascending) of circular orbits whose frequency of `kind` equals w (angular,
 * c^3/(GM); the nodal precession as a magnitude), for signed spin a.
 *
 * "orbital": closed form r^(3/2) = 1/w - a (BPT72 eq. 2.16), one root outside the photon orbit.
 * Otherwise Brent's method on ln(frequency) - ln(w) over each monotone piece of the domain: one
 * root for the monotone kinds; for the radial epicyclic frequency (0 at the ISCO, a maximum
 * further out) two roots, one on each side of the peak, for 0 < w < max; for the vertical one
 * with a peak outside the photon orbit (a >~ 0.75) two roots when w lies between its value at
 * the photon orbit and the peak, one below.
 *
 * Throws a PhysicsDomainError (parameter "frequency") when no radius gives w; its `allowed`
 * states the achievable range in units of c^3/(GM). Callers wanting SI messages check
 * `achievableRange` first, and may pass it in as `known` (it must be for the same kind and a).
 */
export function radiiForFrequency(kind: FrequencyKind, w: number, a: number, known?: AchievableRange): RadiiForFrequency {
  assertSpin(a);
  const range = known ?? achievableRange(kind, a);
  const ok = w > 0 && Number.isFinite(w) && (range.maxAttained ? w <= range.max : w < range.max);
  if (!ok) {
    const allowed =
      range.max > 0
        ? `0 < frequency ${range.maxAttained ? '<=' : '<'} ${range.max} c^3/(GM) (angular), reached at r = ${range.rMax} GM/c^2`
        : `none: the ${kind.replace('_', ' ')} frequency is 0 for this spin`;
    throw new PhysicsDomainError(`no circular orbit has a ${kind.replace('_', ' ')} angular frequency of ${describe(w)} c^3/(GM)`, allowed, 'frequency');
  }
  if (kind === 'orbital') {
    // r^(3/2) = 1/Omega - a (BPT72 eq. 2.16), rg
    const x = 1 / w - a;
    const r = Math.cbrt(x * x);
    // Rounding can land a frequency just below Omega(r_ph) on r_ph itself: keep the root outside it.
    const lo = range.domain.lo;
    return { roots: [r > lo ? r : lo * (1 + 2 * Number.EPSILON)], range };
  }
  const lnW = Math.log(w);
  const g = (r: number) => lnFrequency(kind, r, a) - lnW;
  const roots: number[] = [];
  const peak = range.peak;
  const start = peak ? peak.r : range.domain.lo;
  // Inner (rising) piece: from the inner edge up to the peak.
  if (peak) {
    const lo = range.domain.lo;
    const fLo = kind === 'radial_epicyclic' ? 0 : range.atInnerEdge;
    if (w > fLo) {
      // Linear residual: ln(0) at the ISCO would stall the interpolation.
      const lin = (r: number) => Math.exp(lnFrequency(kind, r, a)) / w - 1;
      roots.push(w >= peak.omega ? peak.r : brent(lin, lo, peak.r).root);
    }
  }
  // Outer (falling) piece: from the peak (or the inner edge) outward.
  if (peak && w >= peak.omega) {
    if (roots.length === 0) roots.push(peak.r);
  } else {
    let hi = Math.max(2 * start, 2 * farGuess(kind, w, a));
    for (let i = 0; i < 2000 && !(g(hi) < 0) && Number.isFinite(hi); i++) hi *= 2;
    if (!Number.isFinite(hi)) {
      throw new PhysicsDomainError(`the ${kind.replace('_', ' ')} frequency ${w} c^3/(GM) is reached only beyond the representable radii`, 'a larger frequency', 'frequency');
    }
    const lo = start;
    const r = g(lo) <= 0 ? lo : brent(g, lo, hi).root;
    roots.push(r);
  }
  roots.sort((x, y) => x - y);
  return { roots, range };
}
