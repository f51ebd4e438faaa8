/**
 * Emission-line profiles of a geometrically thin Keplerian disk in the equatorial plane of a Kerr
 * hole, by backward ray tracing from the distant observer's image plane (Cunningham 1975, ApJ 202,
 * 788; Fabian et al. 1989, MNRAS 238, 729; Laor 1991, ApJ 376, 90). Units G = c = M = 1.
 *
 * Two stages:
 * 1. `traceTransfer` (the expensive, cacheable part, per spin, inclination, disk radii and
 *    accuracy): a polar image-plane grid, logarithmic in image radius, refined as a quadtree where
 *    the disk's edge, a change of image order or a large spread of g crosses a cell. Each leaf cell
 *    keeps its area and, for its four corner rays, the emission radius r, the redshift g and the
 *    emission-angle cosine mu_e. A half-resolution grid is built from the same rays for an
 *    error estimate, and the extremes of g over the direct image are refined by a pattern search.
 * 2. `binProfile` (milliseconds): weights each leaf by its area times the mean over its corners of
 *    g^3 eps(r) I(mu_e) (photon flux; g^4 for energy flux: I_nu/nu^3 is invariant, Misner, Thorne &
 *    Wheeler 1973 section 22.6), and spreads it uniformly over the range of g its corners span.
 */
import { KerrRayTracer, RayFate, diskRedshift, emissionCosine } from './raytrace.js';
import { brent } from './roots.js';

export type Accuracy = 'fast' | 'standard' | 'fine';

export interface AccuracySettings {
  /** Base grid: rays along the image radius (logarithmic) and around (uniform). */
  nRadial: number;
  nAngular: number;
  /** Integrator relative tolerance. */
  rtol: number;
  /** Quadtree refinement depth below the base grid. */
  depth: number;
  /** A cell whose corners span more than this in g is refined. */
  gSpread: number;
  /** Most rays one geometry may trace (base grid + refinement + extremes), for the compute budget. */
  maxRays: number;
}

export const ACCURACY: Record<Accuracy, AccuracySettings> = {
  fast: { nRadial: 64, nAngular: 64, rtol: 1e-7, depth: 2, gSpread: 0.04, maxRays: 30_000 },
  standard: { nRadial: 128, nAngular: 128, rtol: 1e-9, depth: 3, gSpread: 0.02, maxRays: 120_000 },
  fine: { nRadial: 256, nAngular: 256, rtol: 1e-11, depth: 3, gSpread: 0.01, maxRays: 480_000 },
};

export interface DiskGeometry {
  /** Spin a* in [-1, 1]; the disk co-rotates with positive spin. */
  a: number;
  /** Observer inclination from the spin axis, rad, [0, pi/2). */
  inclination: number;
  /** Inner and outer disk radii, rg; rIn outside the prograde photon orbit. */
  rIn: number;
  rOut: number;
  accuracy: Accuracy;
}

/**
 * Leaf cells of an image-plane grid: `area` (rg^2), the range [gLo, gHi] of g over the corners
 * that hit the disk, and the four corner rays (indices into the node arrays).
 */
export interface Cells {
  area: Float64Array;
  gLo: Float64Array;
  gHi: Float64Array;
  corners: Int32Array;
}

export interface Transfer {
  /** Per traced ray: emission radius r (rg; <= 0: no disk hit), g, and mu_e. */
  nodeR: Float64Array;
  nodeG: Float64Array;
  nodeMu: Float64Array;
  /** ln r of each ray's emission radius (0 for a miss), for fast power-law weights. */
  nodeLnR: Float64Array;
  /** Leaf cells of the full-resolution grid. */
  cells: Cells;
  /** Leaf cells of the half-resolution grid (same rays), for the accuracy estimate. */
  coarse: Cells;
  /** Rays traced. */
  rays: number;
  /** Extremes of g over the disk image (direct image refined; every image sampled). */
  gMin: number;
  gMax: number;
  /** Largest relative drift of the first integrals over the rays (when measured), else 0. */
  drift: number;
  /** Image-plane radii covered, rg. */
  rhoMin: number;
  rhoMax: number;
}

export class RayBudgetError extends Error {
  constructor(readonly limit: number) {
    super(`the ray budget of ${limit} rays was exhausted`);
  }
}

/** Extra quadtree levels allowed only where a disk feature thinner than a cell hides between corners. */
const THIN_LEVELS = 3;
/** Samples per side of the bilinear estimate of an edge cell's covered share (1/32 of a cell per side). */
const SHARE_SAMPLES = 32;

