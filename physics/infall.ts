/**
 * Radial free fall into a Schwarzschild black hole, and the pulses a falling probe sends to a
 * static receiver: emission radius, Schwarzschild coordinate time of emission, arrival time on
 * the receiver's clock, arrival spacing and redshift.
 *
 * Units: geometric, lengths in rs = 2GM/c^2 and times in rs/c (c = 1); speeds in units of c.
 * A position is carried both as rho = r/rs and as the height above the horizon x = r/rs - 1,
 * which every formula uses directly, so nothing cancels near the horizon (tested to x = 1e-15;
 * the coordinate time diverges there like -ln x).
 *
 * Two falls:
 *   - from rest at R (rho_R = R/rs > 1): the cycloid r = (R/2)(1 + cos eta),
 *     tau = sqrt(R^3/(8GM)) (eta + sin eta) (MTW eq. 25.28), with the coordinate time t(eta) of
 *     MTW §31.4 (eq. 31.10b); specific energy E = sqrt(1 - rs/R);
 *   - from rest at infinity (E = 1): tau = (2/3)(r0^{3/2} - r^{3/2})/sqrt(2GM) and its closed-form
 *     t(r) (MTW §31.4, the E = 1 fall; the integral of dt/dr = -(r/rs)^{1/2}/(1 - rs/r)).
 * Proper time and coordinate time both start at 0 at the "clock start" radius (the first pulse).
 *
 * References
 *   MTW: C. W. Misner, K. S. Thorne & J. A. Wheeler 1973, "Gravitation" (Freeman), §25.5 (radial
 *        geodesics, eq. 25.28), §31.4 (fall through the horizon, eq. 31.10; t(r) for E = 1).
 *   Regge & Wheeler 1957, Phys. Rev. 108, 1063 (tortoise coordinate r* = r + rs ln(r/rs - 1)).
 *   Ames & Thorne 1968, ApJ 151, 659 (late-time redshift of an infalling source grows as
 *        exp(t c^3/(4GM)): e-folding time 4GM/c^3, the inverse surface gravity).
 */
import { PhysicsDomainError } from './errors.js';
import { brent } from './roots.js';

/** Where the fall starts: at rest at rho = R/rs, or at rest at infinity. */
export type FallStart = { kind: 'rest'; rho: number } | { kind: 'infinity' };

/** A point of the fall (geometric units: rs, rs/c). */
export interface FallPoint {
  /** Proper time since the clock start, rs/c. */
  tau: number;
  /** r/rs. */
  rho: number;
  /** r/rs - 1: height above the horizon in rs (negative inside), accurate near the horizon. */
  x: number;
  /** Inward coordinate speed in proper time, -dr/dtau (c). */
  speed: number;
  /** Schwarzschild coordinate time since the clock start, rs/c (NaN at or inside the horizon). */
  t: number;
  /** Parameter of the closed form: the cycloid angle eta (fall from rest at R) or u = sqrt(r/rs) (from infinity). */
  param: number;
}

export interface Fall {
  readonly start: FallStart;
  /** r/rs at the clock start (proper and coordinate time 0). */
  readonly rhoClock: number;
  /** Conserved specific energy E = (1 - rs/r) dt/dtau (dimensionless; MTW §25.5). */
  readonly energy: number;
  /** Proper time from the clock start to the horizon, rs/c. */
  readonly horizonTau: number;
  /** Proper time from the clock start to the singularity r = 0, rs/c. */
  readonly singularityTau: number;
  /** The point reached at proper time tau (0 <= tau <= singularityTau) since the clock start. */
  at(tau: number): FallPoint;
  /** The point at height x = r/rs - 1 (0 <= x <= rhoClock - 1). */
  atHeight(x: number): FallPoint;
  /** x_p - x_q (rs), without cancellation when the points are close. */
  heightBetween(p: FallPoint, q: FallPoint): number;
  /** t_p - t_q (rs/c) for points outside the horizon, without cancellation when they are close. */
  timeBetween(p: FallPoint, q: FallPoint): number;
}

