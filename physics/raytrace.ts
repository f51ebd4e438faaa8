/**
 * Backward ray tracing of photons from a distant observer's image plane to the equatorial plane
 * of a Kerr black hole, in Boyer-Lindquist coordinates with G = c = M = 1 (lengths in rg = GM/c^2).
 *
 * A ray is labelled by its image-plane coordinates (alpha, beta) (Bardeen 1973; Cunningham &
 * Bardeen 1973): alpha across the projected spin axis, beta along it, with the constants of motion
 * (per unit energy) lambda = L_z/E = -alpha sin i and Carter's q = Q/E^2 = beta^2 + (alpha^2 - a^2) cos^2 i.
 * The sign convention matches /v1/shadow: for a* > 0 the co-rotating side is at negative alpha.
 *
 * The geodesic is integrated in Mino time (Mino 2003, Phys. Rev. D 67, 084027: dlambda_M = dtau/Sigma),
 * in which the radial and polar motions decouple, with u = 1/r instead of r so that the integration
 * starts exactly at the observer (u = 0) and the first integrals are kept to ~1e-9 (notes in
 * ../shared/design/ray-tracing.md):
 *   (du/dl)^2 = P(u) = u^4 R(1/u) = 1 + (a^2 - lambda^2 - q) u^2 + 2 (q + (lambda - a)^2) u^3 - a^2 q u^4,
 *   d2u/dl2 = P'(u)/2,
 *   (dmu/dl)^2 = M(mu) = q - (q + lambda^2 - a^2) mu^2 - a^2 mu^4,  mu = cos(theta),
 *   d2mu/dl2 = M'(mu)/2 = mu (a^2 - q - lambda^2 - 2 a^2 mu^2),
 * from Carter 1968 (Phys. Rev. 174, 1559) R(r) = (r^2 + a^2 - a lambda)^2 - Delta (q + (lambda - a)^2)
 * and Theta(theta) = q + a^2 cos^2 theta - lambda^2 cot^2 theta. At the observer u = 0, du/dl = 1,
 * mu = cos i and dmu/dl = beta sin i (the ray's offset along the projected axis raises its latitude).
 * The integrator is Dormand & Prince 1980 (J. Comput. Appl. Math. 6, 19) RK5(4) with the standard
 * step-size control (Hairer, Norsett & Wanner, Solving ODEs I, section II.4). In Mino time the
 * horizon is a regular point (R(r_+) >= 0), so rays are simply followed until they cross it.
 */

/** What a traced ray does: hits the disk, falls into the hole, or escapes. */
export const RayFate = {
  Disk: 1,
  Captured: 2,
  Escaped: 3,
  /** Gave up (too many steps or plane crossings): treated as not reaching the disk. */
  Lost: 4,
} as const;
export type RayFate = (typeof RayFate)[keyof typeof RayFate];

export interface TraceOptions {
  /** Spin a* in [-1, 1]. */
  a: number;
  /** Observer inclination from the spin axis, rad, in [0, pi/2). */
  inclination: number;
  /** Disk inner and outer radii, rg (r_in above the outer horizon). */
  rIn: number;
  rOut: number;
  /** Relative and absolute error tolerances of the integrator. */
  rtol: number;
  atol?: number;
  /** Largest number of equatorial-plane crossings followed (1 = direct image only). */
  maxCrossings?: number;
  /** Largest number of integration steps per ray. */
  maxSteps?: number;
  /** When set, the largest drift of the two first integrals is measured along each ray. */
  measureDrift?: boolean;
}

export interface RayResult {
  fate: RayFate;
  /** Radius of the disk hit (rg); with `Escaped`/`Captured`, the first plane crossing radius or -1 when none. */
  r: number;
  /** Photon constants per unit energy: lambda = L_z/E (rg) and Carter's q = Q/E^2 (rg^2). */
  lambda: number;
  q: number;
  /** Number of equatorial-plane crossings up to and including the hit (1 = direct image). */
  order: number;
  /** Radius of the first plane crossing (rg), or -1 when the ray never crossed the plane. */
  rFirst: number;
  steps: number;
  /** Largest |(du/dl)^2 - P(u)| and |(dmu/dl)^2 - M(mu)| along the ray (with measureDrift). */
  driftRadial: number;
  driftPolar: number;
}