/** Smallest image radius of the grid, rg: the disk inside it is below 1e-8 of any image's area. */
const RHO_MIN = 0.02;

/** Image radius beyond which no ray reaches the disk: b <= r/sqrt(1 - 2/r) for a photon at r (Schwarzschild), plus |a| and margin, rg. */
export function imageRadiusMax(rOut: number): number {
  return 1.02 * (rOut / Math.sqrt(1 - 2 / rOut) + 2);
}

/**
 * Traces the transfer data of one geometry. `part` splits the work by image angle (for worker
 * threads): part `index` of `of` covers the base cells k with k mod of == index... in contiguous blocks.
 */
export function traceTransfer(geom: DiskGeometry, opts: { part?: { index: number; of: number }; measureDrift?: boolean; maxRays?: number } = {}): Transfer {
  const set = ACCURACY[geom.accuracy];
  const maxRays = opts.maxRays ?? set.maxRays;
  const tracer = new KerrRayTracer({ a: geom.a, inclination: geom.inclination, rIn: geom.rIn, rOut: geom.rOut, rtol: set.rtol, measureDrift: opts.measureDrift });
  const rhoMin = RHO_MIN;
  const rhoMax = imageRadiusMax(geom.rOut);
  // Finest subdivisions per base cell: `depth` levels everywhere, THIN_LEVELS more where a disk
  // feature narrower than a cell (a thin ring) crosses a cell none of whose corners sees it.
  const S = 1 << (set.depth + THIN_LEVELS);
  const nR = set.nRadial;
  const nA = set.nAngular;
  const KS = nA * S; // angular nodes at the finest resolution (periodic)
  const lnMin = Math.log(rhoMin);
  const dLn = (Math.log(rhoMax) - lnMin) / nR / S; // finest step in ln(rho)
  const dPhi = (2 * Math.PI) / KS;
  let drift = 0;

  // Node store keyed by finest-resolution integer coordinates.
  const index = new Map<number, number>();
  let cap = 1 << 14;
  let nodeR = new Float64Array(cap);
  let nodeG = new Float64Array(cap);
  let nodeMu = new Float64Array(cap);
  let nodeOrder = new Int32Array(cap);
  // radius of the first plane crossing; 0 for a ray captured first, Infinity for one leaving first
  let nodeFirst = new Float64Array(cap);
  let nodes = 0;
  let rays = 0;

  const node = (J: number, K: number): number => {
    const k = ((K % KS) + KS) % KS;
    const key = J * KS + k;
    const found = index.get(key);
    if (found !== undefined) return found;
    if (rays >= maxRays) throw new RayBudgetError(maxRays);
    const rho = Math.exp(lnMin + J * dLn);
    const phi = k * dPhi;
    const res = tracer.trace(rho * Math.cos(phi), rho * Math.sin(phi));
    rays++;
    if (res.driftRadial > drift) drift = res.driftRadial;
    if (res.driftPolar > drift) drift = res.driftPolar;
    if (nodes === cap) {
      cap *= 2;
      const grow = <T extends Float64Array | Int32Array>(old: T, make: (n: number) => T): T => {
        const n = make(cap);
        n.set(old);
        return n;
      };
      nodeR = grow(nodeR, (n) => new Float64Array(n));
      nodeG = grow(nodeG, (n) => new Float64Array(n));
      nodeMu = grow(nodeMu, (n) => new Float64Array(n));
      nodeOrder = grow(nodeOrder, (n) => new Int32Array(n));
      nodeFirst = grow(nodeFirst, (n) => new Float64Array(n));
    }
    const id = nodes++;
    nodeFirst[id] = res.rFirst > 0 ? res.rFirst : res.fate === RayFate.Escaped ? Infinity : 0;
    if (res.fate === RayFate.Disk) {
      const g = diskRedshift(res.r, geom.a, res.lambda);
      nodeR[id] = res.r;
      nodeG[id] = g;
      nodeMu[id] = emissionCosine(g, res.q, res.r);
      nodeOrder[id] = res.order;
    } else {
      nodeR[id] = -1;
      nodeG[id] = 0;
      nodeMu[id] = 0;
      nodeOrder[id] = 0;
    }
    index.set(key, id);
    return id;
  };

  interface CellList {
    area: number[];
    gLo: number[];
    gHi: number[];
    corners: number[];
  }
  const cell = (out: CellList, J0: number, K0: number, size: number, levelsLeft: number, thin = false): void => {
    const c = [node(J0, K0), node(J0 + size, K0), node(J0, K0 + size), node(J0 + size, K0 + size)];
    let hits = 0;
    let gLo = Infinity;
    let gHi = -Infinity;
    const order0 = nodeOrder[c[0]];
    let mixedOrder = false;
    for (const id of c) {
      if (nodeOrder[id] !== order0) mixedOrder = true;
      if (nodeR[id] > 0) {
        hits++;
        if (nodeG[id] < gLo) gLo = nodeG[id];
        if (nodeG[id] > gHi) gHi = nodeG[id];
      }
    }
    const split = (deeper: boolean) => {
      const h = size / 2;
      cell(out, J0, K0, h, levelsLeft - 1, deeper);
      cell(out, J0 + h, K0, h, levelsLeft - 1, deeper);
      cell(out, J0, K0 + h, h, levelsLeft - 1, deeper);
      cell(out, J0 + h, K0 + h, h, levelsLeft - 1, deeper);
    };
    if (hits === 0) {
      // No corner sees the disk; but if the corners' first crossings straddle [rIn, rOut], the
      // direct image of a disk thinner than the cell passes through it: look closer.
      let lo = Infinity;
      let hi = -Infinity;
      for (const id of c) {
        if (nodeFirst[id] < lo) lo = nodeFirst[id];
        if (nodeFirst[id] > hi) hi = nodeFirst[id];
      }
      if (lo <= geom.rOut && hi >= geom.rIn && levelsLeft > -THIN_LEVELS) split(levelsLeft <= 0 || thin);
      return;
    }
    if ((levelsLeft > 0 || (thin && levelsLeft > -THIN_LEVELS)) && (hits < 4 || mixedOrder || gHi - gLo > set.gSpread)) {
      split(thin);
      return;
    }
    const rho0 = Math.exp(lnMin + J0 * dLn);
    const rho1 = Math.exp(lnMin + (J0 + size) * dLn);
    let area = 0.5 * (rho1 * rho1 - rho0 * rho0) * size * dPhi; // polar cell area, rg^2
    if (hits < 4) area *= coveredShare(c) / (hits / 4);
    out.area.push(area);
    out.gLo.push(gLo);
    out.gHi.push(gHi);
    out.corners.push(c[0], c[1], c[2], c[3]);
  };
  /**
   * Share of a cell on the disk's edge that the disk's direct image covers: the first-crossing
   * radius interpolated bilinearly between the corners, sampled on a SHARE_SAMPLES^2 grid, inside
   * [rIn, rOut]. binProfile weighs a cell by the mean over its corners with misses as zero
   * (share hits/4); the area is scaled to make the share this one. Falls back to hits/4 where a
   * corner was captured, left without crossing, or sees a higher-order image.
   */
  const coveredShare = (c: readonly number[]): number => {
    let hits = 0;
    for (const id of c) {
      const f = nodeFirst[id];
      if (!(f > 0 && f < Infinity) || nodeOrder[id] > 1) return countHits(c) / 4;
      if (nodeR[id] > 0) hits++;
    }
    const [f00, f10, f01, f11] = c.map((id) => nodeFirst[id]); // corners (J0,K0), (J0+s,K0), (J0,K0+s), (J0+s,K0+s)
    let inside = 0;
    const n = SHARE_SAMPLES;
    for (let i = 0; i < n; i++) {
      const x = (i + 0.5) / n;
      for (let j = 0; j < n; j++) {
        const y = (j + 0.5) / n;
        const f = (1 - x) * (1 - y) * f00 + x * (1 - y) * f10 + (1 - x) * y * f01 + x * y * f11;
        if (f >= geom.rIn && f <= geom.rOut) inside++;
      }
    }
    // never zero for a cell with a hit corner: at least the corner's own neighbourhood
    return Math.max(inside / (n * n), hits / (4 * n * n));
  };
  const countHits = (c: readonly number[]) => c.reduce((k, id) => k + (nodeR[id] > 0 ? 1 : 0), 0);
  const list = (): CellList => ({ area: [], gLo: [], gHi: [], corners: [] });
  const pack = (l: CellList): Cells => ({ area: Float64Array.from(l.area), gLo: Float64Array.from(l.gLo), gHi: Float64Array.from(l.gHi), corners: Int32Array.from(l.corners) });

  const part = opts.part ?? { index: 0, of: 1 };
  const kFrom = Math.floor((part.index * nA) / part.of);
  const kTo = Math.floor(((part.index + 1) * nA) / part.of);
  const fine = list();
  for (let k = kFrom; k < kTo; k++) {
    for (let j = 0; j < nR; j++) cell(fine, j * S, k * S, S, set.depth);
  }
  // Half-resolution grid from the same rays: base cells twice as large, one level less deep.
  const coarse = list();
  const kFrom2 = Math.ceil(kFrom / 2);
  const kTo2 = Math.ceil(kTo / 2);
  for (let k = kFrom2; k < kTo2; k++) {
    for (let j = 0; j < nR / 2; j++) cell(coarse, j * 2 * S, k * 2 * S, 2 * S, set.depth);
  }

  // Sampled extremes (all images), then the direct image's extremes refined.
  let gMin = Infinity;
  let gMax = -Infinity;
  let iMin = -1;
  let iMax = -1;
  for (let i = 0; i < nodes; i++) {
    if (nodeR[i] <= 0) continue;
    if (nodeG[i] < gMin) gMin = nodeG[i];
    if (nodeG[i] > gMax) gMax = nodeG[i];
    if (nodeOrder[i] === 1) {
      if (iMin < 0 || nodeG[i] < nodeG[iMin]) iMin = i;
      if (iMax < 0 || nodeG[i] > nodeG[iMax]) iMax = i;
    }
  }
  if (iMin >= 0) {
    const keys = new Map<number, number>();
    for (const [key, id] of index) if (id === iMin || id === iMax) keys.set(id, key);
    const start = (id: number) => {
      const key = keys.get(id)!;
      return { ln: lnMin + Math.floor(key / KS) * dLn, phi: (key % KS) * dPhi };
    };
    const lo = refineExtreme(tracer, geom.a, start(iMin), -1, S * dLn, S * dPhi);
    const hi = refineExtreme(tracer, geom.a, start(iMax), +1, S * dLn, S * dPhi);
    rays += lo.rays + hi.rays;
    gMin = Math.min(gMin, lo.g);
    gMax = Math.max(gMax, hi.g);
  }
  return {
    nodeR: nodeR.slice(0, nodes),
    nodeG: nodeG.slice(0, nodes),
    nodeMu: nodeMu.slice(0, nodes),
    nodeLnR: nodeR.slice(0, nodes).map((r) => (r > 0 ? Math.log(r) : 0)),
    cells: pack(fine),
    coarse: pack(coarse),
    rays,
    gMin: Number.isFinite(gMin) ? gMin : 0,
    gMax: Number.isFinite(gMax) ? gMax : 0,
    drift,
    rhoMin,
    rhoMax,
  };
}