/** Builds the fall from `start` with its clock starting at r = rhoClock rs. */
export function makeFall(start: FallStart, rhoClock: number): Fall {
  if (!(rhoClock > 1) || !Number.isFinite(rhoClock)) {
    throw new PhysicsDomainError(`the clock-start radius ${rhoClock} rs is not outside the horizon`, 'rs < r < 1e300 m', 'rhoClock');
  }
  if (start.kind === 'rest') {
    if (!(start.rho > 1) || !Number.isFinite(start.rho)) {
      throw new PhysicsDomainError(`the release radius ${start.rho} rs is not outside the horizon`, 'r > rs', 'rho');
    }
    if (!(rhoClock <= start.rho)) {
      throw new PhysicsDomainError(`the clock-start radius ${rhoClock} rs is above the release radius ${start.rho} rs`, 'rs < clock start <= release radius', 'rhoClock');
    }
    return restFall(start.rho, rhoClock);
  }
  return infinityFall(rhoClock);
}

/** ln(p/q) for p, q > 0 without overflow of the ratio. */
function logRatio(p: number, q: number): number {
  const r = p / q;
  return r > 0 && Number.isFinite(r) ? Math.log(r) : Math.log(p) - Math.log(q);
}

/** ln(x_p/x_q) given d = x_p - x_q computed without cancellation: log1p(d/x_q) when the ratio is near 1. */
function logHeightRatio(p: FallPoint, q: FallPoint, d: number): number {
  const r = d / q.x;
  return Math.abs(r) < 0.5 ? Math.log1p(r) : logRatio(p.x, q.x);
}

// ---------------------------------------------------------------------------
// Fall from rest at R: the cycloid