/** Outer horizon radius r_+ = 1 + sqrt(1 - a^2) (Boyer & Lindquist 1967), rg, for |a| <= 1. */
function horizon(a: number): number {
  return 1 + Math.sqrt((1 - a) * (1 + a));
}

// Dormand-Prince RK5(4) coefficients (Dormand & Prince 1980, table 2).
const A21 = 1 / 5;
const A31 = 3 / 40, A32 = 9 / 40;
const A41 = 44 / 45, A42 = -56 / 15, A43 = 32 / 9;
const A51 = 19372 / 6561, A52 = -25360 / 2187, A53 = 64448 / 6561, A54 = -212 / 729;
const A61 = 9017 / 3168, A62 = -355 / 33, A63 = 46732 / 5247, A64 = 49 / 176, A65 = -5103 / 18656;
const B1 = 35 / 384, B3 = 500 / 1113, B4 = 125 / 192, B5 = -2187 / 6784, B6 = 11 / 84;
const E1 = 71 / 57600, E3 = -71 / 16695, E4 = 71 / 1920, E5 = -17253 / 339200, E6 = 22 / 525, E7 = -1 / 40;

/**
 * A reusable tracer for one geometry (spin, inclination, disk radii, tolerance). `trace(alpha,
 * beta)` follows one ray backward from the image plane; the returned object is reused between
 * calls (copy what you keep).
 */
export class KerrRayTracer {
  readonly a: number;
  readonly inclination: number;
  readonly rIn: number;
  readonly rOut: number;
  readonly rHorizon: number;
  private readonly rtol: number;
  private readonly atol: number;
  private readonly maxCrossings: number;
  private readonly maxSteps: number;
  private readonly measureDrift: boolean;
  private readonly sinI: number;
  private readonly cosI: number;
  private readonly out: RayResult = { fate: RayFate.Lost, r: -1, lambda: 0, q: 0, order: 0, rFirst: -1, steps: 0, driftRadial: 0, driftPolar: 0 };

  constructor(o: TraceOptions) {
    this.a = o.a;
    this.inclination = o.inclination;
    this.rIn = o.rIn;
    this.rOut = o.rOut;
    this.rHorizon = horizon(o.a);
    this.rtol = o.rtol;
    this.atol = o.atol ?? o.rtol * 1e-3;
    this.maxCrossings = o.maxCrossings ?? 6;
    this.maxSteps = o.maxSteps ?? 4000;
    this.measureDrift = o.measureDrift ?? false;
    this.sinI = Math.sin(o.inclination);
    this.cosI = Math.cos(o.inclination);
  }

