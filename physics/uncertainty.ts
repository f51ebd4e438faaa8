/**
 * Uncertainty propagation for any model y = f(x) with independent Gaussian inputs.
 *
 * Linear (first-order) propagation: sigma_y^2 = sum_i (df/dx_i)^2 sigma_i^2, with derivatives from
 * Ridders' method (Ridders 1982, Adv. Eng. Software 4, 75; Press et al., Numerical Recipes 3rd ed.,
 * section 5.7): Richardson extrapolation of central differences over a shrinking step, whose steps
 * never leave the input's physical domain (one-sided differences at a domain edge).
 *
 * Monte Carlo: seeded xoshiro128** (Blackman & Vigna 2018) uniform deviates, normal deviates by
 * Marsaglia's polar method (Marsaglia & Bray 1964, SIAM Rev. 6, 260), truncated to the domain by
 * rejection; percentiles by linear interpolation of the sorted samples (Hyndman & Fan 1996, type 7).
 */

export interface Variable {
  /** Name or JSON pointer of the input, for messages. */
  name: string;
  value: number;
  /** 1-sigma, same unit as value; 0 when exact. */
  sigma: number;
  /** Physical domain [lo, hi]; an edge is excluded unless its *Closed flag is set. */
  lo: number;
  hi: number;
  loClosed?: boolean;
  hiClosed?: boolean;
}

export type Outputs = Record<string, number>;
export type Model = (x: readonly number[]) => Outputs;

export interface Measured {
  value: number;
  uncertainty?: number;
  p16?: number;
  p50?: number;
  p84?: number;
}

export interface Propagated {
  values: Record<string, Measured>;
  /** Notes for the reply's warnings list. */
  notes: Array<{ code: string; message: string }>;
}

const CON = 1.4;
const CON2 = CON * CON;
const NTAB = 12;
const SAFE = 2;

/**
 * Ridders' derivative of every output of `model` with respect to input i at x, all outputs from
 * one shared sequence of steps (Numerical Recipes 3rd ed., routine dfridr). Returns, per output,
 * the derivative and Ridders' error estimate. Steps stay inside the input's domain.
 */
export function derivatives(model: Model, x: readonly number[], v: Variable, i: number): Record<string, { d: number; err: number }> {
  const xi = x[i];
  // First step: 1 % of |x| (at x = 0: sigma, or 0.01), shrunk below when that is too coarse.
  let scale = Math.abs(xi) * 1e-2;
  if (!(scale > 1e-290)) scale = Math.max(v.sigma, 1e-2); // x = 0 or subnormal: no relative scale
  // A start too coarse for the function's own scale shows as a large error estimate (or as an
  // exactly flat tableau): start again from smaller steps and keep each output's best result.
  let best: Record<string, { d: number; err: number }> | undefined;
  for (let attempt = 0; attempt < 5; attempt++, scale /= 100) {
    let res: Record<string, { d: number; err: number }>;
    try {
      res = riddersFrom(model, x, v, i, scale);
    } catch (err) {
      if (best) break;
      if (attempt === 4) throw err;
      continue;
    }
    if (!best) best = res;
    else for (const k in res) if (quality(res[k]) < quality(best[k])) best[k] = res[k];
    let settled = true;
    for (const k in best) {
      const { d, err } = best[k];
      if (!(err <= 1e-10 * Math.abs(d)) && !(d === 0 && err === 0)) settled = false;
    }
    if (settled) break;
  }
  return best!;
}

/** Relative error of a derivative estimate; an exactly flat tableau (0 +- 0) ranks last, since a
 * step too small for the function's precision gives one (e.g. outputs that sit near 1). */
function quality(r: { d: number; err: number }): number {
  return r.d === 0 ? (r.err === 0 ? Number.MAX_VALUE : Infinity) : r.err / Math.abs(r.d);
}