function restFall(rhoR: number, rhoClock: number): Fall {
  const a2 = rhoR - 1; // R/rs - 1
  const a = Math.sqrt(a2); // (R/2M - 1)^{1/2} of MTW eq. 31.10b = tan(eta_H/2)
  const sR = Math.sqrt(rhoR);
  const energy = a / sR; // E = sqrt(1 - rs/R) (MTW §25.5), dimensionless
  const A = (rhoR * sR) / 2; // sqrt(R^3/(8GM)) in rs/c: tau = A (eta + sin eta) (MTW eq. 25.28)
  const etaH = 2 * Math.atan(a); // eta at the horizon: cos^2(eta_H/2) = rs/R
  const tauHorizon0 = A * (etaH + (2 * a) / rhoR); // sin eta_H = 2a/(1 + a^2) = 2a/rho_R
  const tauSingularity0 = A * Math.PI; // eta = pi: r = 0 (MTW eq. 25.28), rs/c

  // A point: rho = R cos^2(eta/2) = rho_R/(1 + T^2), T = tan(eta/2) (MTW eq. 25.28); inward speed
  // -dr/dtau = sqrt(rs/r - rs/R) = T/sqrt(rho_R) (MTW §25.5). tau is set by the caller.
  const point = (eta: number, T: number, x: number, tau: number): FallPoint => ({ tau, rho: rhoR / (1 + T * T), x, speed: T / sR, t: NaN, param: eta });
  /** x = rho_R (cos^2(eta/2) - cos^2(eta_H/2)) = rho_R sin((eta_H + eta)/2) sin((eta_H - eta)/2) (identity). */
  const heightAtEta = (eta: number): number => {
    const h = 0.5 * (etaH - eta);
    return rhoR * Math.sin(etaH - h) * Math.sin(h);
  };
  /** Point at height x, tau0 from the release: tan(eta/2) = sqrt(R/r - 1), tau0 = A (eta + sin eta) (MTW eq. 25.28). */
  const fromHeight = (x: number): { p: FallPoint; tau0: number } => {
    const T = Math.sqrt(Math.max(0, a2 - x) / (1 + x));
    const eta = 2 * Math.atan(T);
    return { p: point(eta, T, x, NaN), tau0: A * (eta + (2 * T) / (1 + T * T)) };
  };
  const heightBetween = (p: FallPoint, q: FallPoint): number => {
    // rho_R (cos^2(eta_p/2) - cos^2(eta_q/2)) = rho_R sin((eta_q + eta_p)/2) sin((eta_q - eta_p)/2) (identity)
    const d = p.x - q.x;
    if (Math.abs(d) > 0.5 * Math.max(Math.abs(p.x), Math.abs(q.x))) return d;
    return rhoR * Math.sin(0.5 * (q.param + p.param)) * Math.sin(0.5 * (q.param - p.param));
  };
  /**
   * t_p - t_q from MTW eq. 31.10b in rs/c: t = L + a eta + a (rho_R/2)(eta + sin eta), where
   * a (rho_R/2)(eta + sin eta) = E tau0 and L = ln|(a + T)/(a - T)| = 2 artanh(T/a). Far from the
   * horizon (T/a < 1/2): L_p - L_q = 2 artanh((u_p - u_q)/(1 - u_p u_q)), u = T/a, with
   * T_p - T_q = sin((eta_p - eta_q)/2)/(cos(eta_p/2) cos(eta_q/2)); nearer the horizon
   * L = ln((a + T)^2 rho/(rho_R x)) (as a^2 - T^2 = rho_R x/rho), differenced as a ratio.
   */
  const timeBetween = (p: FallPoint, q: FallPoint): number => {
    if (!(p.x > 0) || !(q.x > 0)) return NaN;
    const Tp = Math.tan(p.param / 2);
    const Tq = Math.tan(q.param / 2);
    let dL: number;
    if (Tp < 0.5 * a && Tq < 0.5 * a) {
      const dT = Math.sin(0.5 * (p.param - q.param)) / (Math.cos(p.param / 2) * Math.cos(q.param / 2));
      dL = 2 * Math.atanh(dT / a / (1 - (Tp / a) * (Tq / a)));
    } else {
      dL = 2 * Math.log((a + Tp) / (a + Tq)) + Math.log(p.rho / q.rho) + logRatio(q.x, p.x);
    }
    return dL + a * (p.param - q.param) + energy * (p.tau - q.tau);
  };

  const start = fromHeight(rhoClock - 1);
  const clock = { ...start.p, tau: 0, t: 0 };
  const tauClock0 = start.tau0;
  const at = (tau: number): FallPoint => {
    const tau0 = tauClock0 + tau;
    if (!(tau >= 0) || !(tau0 <= tauSingularity0)) {
      throw new RangeError(`proper time ${tau} rs/c is outside the fall (0 to ${tauSingularity0 - tauClock0} rs/c)`);
    }
    if (tau === 0) return clock;
    const y = tau0 / A;
    // eta + sin eta = y (MTW eq. 25.28): increasing on [0, pi]; Brent's method to a few ulp.
    const eta = y >= Math.PI ? Math.PI : brent((e) => e + Math.sin(e) - y, 0, Math.PI).root;
    const p = point(eta, Math.tan(eta / 2), heightAtEta(eta), tau);
    p.t = timeBetween(p, clock);
    return p;
  };
  const atHeight = (x: number): FallPoint => {
    const h = fromHeight(x);
    h.p.tau = h.tau0 - tauClock0;
    h.p.t = timeBetween(h.p, clock);
    return h.p;
  };
  return {
    start: { kind: 'rest', rho: rhoR },
    rhoClock,
    energy,
    horizonTau: tauHorizon0 - tauClock0,
    singularityTau: tauSingularity0 - tauClock0,
    at,
    atHeight,
    heightBetween,
    timeBetween,
  };
}

// ---------------------------------------------------------------------------
// Fall from rest at infinity (E = 1)