/** Joins transfer parts traced separately (by image angle). */
export function mergeTransfers(parts: Transfer[]): Transfer {
  function cat(xs: Float64Array[]): Float64Array;
  function cat(xs: Int32Array[]): Int32Array;
  function cat(xs: Array<Float64Array | Int32Array>): Float64Array | Int32Array {
    const n = xs.reduce((k, x) => k + x.length, 0);
    const out = xs[0] instanceof Int32Array ? new Int32Array(n) : new Float64Array(n);
    let o = 0;
    for (const x of xs) {
      out.set(x, o);
      o += x.length;
    }
    return out;
  }
  // corner indices are offset by the nodes of the parts before
  const offsets: number[] = [];
  let off = 0;
  for (const p of parts) {
    offsets.push(off);
    off += p.nodeR.length;
  }
  const cells = (pick: (t: Transfer) => Cells): Cells => ({
    area: cat(parts.map((p) => pick(p).area)),
    gLo: cat(parts.map((p) => pick(p).gLo)),
    gHi: cat(parts.map((p) => pick(p).gHi)),
    corners: cat(parts.map((p, i) => pick(p).corners.map((c) => c + offsets[i]))),
  });
  const hit = parts.filter((p) => p.gMax > 0);
  return {
    nodeR: cat(parts.map((p) => p.nodeR)),
    nodeG: cat(parts.map((p) => p.nodeG)),
    nodeMu: cat(parts.map((p) => p.nodeMu)),
    nodeLnR: cat(parts.map((p) => p.nodeLnR)),
    cells: cells((t) => t.cells),
    coarse: cells((t) => t.coarse),
    rays: parts.reduce((n, p) => n + p.rays, 0),
    gMin: hit.length ? Math.min(...hit.map((p) => p.gMin)) : 0,
    gMax: hit.length ? Math.max(...hit.map((p) => p.gMax)) : 0,
    drift: Math.max(...parts.map((p) => p.drift)),
    rhoMin: parts[0].rhoMin,
    rhoMax: parts[0].rhoMax,
  };
}