  /** Traces the ray through image point (alpha, beta), rg. */
  trace(alpha: number, beta: number): RayResult {
    const a = this.a;
    const a2 = a * a;
    const lam = -alpha * this.sinI; // lambda = -alpha sin i (Bardeen 1973)
    const q = beta * beta + (alpha * alpha - a2) * this.cosI * this.cosI; // Carter's constant per E^2 (Cunningham & Bardeen 1973)
    // Coefficients of P'(u)/2 = c1 u + c2 u^2 + c3 u^3 and M'(mu)/2 = mu (d1 + d3 mu^2).
    const c1 = a2 - lam * lam - q;
    const c2 = 3 * (q + (lam - a) * (lam - a));
    const c3 = -2 * a2 * q;
    const d1 = a2 - q - lam * lam;
    const d3 = -2 * a2;
    const uH = 1 / this.rHorizon;
    const uOut = 1 / this.rOut;
    const rIn = this.rIn;
    const rOut = this.rOut;
    const rtol = this.rtol;
    const atol = this.atol;
    const res = this.out;
    res.lambda = lam;
    res.q = q;
    res.order = 0;
    res.rFirst = -1;
    res.r = -1;
    res.driftRadial = 0;
    res.driftPolar = 0;

    // state: u, v = du/dl, m = mu, w = dmu/dl
    let u = 0;
    let v = 1;
    let m = this.cosI;
    let w = beta * this.sinI;
    // FSAL derivatives at the current point: (v, fu, w, fm)
    let fu = u * (c1 + u * (c2 + u * c3));
    let fm = m * (d1 + d3 * m * m);
    // The first step: a fraction of the Mino time to reach r ~ the image radius (~ 1/rho).
    const rho = Math.sqrt(alpha * alpha + beta * beta);
    let h = Math.min(0.05, 0.1 / Math.max(rho, 1));
    const hMax = 0.5;
    let crossings = 0;
    let steps = 0;
    const drift = this.measureDrift;
    while (true) {
      if (steps >= this.maxSteps) {
        res.fate = RayFate.Lost;
        res.steps = steps;
        return res;
      }
      steps++;
      // --- one Dormand-Prince step of size h from (u, v, m, w) ---
      this.rkStep(u, v, m, w, fu, fm, h, c1, c2, c3, d1, d3);
      const nu = this.cu, nv = this.cv, nm = this.cm, nw = this.cw;
      const k7v = nu * (c1 + nu * (c2 + nu * c3)), k7w = nm * (d1 + d3 * nm * nm);
      // embedded error estimate (stages 1-6 from rkStep, plus the FSAL stage 7), scaled RMS norm
      const eu = this.eu + h * E7 * nv;
      const ev = this.ev + h * E7 * k7v;
      const em = this.em + h * E7 * nw;
      const ew = this.ew + h * E7 * k7w;
      const su = eu / (atol + rtol * Math.max(Math.abs(u), Math.abs(nu)));
      const sv = ev / (atol + rtol * Math.max(Math.abs(v), Math.abs(nv)));
      const sm = em / (atol + rtol * Math.max(Math.abs(m), Math.abs(nm)));
      const sw = ew / (atol + rtol * Math.max(Math.abs(w), Math.abs(nw)));
      const err = Math.sqrt((su * su + sv * sv + sm * sm + sw * sw) / 4);
      if (!(err <= 1)) {
        // rejected: shrink (also when err is NaN from an overflow)
        h *= Number.isFinite(err) ? Math.max(0.2, 0.9 * Math.pow(err, -0.2)) : 0.1;
        continue;
      }
      // --- accepted ---
      if ((m > 0) !== (nm > 0) || nm === 0) {
        // The ray crossed the equatorial plane within this step: find the crossing step size
        // by Newton's method on mu(h) with exact RK steps from the step's start.
        crossings++;
        const hc = this.crossingStep(u, v, m, w, fu, fm, h, nm, nw, c1, c2, c3, d1, d3);
        const uc = this.cu;
        const rc = 1 / uc;
        if (crossings === 1) res.rFirst = uc > 0 ? rc : -1;
        if (uc > 0 && uc <= uH && rc >= rIn && rc <= rOut) {
          res.fate = RayFate.Disk;
          res.r = rc;
          res.order = crossings;
          res.steps = steps;
          if (drift) this.recordDrift(this.cu, this.cv, this.cm, this.cw, c1, c2, c3, d1, d3, q, lam);
          return res;
        }
        void hc;
        if (crossings >= this.maxCrossings) {
          res.fate = RayFate.Lost;
          res.steps = steps;
          return res;
        }
      }
      u = nu;
      v = nv;
      m = nm;
      w = nw;
      fu = k7v;
      fm = k7w;
      if (drift) this.recordDrift(u, v, m, w, c1, c2, c3, d1, d3, q, lam);
      if (u > uH) {
        res.fate = RayFate.Captured;
        res.steps = steps;
        return res;
      }
      if (v < 0 && u < uOut) {
        // moving outward beyond the disk's outer edge: nothing more to hit
        res.fate = RayFate.Escaped;
        res.steps = steps;
        return res;
      }
      const fac = err === 0 ? 5 : Math.min(5, Math.max(0.2, 0.9 * Math.pow(err, -0.2)));
      h = Math.min(hMax, h * fac);
    }
  }