function infinityFall(rhoClock: number): Fall {
  const xc = rhoClock - 1;
  // Proper time to the horizon and to r = 0 from r0: (2/3)(r0^{3/2} - r^{3/2})/sqrt(2GM) (MTW §31.4),
  // in rs/c: (2/3)(rho0^{3/2} - 1) = (2/3) expm1((3/2) log1p(x0)), and (2/3) rho0^{3/2}.
  const horizonTau = (2 / 3) * Math.expm1(1.5 * Math.log1p(xc));
  const singularityTau = (2 / 3) * rhoClock * Math.sqrt(rhoClock);

  /**
   * The point s = tau_H - tau (rs/c) before the horizon: rho^{3/2} = 1 + (3/2) s, so
   * x = expm1((2/3) log1p(3s/2)) (no cancellation near the horizon) and u = sqrt(rho) =
   * (1 + 3s/2)^{1/3}; speed -dr/dtau = sqrt(rs/r) (MTW §25.5 with E = 1).
   */
  const fromS = (s: number, tau: number): FallPoint => {
    const l = Math.log1p(1.5 * s); // ln(rho^{3/2})
    const u = Math.exp(l / 3);
    return { tau, rho: u * u, x: Math.expm1((2 / 3) * l), speed: 1 / u, t: NaN, param: u };
  };
  /** u_p - u_q: from u^3 = 1 + (3/2)(tau_H - tau), u_p - u_q = -(3/2)(tau_p - tau_q)/(u_p^2 + u_p u_q + u_q^2) when close. */
  const uBetween = (p: FallPoint, q: FallPoint): number => {
    const d = p.param - q.param;
    if (Math.abs(d) > 0.5 * q.param) return d;
    return (-1.5 * (p.tau - q.tau)) / (p.param * p.param + p.param * q.param + q.param * q.param);
  };
  const heightBetween = (p: FallPoint, q: FallPoint): number => {
    const d = p.x - q.x;
    if (Math.abs(d) > 0.5 * Math.max(Math.abs(p.x), Math.abs(q.x))) return d;
    return uBetween(p, q) * (p.param + q.param); // rho_p - rho_q = (u_p - u_q)(u_p + u_q)
  };
  /**
   * t_p - t_q from t(r)/rs = -(2/3) u^3 - 2u + ln((u + 1)/(u - 1)) + const, u = sqrt(r/rs)
   * (MTW §31.4), in rs/c: (tau_p - tau_q) - 2 (u_p - u_q) + 2 ln((u_p + 1)/(u_q + 1)) - ln(x_p/x_q),
   * using (2/3)(u_q^3 - u_p^3) = tau_p - tau_q and ln((u + 1)/(u - 1)) = 2 ln(u + 1) - ln x.
   */
  const timeBetween = (p: FallPoint, q: FallPoint): number => {
    if (!(p.x > 0) || !(q.x > 0)) return NaN;
    const du = uBetween(p, q);
    return p.tau - q.tau - 2 * du + 2 * Math.log1p(du / (q.param + 1)) - logHeightRatio(p, q, heightBetween(p, q));
  };

  const clock: FallPoint = { tau: 0, rho: rhoClock, x: xc, speed: 1 / Math.sqrt(rhoClock), t: 0, param: Math.sqrt(rhoClock) };
  const at = (tau: number): FallPoint => {
    if (!(tau >= 0) || !(tau <= singularityTau)) {
      throw new RangeError(`proper time ${tau} rs/c is outside the fall (0 to ${singularityTau} rs/c)`);
    }
    if (tau === 0) return clock;
    const p = fromS(horizonTau - tau, tau);
    p.t = timeBetween(p, clock);
    return p;
  };
  const atHeight = (x: number): FallPoint => {
    const s = (2 / 3) * Math.expm1(1.5 * Math.log1p(x)); // (2/3)(rho^{3/2} - 1)
    const p: FallPoint = { ...fromS(s, horizonTau - s), x, rho: 1 + x, param: Math.sqrt(1 + x) };
    p.t = timeBetween(p, clock);
    return p;
  };
  return { start: { kind: 'infinity' }, rhoClock, energy: 1, horizonTau, singularityTau, at, atHeight, heightBetween, timeBetween };
}

// ---------------------------------------------------------------------------
// Light to a static receiver, and what the receiver measures

/** A static receiver at r = rho rs (rho > 1). */
export interface Receiver {
  rho: number;
  /** rho - 1 (> 0). */
  x: number;
  /** Lapse sqrt(1 - rs/r) = sqrt(x/rho): receiver proper time per unit coordinate time. */
  lapse: number;
}

export function makeReceiver(rho: number, x = rho - 1): Receiver {
  if (!(x > 0) || !Number.isFinite(rho)) {
    throw new PhysicsDomainError(`a static receiver at ${rho} rs is not outside the horizon`, 'r > rs', 'rhoObserver');
  }
  return { rho, x, lapse: Math.sqrt(x / rho) }; // sqrt(1 - rs/r) (MTW ch. 31), dimensionless
}