/**
 * Extreme of g over the disk's direct image near a start point, by a compass search (Kolda, Lewis
 * & Torczon 2003, SIAM Review 45, 385) in (ln rho, phi), sign +1 for the maximum, -1 for the minimum.
 * A trial point off the direct image is pulled back to the image's edge by bisection along the
 * step, so maxima on the disk's edge (the face-on limit) are found to ~1e-10 in position.
 */
function refineExtreme(tracer: KerrRayTracer, a: number, start: { ln: number; phi: number }, sign: 1 | -1, stepLn: number, stepPhi: number): { g: number; rays: number } {
  let rays = 0;
  const evalAt = (ln: number, phi: number): number => {
    rays++;
    const rho = Math.exp(ln);
    const res = tracer.trace(rho * Math.cos(phi), rho * Math.sin(phi));
    if (res.fate !== RayFate.Disk || res.order !== 1) return NaN;
    return diskRedshift(res.r, a, res.lambda);
  };
  let ln = start.ln;
  let phi = start.phi;
  let best = evalAt(ln, phi);
  if (!Number.isFinite(best)) return { g: sign > 0 ? -Infinity : Infinity, rays };
  let sLn = stepLn;
  let sPhi = stepPhi;
  const dirs = [
    [1, 0],
    [-1, 0],
    [0, 1],
    [0, -1],
    [1, 1],
    [-1, -1],
    [1, -1],
    [-1, 1],
  ];
  for (let iter = 0; iter < 400 && (sLn > 1e-11 || sPhi > 1e-11); iter++) {
    let moved = false;
    for (const [dl, dp] of dirs) {
      const tl = ln + dl * sLn;
      const tp = phi + dp * sPhi;
      let g = evalAt(tl, tp);
      let nl = tl;
      let np = tp;
      if (!Number.isFinite(g)) {
        // bisect towards the last point of the direct image along this step
        let lo = 0;
        let hi = 1;
        for (let b = 0; b < 40 && hi - lo > 1e-12; b++) {
          const mid = (lo + hi) / 2;
          const gm = evalAt(ln + mid * dl * sLn, phi + mid * dp * sPhi);
          if (Number.isFinite(gm)) {
            lo = mid;
            g = gm;
          } else hi = mid;
        }
        if (lo === 0) continue;
        nl = ln + lo * dl * sLn;
        np = phi + lo * dp * sPhi;
      }
      if (sign * (g - best) > 0) {
        best = g;
        ln = nl;
        phi = np;
        moved = true;
        break;
      }
    }
    if (!moved) {
      sLn /= 2;
      sPhi /= 2;
    }
  }
  // On the disk's edge the compass search stalls against the curved boundary: follow the edge.
  const rho = Math.exp(ln);
  const res = tracer.trace(rho * Math.cos(phi), rho * Math.sin(phi));
  rays++;
  for (const edge of [tracer.rIn, tracer.rOut]) {
    if (Math.abs(res.rFirst - edge) <= 1e-6 * edge) {
      const ring = ringExtreme(tracer, edge, sign, phi - 2 * stepPhi, phi + 2 * stepPhi, rho);
      rays += ring.rays;
      if (sign * (ring.g - best) > 0) best = ring.g;
    }
  }
  return { g: best, rays };
}