  // State at the located crossing (set by crossingStep).
  private cu = 0;
  private cv = 0;
  private cm = 0;
  private cw = 0;

  /**
   * Step size s in (0, h] at which mu = 0, by Newton's method on exact RK steps of size s
   * (each as accurate as the accepted step of size h); sets cu, cv, cm, cw.
   */
  private crossingStep(u: number, v: number, m: number, w: number, fu: number, fm: number, h: number, nm: number, nw: number,
    c1: number, c2: number, c3: number, d1: number, d3: number): number {
    // start from the cubic Hermite estimate on mu with slopes w (start) and nw (end)
    let s = h * (m / (m - nm));
    if (!(s > 0 && s <= h)) s = h / 2;
    void nw;
    let lo = 0;
    let hi = h;
    for (let it = 0; it < 8; it++) {
      this.rkStep(u, v, m, w, fu, fm, s, c1, c2, c3, d1, d3);
      const mu = this.cm;
      if (mu === 0) return s;
      if ((mu > 0) === (m > 0)) lo = s; else hi = s;
      const ds = mu / this.cw;
      let next = s - ds;
      if (!(next > lo && next < hi)) next = (lo + hi) / 2;
      if (Math.abs(next - s) <= 1e-15 * h) {
        s = next;
        break;
      }
      s = next;
    }
    this.rkStep(u, v, m, w, fu, fm, s, c1, c2, c3, d1, d3);
    return s;
  }

  // Stages 1-6 of the embedded error estimate of the last rkStep (the FSAL stage 7 is added by the caller).
  private eu = 0;
  private ev = 0;
  private em = 0;
  private ew = 0;

  /** One Dormand-Prince step (5th-order solution) of size s; result in cu, cv, cm, cw; error stages in eu..ew. */
  private rkStep(u: number, v: number, m: number, w: number, fu: number, fm: number, s: number,
    c1: number, c2: number, c3: number, d1: number, d3: number): void {
    const k1u = v, k1v = fu, k1m = w, k1w = fm;
    let tu = u + s * A21 * k1u, tv = v + s * A21 * k1v, tm = m + s * A21 * k1m, tw = w + s * A21 * k1w;
    const k2u = tv, k2v = tu * (c1 + tu * (c2 + tu * c3)), k2m = tw, k2w = tm * (d1 + d3 * tm * tm);
    tu = u + s * (A31 * k1u + A32 * k2u); tv = v + s * (A31 * k1v + A32 * k2v);
    tm = m + s * (A31 * k1m + A32 * k2m); tw = w + s * (A31 * k1w + A32 * k2w);
    const k3u = tv, k3v = tu * (c1 + tu * (c2 + tu * c3)), k3m = tw, k3w = tm * (d1 + d3 * tm * tm);
    tu = u + s * (A41 * k1u + A42 * k2u + A43 * k3u); tv = v + s * (A41 * k1v + A42 * k2v + A43 * k3v);
    tm = m + s * (A41 * k1m + A42 * k2m + A43 * k3m); tw = w + s * (A41 * k1w + A42 * k2w + A43 * k3w);
    const k4u = tv, k4v = tu * (c1 + tu * (c2 + tu * c3)), k4m = tw, k4w = tm * (d1 + d3 * tm * tm);
    tu = u + s * (A51 * k1u + A52 * k2u + A53 * k3u + A54 * k4u); tv = v + s * (A51 * k1v + A52 * k2v + A53 * k3v + A54 * k4v);
    tm = m + s * (A51 * k1m + A52 * k2m + A53 * k3m + A54 * k4m); tw = w + s * (A51 * k1w + A52 * k2w + A53 * k3w + A54 * k4w);
    const k5u = tv, k5v = tu * (c1 + tu * (c2 + tu * c3)), k5m = tw, k5w = tm * (d1 + d3 * tm * tm);
    tu = u + s * (A61 * k1u + A62 * k2u + A63 * k3u + A64 * k4u + A65 * k5u);
    tv = v + s * (A61 * k1v + A62 * k2v + A63 * k3v + A64 * k4v + A65 * k5v);
    tm = m + s * (A61 * k1m + A62 * k2m + A63 * k3m + A64 * k4m + A65 * k5m);
    tw = w + s * (A61 * k1w + A62 * k2w + A63 * k3w + A64 * k4w + A65 * k5w);
    const k6u = tv, k6v = tu * (c1 + tu * (c2 + tu * c3)), k6m = tw, k6w = tm * (d1 + d3 * tm * tm);
    this.cu = u + s * (B1 * k1u + B3 * k3u + B4 * k4u + B5 * k5u + B6 * k6u);
    this.cv = v + s * (B1 * k1v + B3 * k3v + B4 * k4v + B5 * k5v + B6 * k6v);
    this.cm = m + s * (B1 * k1m + B3 * k3m + B4 * k4m + B5 * k5m + B6 * k6m);
    this.cw = w + s * (B1 * k1w + B3 * k3w + B4 * k4w + B5 * k5w + B6 * k6w);
    this.eu = s * (E1 * k1u + E3 * k3u + E4 * k4u + E5 * k5u + E6 * k6u);
    this.ev = s * (E1 * k1v + E3 * k3v + E4 * k4v + E5 * k5v + E6 * k6v);
    this.em = s * (E1 * k1m + E3 * k3m + E4 * k4m + E5 * k5m + E6 * k6m);
    this.ew = s * (E1 * k1w + E3 * k3w + E4 * k4w + E5 * k5w + E6 * k6w);
  }