/**
 * Coordinate time light takes from the emission point to the receiver along a radial null ray,
 * rs/c: |r*(receiver) - r*(emitter)| with the tortoise coordinate r* = rs (rho + ln(rho - 1))
 * (Regge & Wheeler 1957), written as (x_o - x_e) + ln(x_o/x_e). Outgoing light when the emitter
 * is below the receiver, ingoing when it is at or above it.
 */
export function lightTime(p: FallPoint, rec: Receiver): number {
  const d = rec.x - p.x + logRatio(rec.x, p.x); // r*_o - r*_e, rs
  return p.rho < rec.rho ? d : -d;
}

/**
 * 1 + z = nu_emitted/nu_received of a radial photon from the falling probe to the static
 * receiver: the ratio of the photon energies each measures, -k.u (MTW ch. 2), with the probe's
 * u^t = E/(1 - rs/r), u^r = -sqrt(E^2 - 1 + rs/r) (MTW §25.5) and the receiver's
 * u^t = 1/sqrt(1 - rs/r_o). Outgoing photon: 1 + z = sqrt(f_o) (E + v)/f_e; ingoing:
 * sqrt(f_o) (E - v)/f_e = sqrt(f_o)/(E + v) (since E^2 - v^2 = f_e), with f = 1 - rs/r = x/rho.
 * Dimensionless.
 */
export function onePlusZ(fall: Fall, p: FallPoint, rec: Receiver): number {
  const ePlusV = fall.energy + p.speed;
  return p.rho < rec.rho ? (rec.lapse * ePlusV * p.rho) / p.x : rec.lapse / ePlusV;
}

/**
 * Late-time e-folding time of 1 + z on the receiver's clock, rs/c: 1 + z ~ exp(t/(2 rs/c)) in
 * coordinate time (Ames & Thorne 1968; 2 rs/c = 4GM/c^3 = c/kappa), times the receiver's lapse.
 */
export function efoldingTime(rec: Receiver): number {
  return 2 * rec.lapse;
}

// ---------------------------------------------------------------------------
// The pulse timeline

/** Pulses k = first, first + step, ..., count of them; pulse k is emitted at tau = k dtau. */
export interface PulseSelection {
  first: number;
  step: number;
  count: number;
}

/** Per pulse, in geometric units (rs, rs/c). */
export interface Timeline {
  index: Float64Array;
  tau: Float64Array;
  rho: Float64Array;
  /** Coordinate time of emission since the clock start, rs/c. */
  emission: Float64Array;
  /** Arrival on the receiver's clock (its proper time; 0 at coordinate time 0), rs/c. */
  arrival: Float64Array;
  /** Arrival time minus the arrival time of pulse k - 1 (receiver's clock), rs/c; NaN for k = 0. */
  interval: Float64Array;
  onePlusZ: Float64Array;
}

/** The pulse that is emitted at or inside the horizon can never reach the receiver. */
function emitted(fall: Fall, k: number, dtau: number): FallPoint {
  const p = fall.at(k * dtau);
  if (!(p.x > 0) || !Number.isFinite(p.t)) {
    throw new PhysicsDomainError(
      `pulse ${k} is emitted at or inside the horizon (proper time ${k * dtau} rs/c, horizon at ${fall.horizonTau} rs/c) and never arrives`,
      `pulses emitted before proper time ${fall.horizonTau} rs/c (the horizon)`,
      'pulse_interval',
    );
  }
  return p;
}

/**
 * Emission and arrival of the selected pulses. The spacing of consecutive arrivals is computed
 * from the emission-side terms only, (t_k - t_{k-1}) + (light time_k - light time_{k-1}) with the
 * receiver's r* cancelled analytically, so it stays accurate for a distant receiver.
 */