/**
 * Signed distance rFirst - r of the ray at image polar coordinates (rho, phi) from a ring at r
 * (rg): -r (below) for a ray captured before it crosses the plane, +r for one leaving first.
 */
function ringOffset(tracer: KerrRayTracer, rho: number, phi: number, r: number): { f: number; lambda: number } {
  const res = tracer.trace(rho * Math.cos(phi), rho * Math.sin(phi));
  if (res.rFirst > 0) return { f: res.rFirst - r, lambda: res.lambda };
  return { f: res.fate === RayFate.Captured ? -r : r, lambda: res.lambda };
}

/**
 * Image radius rho at image angle phi of the direct image of the equatorial ring at radius r, by
 * bracketing from a guess and Brent's method on the first plane-crossing radius; NaN when not found.
 */
export function ringImageRadius(tracer: KerrRayTracer, r: number, phi: number, guess: number): { rho: number; lambda: number; rays: number } {
  let rays = 0;
  const f = (rho: number) => {
    rays++;
    return ringOffset(tracer, rho, phi, r).f;
  };
  let lo = guess;
  let flo = f(lo);
  let hi = lo;
  let fhi = flo;
  const grow = flo < 0 ? 1.25 : 1 / 1.25;
  for (let k = 0; k < 60 && (flo < 0) === (fhi < 0); k++) {
    lo = hi;
    flo = fhi;
    hi = hi * grow;
    fhi = f(hi);
  }
  if ((flo < 0) === (fhi < 0)) return { rho: NaN, lambda: NaN, rays };
  const res = brent(f, Math.min(lo, hi), Math.max(lo, hi), { xRelTol: 1e-13, xAbsTol: 0, maxIterations: 100 });
  const at = ringOffset(tracer, res.root, phi, r);
  return { rho: res.root, lambda: at.lambda, rays: rays + 1 };
}

