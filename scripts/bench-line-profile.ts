/**
 * The line-profile part of `npm run bench` (called by bench.ts against a fresh server whose worker
 * threads may use every core). It measures, for the case of issue 6 (a* = 0.998, i = 30 deg,
 * r_in = ISCO, r_out = 400 rg, q = 3, 6.4 keV, 300 logarithmic bins from 1 to 9 keV, "standard"):
 *   - cold: the first request of a geometry (empty cache): the first request after start-up (the
 *     server has started and warmed its worker threads, as server/start.ts does), then the median
 *     of 3 more geometries that differ only in r_out by parts in 1e9 (a new cache key each);
 *   - warm: the same geometry with a new emissivity index each time (median and p90 of 20);
 *   - a batch of 100 emissivities for one cached geometry (median of 5);
 *   - rays per second per core (rays of the cold trace / cold time / worker threads);
 *   - the L1 distance of the normalised profile to the "fine" one, and the reply's own estimate;
 *   - responsiveness: /healthz and POST /v1/radii latencies while "fine" profiles trace.
 * Every reply must be a 200 with the expected shape; otherwise the bench fails.
 */
import { availableParallelism } from 'node:os';

export interface LineProfileBench {
  threads: number;
  coldFirstMs: number;
  coldMs: number[];
  coldMedianMs: number;
  rays: number;
  raysPerSecPerCore: number;
  warmMs: number[];
  warmMedianMs: number;
  warmP90Ms: number;
  batch100Ms: number[];
  batch100MedianMs: number;
  l1ToFine: number;
  l1Estimate: number;
  fineColdMs: number;
  responsiveness: { requests: number; healthzMedianMs: number; healthzMaxMs: number; radiiMedianMs: number; radiiMaxMs: number };
  failures: string[];
}

export const BENCH_CASE = {
  body: { spin: 0.998 },
  inclination: { value: 30, unit: 'deg' },
  r_out: 400,
  emissivity: 3,
  rest: { value: 6.4, unit: 'keV' },
  energies: { min: 1, max: 9, bins: 300, spacing: 'logarithmic' },
  accuracy: 'standard',
};

const median = (xs: number[]) => {
  const s = [...xs].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m] : (s[m - 1] + s[m]) / 2;
};
const p90 = (xs: number[]) => [...xs].sort((a, b) => a - b)[Math.min(xs.length - 1, Math.floor(0.9 * xs.length))];

interface Profile {
  flux: number[];
  rays: number;
  accuracy: { l1_estimate: number };
}

export async function benchLineProfile(base: string, serverThreads = availableParallelism(), log: (s: string) => void = () => undefined): Promise<LineProfileBench> {
  const failures: string[] = [];
  const post = async (path: string, body: unknown): Promise<{ ms: number; status: number; json: unknown }> => {
    const t0 = performance.now();
    const res = await fetch(base + path, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify(body), signal: AbortSignal.timeout(120_000) });
    const text = await res.text();
    const ms = performance.now() - t0;
    let json: unknown = text;
    try {
      json = JSON.parse(text);
    } catch {
      // kept as text
    }
    if (res.status !== 200) failures.push(`${path}: status ${res.status}: ${text.slice(0, 300)}`);
    return { ms, status: res.status, json };
  };
  const profile = async (body: unknown) => {
    const r = await post('/v1/line-profile', body);
    const p = r.json as Profile;
    if (r.status === 200 && (!Array.isArray(p.flux) || p.flux.length !== 300)) failures.push('/v1/line-profile: reply without 300 flux values');
    return { ms: r.ms, p };
  };
  const geometry = (k: number) => ({ ...BENCH_CASE, r_out: 400 * (1 + k * 1e-9) });

  // Cold: a new geometry each time (r_out differs by parts in 1e9: a new cache key, the same work).
  const first = await profile(geometry(0));
  log(`  line-profile cold (first request after start-up): ${first.ms.toFixed(0)} ms, ${first.p.rays} rays`);
  const coldMs: number[] = [];
  for (let k = 1; k <= 3; k++) coldMs.push((await profile(geometry(k))).ms);
  log(`  line-profile cold: ${coldMs.map((m) => m.toFixed(0)).join(', ')} ms`);

  // Warm: the cached geometry with a new emissivity each time.
  const warmMs: number[] = [];
  for (let k = 0; k < 20; k++) warmMs.push((await profile({ ...geometry(1), emissivity: 3 + 0.01 * (k + 1) })).ms);
  log(`  line-profile warm: median ${median(warmMs).toFixed(1)} ms`);

  // A batch of 100 emissivities for one cached geometry.
  const batch100Ms: number[] = [];
  for (let k = 0; k < 5; k++) {
    const items = Array.from({ length: 100 }, (_, j) => ({ ...geometry(1), emissivity: 2 + 0.02 * j + 0.001 * k }));
    const r = await post('/v1/line-profile', { items });
    const n = (r.json as { items?: unknown[] }).items?.length;
    if (r.status === 200 && n !== 100) failures.push(`batch of 100: ${n} items back`);
    batch100Ms.push(r.ms);
  }
  log(`  line-profile batch of 100: median ${median(batch100Ms).toFixed(0)} ms`);

  // Responsiveness while "fine" traces run (new geometries keep the workers busy).
  const health: number[] = [];
  const radii: number[] = [];
  let fine: { ms: number; p: Profile } | undefined;
  const tracing = profile({ ...BENCH_CASE, accuracy: 'fine' }).then((r) => (fine = r));
  await new Promise((r) => setTimeout(r, 100));
  while (!fine) {
    let t0 = performance.now();
    const h = await fetch(`${base}/healthz`, { signal: AbortSignal.timeout(10_000) });
    await h.text();
    health.push(performance.now() - t0);
    t0 = performance.now();
    await post('/v1/radii', { body: { mass: { value: 8, unit: 'solMass' }, spin: 0.7 } });
    radii.push(performance.now() - t0);
    await new Promise((r) => setTimeout(r, 20));
  }
  await tracing;
  const l1 = (a: number[], b: number[]) => a.reduce((s, x, i) => s + Math.abs(x - b[i]), 0);
  const l1ToFine = l1(first.p.flux, fine!.p.flux);
  log(`  line-profile fine: ${fine!.ms.toFixed(0)} ms; L1(standard, fine) = ${l1ToFine.toFixed(4)}; estimate ${first.p.accuracy?.l1_estimate?.toFixed(4)}`);
  log(`  during fine traces: /healthz median ${median(health).toFixed(1)} ms (max ${Math.max(...health).toFixed(1)}), /v1/radii median ${median(radii).toFixed(1)} ms (max ${Math.max(...radii).toFixed(1)}) over ${health.length} requests each`);

  const coldMedianMs = median(coldMs);
  return {
    threads: serverThreads,
    coldFirstMs: first.ms,
    coldMs,
    coldMedianMs,
    rays: first.p.rays,
    raysPerSecPerCore: first.p.rays / (coldMedianMs / 1000) / serverThreads,
    warmMs,
    warmMedianMs: median(warmMs),
    warmP90Ms: p90(warmMs),
    batch100Ms,
    batch100MedianMs: median(batch100Ms),
    l1ToFine,
    l1Estimate: first.p.accuracy?.l1_estimate,
    fineColdMs: fine!.ms,
    responsiveness: { requests: health.length, healthzMedianMs: median(health), healthzMaxMs: Math.max(...health), radiiMedianMs: median(radii), radiiMaxMs: Math.max(...radii) },
    failures,
  };
}