function riddersFrom(model: Model, x: readonly number[], v: Variable, i: number, scale: number): Record<string, { d: number; err: number }> {
  const xi = x[i];
  const below = xi - v.lo;
  const above = v.hi - xi;
  const room = Math.min(below, above);
  // Central differences need room on both sides; at (or extremely near) an edge go one-sided inward.
  // (Central steps are at most 0.1 room and shrink 40-fold: they must stay well above an ulp of x.)
  const central = room > 0 && room > 1e-12 * Math.abs(xi);
  const dir = central ? 0 : above >= below ? 1 : -1;
  let h = central ? Math.min(scale, 0.1 * room) : Math.min(scale, 0.1 * Math.max(above, below));
  if (!(h > 0) || !Number.isFinite(h)) throw new RangeError(`no room to differentiate with respect to ${v.name}`);
  const fac0 = central ? CON2 : CON; // error series in h^2 (central) or h (one-sided)
  const at = (dx: number): Outputs => {
    const xx = x.slice();
    xx[i] = xi + dx;
    return model(xx);
  };
  // Steps exactly representable as differences of doubles, so that (x + h) - x == h.
  const exact = (step: number): number => xi + step - xi;
  const f0 = central ? undefined : model(x);
  // Difference quotients row by row (Neville tableau per output), stopping once every output's
  // extrapolation has stopped improving (NR's dfridr test). A step the model rejects restarts the
  // tableau below it: smaller steps stay closer to the nominal point.
  interface Tab { prev: number[]; ans: number; err: number; done: boolean }
  let tabs: Record<string, Tab> | undefined;
  let open = 0;
  for (let r = 0; r < NTAB; r++, h /= CON) {
    let q: Outputs;
    try {
      q = {};
      if (central) {
        const hp = exact(h);
        const hm = -exact(-h);
        const fp = at(hp);
        const fm = at(-hm);
        for (const k in fp) q[k] = (fp[k] - fm[k]) / (hp + hm);
      } else {
        const hs = exact(dir * h);
        const fs = at(hs);
        for (const k in fs) q[k] = (fs[k] - f0![k]) / hs;
      }
    } catch {
      tabs = undefined;
      continue;
    }
    if (!tabs) {
      tabs = {};
      open = 0;
      for (const k in q) {
        tabs[k] = { prev: [q[k]], ans: q[k], err: Infinity, done: false };
        open++;
      }
      continue;
    }
    for (const k in tabs) {
      const t = tabs[k];
      if (t.done) continue;
      const prev = t.prev;
      const cur: number[] = [q[k]];
      let fac = fac0;
      for (let j = 1; j <= prev.length; j++) {
        cur[j] = (cur[j - 1] * fac - prev[j - 1]) / (fac - 1);
        fac *= fac0;
        const errt = Math.max(Math.abs(cur[j] - cur[j - 1]), Math.abs(cur[j] - prev[j - 1]));
        if (errt <= t.err) {
          t.err = errt;
          t.ans = cur[j];
        }
      }
      if (Math.abs(cur[prev.length] - prev[prev.length - 1]) >= SAFE * t.err) {
        t.done = true;
        open--;
      }
      t.prev = cur;
    }
    if (open === 0) break;
  }
  if (!tabs) throw new RangeError(`the model has no solution near the nominal ${v.name}`);
  const result: Record<string, { d: number; err: number }> = {};
  for (const k in tabs) result[k] = { d: tabs[k].ans, err: tabs[k].err };
  return result;
}

/** Relative derivative error above which the linear result is flagged. */
const DERIV_REL_TOL = 1e-6;

/** First-order propagation of independent input uncertainties through the model. */
export function propagateLinear(model: Model, vars: readonly Variable[]): Propagated {
  const x = vars.map((v) => v.value);
  const nominal = model(x);
  const variance: Record<string, number> = {};
  for (const k of Object.keys(nominal)) variance[k] = 0;
  const notes: Propagated['notes'] = [];
  vars.forEach((v, i) => {
    if (!(v.sigma > 0)) return;
    const ds = derivatives(model, x, v, i);
    for (const k of Object.keys(nominal)) {
      const { d, err } = ds[k] ?? { d: NaN, err: Infinity };
      const term = d * v.sigma;
      variance[k] += term * term;
      if (!(err <= DERIV_REL_TOL * Math.abs(d) + 1e-300) && Math.abs(d) > 0 && err !== 0) {
        notes.push({
          code: 'derivative-inaccurate',
          message: `the derivative of ${k} with respect to ${v.name} could not be found to better than ${(err / Math.abs(d)).toExponential(1)} relative (the function is steep or singular there); consider uncertainty_method monte-carlo`,
        });
      }
    }
  });
  const values: Record<string, Measured> = {};
  for (const k of Object.keys(nominal)) values[k] = { value: nominal[k], uncertainty: Math.sqrt(variance[k]) };
  return { values, notes: dedupe(notes) };
}

function dedupe(notes: Propagated['notes']): Propagated['notes'] {
  const seen = new Set<string>();
  return notes.filter((n) => (seen.has(n.message) ? false : (seen.add(n.message), true)));
}