/**
 * Extreme (sign +1 max, -1 min) of g along the direct image of the ring at r between image
 * angles phiA and phiB, by golden-section search (Kiefer 1953) on g(phi), g = diskRedshift(r, lambda).
 */
function ringExtreme(tracer: KerrRayTracer, r: number, sign: 1 | -1, phiA: number, phiB: number, rhoGuess: number): { g: number; phi: number; rays: number } {
  let rays = 0;
  let guess = rhoGuess;
  const val = (phi: number): number => {
    const s = ringImageRadius(tracer, r, phi, guess);
    rays += s.rays;
    if (!Number.isFinite(s.rho)) return -Infinity;
    guess = s.rho;
    return sign * diskRedshift(r, tracer.a, s.lambda);
  };
  const R = (Math.sqrt(5) - 1) / 2;
  let a = phiA;
  let b = phiB;
  let x1 = b - R * (b - a);
  let x2 = a + R * (b - a);
  let f1 = val(x1);
  let f2 = val(x2);
  for (let it = 0; it < 60 && b - a > 1e-10; it++) {
    if (f1 > f2) {
      b = x2;
      x2 = x1;
      f2 = f1;
      x1 = b - R * (b - a);
      f1 = val(x1);
    } else {
      a = x1;
      x1 = x2;
      f1 = f2;
      x2 = a + R * (b - a);
      f2 = val(x2);
    }
  }
  const best = Math.max(f1, f2);
  return { g: sign * best, phi: f1 > f2 ? x1 : x2, rays };
}

/**
 * Range of g over orbital phase for an emitter on a circular Keplerian orbit at r (rg) seen at
 * inclination i: the extremes of diskRedshift(r, lambda) over the ring's direct image, sampled at
 * `samples` image angles and refined by golden-section search (Cunningham 1975 transfer, one ring).
 */
export function ringRedshiftRange(a: number, inclination: number, r: number, rtol = 1e-10, samples = 48): { gMin: number; gMax: number; rays: number } {
  const tracer = new KerrRayTracer({ a, inclination, rIn: r, rOut: r, rtol });
  let rays = 0;
  const ci = Math.cos(inclination);
  const phis: number[] = [];
  const gs: number[] = [];
  const rhos: number[] = [];
  for (let k = 0; k < samples; k++) {
    const phi = (2 * Math.PI * k) / samples;
    // flat-space guess: the ring's projected ellipse, semi-axes r and r cos i
    const guess = (r * Math.max(ci, 0.05)) / Math.sqrt(ci * ci * Math.cos(phi) ** 2 + Math.sin(phi) ** 2 || 1);
    const s = ringImageRadius(tracer, r, phi, Math.max(guess, 1));
    rays += s.rays;
    if (!Number.isFinite(s.rho)) continue;
    phis.push(phi);
    rhos.push(s.rho);
    gs.push(diskRedshift(r, a, s.lambda));
  }
  if (gs.length === 0) return { gMin: NaN, gMax: NaN, rays };
  const step = (2 * Math.PI) / samples;
  const refine = (sign: 1 | -1) => {
    let bi = 0;
    for (let k = 1; k < gs.length; k++) if (sign * (gs[k] - gs[bi]) > 0) bi = k;
    const e = ringExtreme(tracer, r, sign, phis[bi] - step, phis[bi] + step, rhos[bi]);
    rays += e.rays;
    return sign * (e.g - gs[bi]) > 0 ? e.g : gs[bi];
  };
  const gMax = refine(1);
  const gMin = refine(-1);
  return { gMin, gMax, rays };
}

// ---------------------------------------------------------------------------
// Binning

/** Local emissivity of the disk per unit area (gas frame), as a function of r (rg); any positive scale. */
export type Emissivity = (r: number) => number;

/** Angular emission law in the gas frame, as a function of mu_e = cos(emission angle from the normal). */
export type EmissionLaw = (mu: number) => number;

/** Isotropic emission. */
export const isotropic: EmissionLaw = () => 1;