export function pulseTimeline(fall: Fall, rec: Receiver, dtau: number, sel: PulseSelection): Timeline {
  const n = sel.count;
  const out: Timeline = {
    index: new Float64Array(n),
    tau: new Float64Array(n),
    rho: new Float64Array(n),
    emission: new Float64Array(n),
    arrival: new Float64Array(n),
    interval: new Float64Array(n),
    onePlusZ: new Float64Array(n),
  };
  let prevK = -2;
  let prev: FallPoint | undefined;
  for (let j = 0; j < n; j++) {
    const k = sel.first + j * sel.step;
    const p = emitted(fall, k, dtau);
    const light = lightTime(p, rec);
    out.index[j] = k;
    out.tau[j] = p.tau;
    out.rho[j] = p.rho;
    out.emission[j] = p.t;
    out.arrival[j] = rec.lapse * (p.t + light); // receiver proper time = sqrt(f_o) t (MTW ch. 31)
    out.onePlusZ[j] = onePlusZ(fall, p, rec);
    if (k === 0) {
      out.interval[j] = NaN;
    } else {
      const q = prevK === k - 1 && prev ? prev : emitted(fall, k - 1, dtau);
      const outgoingP = p.rho < rec.rho;
      const outgoingQ = q.rho < rec.rho;
      // Same direction: difference of light times = -+[(x_p - x_q) + ln(x_p/x_q)] (r*_o cancels).
      const dx = fall.heightBetween(p, q);
      const dLight = outgoingP === outgoingQ ? (outgoingP ? -1 : 1) * (dx + logHeightRatio(p, q, dx)) : light - lightTime(q, rec);
      out.interval[j] = rec.lapse * (fall.timeBetween(p, q) + dLight);
    }
    prevK = k;
    prev = p;
  }
  return out;
}

/** Index bounds of a timeline: what arrives, what is emitted, and which pulses are selected. */
export interface TimelinePlan {
  /** Index of the last pulse emitted outside the horizon (the last that ever arrives). */
  lastArriving: number;
  /** Index of the last pulse emitted before the singularity. */
  lastEmitted: number;
  selection: PulseSelection;
}

/**
 * Plans the timeline for pulses every `dtau` (rs/c) of proper time from the clock start, keeping
 * every `every`-th pulse (k = 0, every, 2 every, ...) whose emission height lies in
 * [xMin, xMax] (heights x = r/rs - 1; undefined: no bound). Pure index arithmetic plus a few
 * point evaluations: the cost does not grow with the number of pulses.
 */
export function planTimeline(fall: Fall, dtau: number, every: number, xMin?: number, xMax?: number): TimelinePlan {
  if (!(dtau > 0) || !(fall.singularityTau / dtau <= Number.MAX_SAFE_INTEGER) || !(every >= 1)) {
    throw new RangeError(`planTimeline: ${fall.singularityTau / dtau} pulses before r = 0 (at most 2^53 - 1: indices must stay exact), every = ${every}`);
  }
  const arrivingBelow = (k: number) => fall.at(k * dtau).x > 0;
  // Last pulse strictly before the horizon: ceil(tau_H/dtau) - 1, settled against the points
  // themselves so that rounding in the ratio cannot list a pulse emitted at the horizon.
  let lastArriving = Math.max(0, Math.ceil(fall.horizonTau / dtau) - 1);
  for (let i = 0; i < 4 && lastArriving > 0 && !arrivingBelow(lastArriving); i++) lastArriving--;
  if ((lastArriving + 1) * dtau <= fall.singularityTau && arrivingBelow(lastArriving + 1)) lastArriving++;
  let lastEmitted = Math.max(lastArriving, Math.ceil(fall.singularityTau / dtau) - 1);
  if (lastEmitted > lastArriving && lastEmitted * dtau >= fall.singularityTau) lastEmitted--;

  let kMin = 0;
  let kMax = lastArriving;
  if (xMax !== undefined && xMax < fall.rhoClock - 1) kMin = Math.ceil(fall.atHeight(Math.max(xMax, 0)).tau / dtau);
  if (xMin !== undefined && xMin > 0) {
    kMax = xMin >= fall.rhoClock - 1 ? (xMin === fall.rhoClock - 1 ? 0 : -1) : Math.min(kMax, Math.floor(fall.atHeight(xMin).tau / dtau));
  }
  const first = Math.ceil(kMin / every) * every;
  const count = kMax < first ? 0 : Math.floor((kMax - first) / every) + 1;
  return { lastArriving, lastEmitted, selection: { first, step: every, count } };
}