/** xoshiro128** (Blackman & Vigna 2018), seeded through splitmix32; returns uniform deviates in (0, 1). */
export function makeRng(seed: number): () => number {
  let z = seed >>> 0;
  const split = (): number => {
    z = (z + 0x9e3779b9) >>> 0;
    let t = z;
    t = Math.imul(t ^ (t >>> 16), 0x21f0aaad);
    t = Math.imul(t ^ (t >>> 15), 0x735a2d97);
    return (t ^ (t >>> 15)) >>> 0;
  };
  let a = split(), b = split(), c = split(), d = split();
  return () => {
    const r = Math.imul(rotl(Math.imul(b, 5), 7), 9) >>> 0;
    const t = b << 9;
    c ^= a; d ^= b; b ^= c; a ^= d; c ^= t; d = rotl(d, 11);
    return (r + 0.5) / 4294967296;
  };
}

function rotl(x: number, k: number): number {
  return (x << k) | (x >>> (32 - k));
}

/** Standard normal deviates by Marsaglia's polar method. */
export function makeNormal(uniform: () => number): () => number {
  let spare: number | undefined;
  return () => {
    if (spare !== undefined) {
      const s = spare;
      spare = undefined;
      return s;
    }
    for (;;) {
      const u = 2 * uniform() - 1;
      const v = 2 * uniform() - 1;
      const s = u * u + v * v;
      if (s > 0 && s < 1) {
        const m = Math.sqrt((-2 * Math.log(s)) / s);
        spare = v * m;
        return u * m;
      }
    }
  };
}

function inside(v: Variable, x: number): boolean {
  const okLo = v.loClosed ? x >= v.lo : x > v.lo;
  const okHi = v.hiClosed ? x <= v.hi : x < v.hi;
  return okLo && okHi;
}

/** Percentile of sorted data by linear interpolation (Hyndman & Fan 1996, definition 7). */
export function percentile(sorted: Float64Array, p: number): number {
  const n = sorted.length;
  if (n === 1) return sorted[0];
  const h = (n - 1) * p;
  const lo = Math.floor(h);
  const hi = Math.min(lo + 1, n - 1);
  return sorted[lo] + (h - lo) * (sorted[hi] - sorted[lo]);
}

/** Monte Carlo propagation: value is the model at the nominal inputs, uncertainty the sample SD. */
export function propagateMonteCarlo(model: Model, vars: readonly Variable[], samples: number, seed: number): Propagated {
  const x0 = vars.map((v) => v.value);
  const nominal = model(x0);
  const keys = Object.keys(nominal);
  const normal = makeNormal(makeRng(seed));
  const cols: Record<string, Float64Array> = {};
  for (const k of keys) cols[k] = new Float64Array(samples);
  let n = 0;
  let failed = 0;
  let rejected = 0;
  const x = x0.slice();
  for (let s = 0; s < samples; s++) {
    for (let i = 0; i < vars.length; i++) {
      const v = vars[i];
      if (!(v.sigma > 0)) continue;
      let xi = v.value + v.sigma * normal();
      let tries = 0;
      while (!inside(v, xi) && tries < 100) {
        xi = v.value + v.sigma * normal();
        tries++;
        rejected++;
      }
      if (!inside(v, xi)) throw new RangeError(`${v.name}: its uncertainty reaches too far outside the allowed domain for sampling`);
      x[i] = xi;
    }
    let out: Outputs;
    try {
      out = model(x);
    } catch {
      failed++;
      continue;
    }
    let finite = true;
    for (const k of keys) if (!Number.isFinite(out[k])) finite = false;
    if (!finite) {
      failed++;
      continue;
    }
    for (const k of keys) cols[k][n] = out[k];
    n++;
  }
  const notes: Propagated['notes'] = [];
  if (rejected > 0) {
    notes.push({ code: 'samples-truncated', message: `input samples outside the physical domain were redrawn (${rejected} draws): the input distributions are truncated normals` });
  }
  if (failed > 0) {
    notes.push({ code: 'samples-failed', message: `${failed} of ${samples} samples have no physical solution and were left out` });
  }
  if (n < 2) throw new RangeError('fewer than two Monte Carlo samples have a physical solution');
  const values: Record<string, Measured> = {};
  for (const k of keys) {
    const col = cols[k].subarray(0, n);
    let mean = 0;
    for (let j = 0; j < n; j++) mean += col[j];
    mean /= n;
    let ss = 0;
    for (let j = 0; j < n; j++) ss += (col[j] - mean) ** 2;
    const sorted = Float64Array.from(col).sort();
    values[k] = {
      value: nominal[k],
      uncertainty: Math.sqrt(ss / (n - 1)),
      p16: percentile(sorted, 0.15865525393145707),
      p50: percentile(sorted, 0.5),
      p84: percentile(sorted, 0.8413447460685429),
    };
  }
  return { values, notes };
}