/** Limb-darkened emission I(mu) proportional to 1 + 2.06 mu (Laor 1991, ApJ 376, 90, from memory; the electron-scattering atmosphere law). */
export const laorLimbDarkening: EmissionLaw = (mu) => 1 + 2.06 * mu;

export interface BinOptions {
  /** Bin edges in g = E_observed/E_rest, strictly increasing. */
  gEdges: Float64Array | number[];
  emissivity: Emissivity;
  law: EmissionLaw;
  /** 3: photon flux (counts), 4: energy flux. */
  power: 3 | 4;
}

export interface BinnedProfile {
  /** Flux per bin, same arbitrary scale as `total`. */
  flux: Float64Array;
  /** Flux of the whole line (in and out of the bins). */
  total: number;
}

/** Per-ray weights g^power eps(r) I(mu_e) (0 for rays that miss the disk). */
export function rayWeights(t: Pick<Transfer, 'nodeR' | 'nodeG' | 'nodeMu' | 'nodeLnR'>, o: Omit<BinOptions, 'gEdges'>): Float64Array {
  const n = t.nodeR.length;
  const w = new Float64Array(n);
  const index = (o.emissivity as Emissivity & { index?: number }).index;
  if (index !== undefined && (o.law === isotropic || o.law === laorLimbDarkening)) {
    // the common case without function calls: r^-q = exp(-q ln r), the law inline
    const laor = o.law === laorLimbDarkening;
    for (let i = 0; i < n; i++) {
      if (t.nodeR[i] <= 0) continue;
      const g = t.nodeG[i];
      const g3 = g * g * g;
      w[i] = (o.power === 3 ? g3 : g3 * g) * Math.exp(-index * t.nodeLnR[i]) * (laor ? 1 + 2.06 * t.nodeMu[i] : 1);
    }
    return w;
  }
  for (let i = 0; i < n; i++) {
    const r = t.nodeR[i];
    if (r <= 0) continue;
    const g = t.nodeG[i];
    const g3 = g * g * g;
    w[i] = (o.power === 3 ? g3 : g3 * g) * o.emissivity(r) * o.law(t.nodeMu[i]);
  }
  return w;
}

/**
 * Bins the line: each leaf cell's flux, area x mean over its corners (misses count as zero) of
 * the ray weights g^power eps(r) I(mu_e), spread uniformly over the cell's range of g
 * (Cunningham 1975: the observed photon flux is the image-plane integral of g^3 I). The uniform
 * spreads are summed exactly through their cumulative ramps, so the cost does not grow with the
 * number of bins a cell covers.
 */
export function binProfile(cells: Cells, weights: Float64Array, gEdges: ArrayLike<number>): BinnedProfile {
  const edges = gEdges;
  const nb = edges.length - 1;
  const flux = new Float64Array(nb);
  // Ramp sums per interval between edges: slot s holds points x with edges[s-1] <= x < edges[s]
  // (slot 0: below the first edge, slot nb+1: above the last one).
  const c0 = new Float64Array(nb + 2);
  const c1 = new Float64Array(nb + 2);
  const e0 = edges[0];
  const eN = edges[nb];
  const finder = slotFinder(edges);
  let total = 0;
  const n = cells.area.length;
  const area = cells.area;
  const gLo = cells.gLo;
  const gHi = cells.gHi;
  const cor = cells.corners;
  for (let c = 0; c < n; c++) {
    const k = 4 * c;
    const w = (area[c] * (weights[cor[k]] + weights[cor[k + 1]] + weights[cor[k + 2]] + weights[cor[k + 3]])) / 4;
    if (w === 0) continue;
    total += w;
    const lo = gLo[c];
    const hi = gHi[c];
    if (hi < e0 || lo > eN) continue;
    const width = hi - lo;
    if (width <= 1e-9 * hi) {
      const b = findBin(edges, lo);
      if (b >= 0) flux[b] += w;
      continue;
    }
    // uniform density w/width on [lo, hi] = ramp(x - lo) - ramp(x - hi), times the density
    const d = w / width;
    const sLo = finder(lo);
    c0[sLo] += d;
    c1[sLo] += d * lo;
    const sHi = finder(hi);
    c0[sHi] -= d;
    c1[sHi] -= d * hi;
  }
  // F(e) = sum over points below e of c (e - x); flux in bin b = F(edges[b+1]) - F(edges[b])
  let C0 = c0[0];
  let C1 = c1[0];
  let Fprev = C0 * edges[0] - C1;
  for (let b = 0; b < nb; b++) {
    C0 += c0[b + 1];
    C1 += c1[b + 1];
    const F = C0 * edges[b + 1] - C1;
    flux[b] += F - Fprev;
    Fprev = F;
  }
  for (let b = 0; b < nb; b++) if (flux[b] < 0) flux[b] = 0; // rounding of the ramp sums
  return { flux, total };
}