  private recordDrift(u: number, v: number, m: number, w: number, c1: number, c2: number, c3: number, d1: number, d3: number, q: number, lam: number): void {
    void c2; void c3; void d1; void d3;
    const a2 = this.a * this.a;
    // P(u) = 1 + (a^2 - lambda^2 - q) u^2 + 2 (q + (lambda - a)^2) u^3 - a^2 q u^4 (Carter 1968 R(r), u = 1/r)
    const P = 1 + u * u * (c1 + u * (2 * (q + (lam - this.a) * (lam - this.a)) - a2 * q * u));
    // M(mu) = q - (q + lambda^2 - a^2) mu^2 - a^2 mu^4 (Carter 1968 Theta(theta), mu = cos theta)
    const M = q - (q + lam * lam - a2) * m * m - a2 * m * m * m * m;
    // Relative to the scale of each first integral: P is 1 at the observer; M is bounded by q + a^2.
    const dr = Math.abs(v * v - P) / Math.max(1, Math.abs(P));
    const dp = Math.abs(w * w - M) / Math.max(q + a2, 1e-300);
    const res = this.out;
    if (dr > res.driftRadial) res.driftRadial = dr;
    if (dp > res.driftPolar) res.driftPolar = dp;
  }
}

/**
 * Redshift factor g = E_observed/E_emitted of a photon with lambda = L_z/E emitted by gas on a
 * prograde (with the sign of a) circular Keplerian orbit at r, dimensionless:
 * g = r^(3/4) sqrt(r^(3/2) - 3 r^(1/2) + 2a) / (r^(3/2) + a - lambda)
 * (Cunningham 1975, ApJ 202, 788, eq. A1 with u^t of Bardeen, Press & Teukolsky 1972 eq. 2.16).
 */
export function diskRedshift(r: number, a: number, lambda: number): number {
  const s = Math.sqrt(r);
  const r32 = r * s;
  return (Math.sqrt(r32) * Math.sqrt(r32 - 3 * s + 2 * a)) / (r32 + a - lambda);
}

/**
 * Cosine of the emission angle from the disk normal in the gas frame, mu_e = g sqrt(q) / r
 * (Cunningham 1975 eq. A3: p^(theta) = sqrt(Theta(pi/2))/r = sqrt(q)/r per unit E_infinity), dimensionless.
 */
export function emissionCosine(g: number, q: number, r: number): number {
  const c = (g * Math.sqrt(Math.max(q, 0))) / r;
  return c > 1 ? 1 : c;
}