/** Slot of x among the edges: 0 below edges[0], s for edges[s-1] <= x < edges[s], nb+1 at or above the last edge. */
function slot(edges: ArrayLike<number>, x: number): number {
  const nb = edges.length - 1;
  if (x < edges[0]) return 0;
  if (x >= edges[nb]) return nb + 1;
  let lo = 0;
  let hi = nb;
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1;
    if (edges[mid] <= x) lo = mid;
    else hi = mid;
  }
  return lo + 1;
}

/**
 * A fast `slot` for many lookups in the same edges: a table over 4 nb equal buckets gives the
 * slot at each bucket's start, then a short forward scan (binary search when the edges are so
 * irregular that a bucket holds many of them).
 */
function slotFinder(edges: ArrayLike<number>): (x: number) => number {
  const nb = edges.length - 1;
  const e0 = edges[0];
  const eN = edges[nb];
  const buckets = 4 * nb;
  const scale = buckets / (eN - e0);
  const table = new Int32Array(buckets + 1);
  for (let k = 0; k <= buckets; k++) table[k] = slot(edges, e0 + k / scale);
  return (x: number): number => {
    if (x < e0) return 0;
    if (x >= eN) return nb + 1;
    const k = Math.min(buckets, Math.floor((x - e0) * scale));
    let s = table[k]; // the slot of the bucket's start: edges[s - 1] <= start <= x
    if (s < 1) s = 1;
    while (s > 1 && edges[s - 1] > x) s--; // the start rounded above x
    for (let steps = 0; s <= nb && edges[s] <= x; s++) if (++steps > 8) return slot(edges, x);
    return s;
  };
}

/** Index of the bin [edges[b], edges[b+1]) holding x, or -1 outside (the last bin includes its top edge). */
function findBin(edges: ArrayLike<number>, x: number): number {
  const nb = edges.length - 1;
  if (!(x >= edges[0] && x <= edges[nb])) return -1;
  return Math.min(slot(edges, x), nb) - 1;
}

/** Power-law emissivity r^-index (the function carries its index for rayWeights' fast path). */
export function powerLaw(index: number): Emissivity & { index: number } {
  return Object.assign((r: number) => Math.pow(r, -index), { index });
}

/** Broken power law r^-inner inside rBreak, continuous with r^-outer outside. */
export function brokenPowerLaw(inner: number, outer: number, rBreak: number): Emissivity {
  const scale = Math.pow(rBreak, outer - inner); // makes r^-inner = scale r^-outer at r = rBreak
  return (r) => (r < rBreak ? Math.pow(r, -inner) : scale * Math.pow(r, -outer));
}

/** Tabulated emissivity, linear interpolation in (ln r, ln eps) between the points, for r within the table (rs increasing, values > 0). */
export function tabulated(rs: readonly number[], values: readonly number[]): Emissivity {
  const lr = rs.map(Math.log);
  const lv = values.map((v) => (v > 0 ? Math.log(v) : -Infinity));
  const zero = values.map((v) => v <= 0);
  return (r) => {
    const x = Math.log(r);
    const b = Math.max(0, Math.min(lr.length - 2, findBin(lr, Math.min(Math.max(x, lr[0]), lr[lr.length - 1]))));
    if (zero[b] || zero[b + 1]) {
      // a zero endpoint: interpolate linearly in eps instead
      const t = (r - rs[b]) / (rs[b + 1] - rs[b]);
      return values[b] + t * (values[b + 1] - values[b]);
    }
    const t = (x - lr[b]) / (lr[b + 1] - lr[b]);
    return Math.exp(lv[b] + t * (lv[b + 1] - lv[b]));
  };
}

/** L1 distance between two profiles each normalised to unit sum (dimensionless, 0..2). */
export function l1Distance(a: ArrayLike<number>, b: ArrayLike<number>): number {
  let sa = 0;
  let sb = 0;
  for (let i = 0; i < a.length; i++) {
    sa += a[i];
    sb += b[i];
  }
  if (!(sa > 0) || !(sb > 0)) return sa === sb ? 0 : 2;
  let d = 0;
  for (let i = 0; i < a.length; i++) d += Math.abs(a[i] / sa - b[i] / sb);
  return d;
}
