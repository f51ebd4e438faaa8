/**
 * POST /v1/line-profile: the reply against the physics computed in-process (same grid, same
 * split over threads), exact limits (face-on Schwarzschild support, Cunningham 1975), the bin
 * bookkeeping (unit total, wavelength bins, energy vs photon flux), the cache (one trace per
 * geometry, warm requests reuse it), batches with per-item 422s, input errors, the ray budget
 * (413), the time limit (503), cancellation by a client that goes away, and that tracing on the
 * worker threads leaves the event loop free for other requests.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import http from 'node:http';
import type { AddressInfo } from 'node:net';
import type { FastifyInstance } from 'fastify';
import { buildApp } from '../../server/app.js';
import { makeConfig, type Config } from '../../server/config.js';
import { isco } from '../../physics/kerr.js';
import { binProfile, mergeTransfers, powerLaw, rayWeights, isotropic, traceTransfer, type DiskGeometry } from '../../physics/lineprofile.js';

const THREADS = 2;
const base: Partial<Config> = { LOG_LEVEL: 'silent', RATE_LIMIT_MAX: 0, MAX_EVENT_LOOP_DELAY_MS: 0, BATCH_MAX: 50, RAY_WORKERS: THREADS };

async function makeApp(overrides: Partial<Config> = {}): Promise<FastifyInstance> {
  const app = await buildApp(makeConfig({ ...base, ...overrides }));
  await app.ready();
  return app;
}

let app: FastifyInstance;
beforeAll(async () => {
  app = await makeApp();
});
afterAll(async () => app.close());

async function post(payload: unknown, headers: Record<string, string> = {}, on: FastifyInstance = app) {
  const res = await on.inject({ method: 'POST', url: '/v1/line-profile', payload: payload as object, headers });
  return { status: res.statusCode, raw: res.body, headers: res.headers, body: String(res.headers['content-type'] ?? '').includes('json') ? res.json() : undefined };
}

// An invented scenario: the accretion disk of the imaginary hole "Tamsin-4", watched in a
// made-up 5.9 keV line by an invented survey. Numbers are demo inputs, not measurements.
const TAMSIN = {
  body: { spin: 0.6 },
  inclination: { value: 40, unit: 'deg' },
  r_out: 60,
  emissivity: 3,
  rest: { value: 5.9, unit: 'keV' },
  energies: { min: 2, max: 8, bins: 120 },
  accuracy: 'fast',
};
const sum = (xs: number[]) => xs.reduce((s, x) => s + x, 0);
const codes = (b: { warnings?: Array<{ code: string }> }) => (b.warnings ?? []).map((w) => w.code);
/** ISCO of BPT72 eq. 2.21, evaluated here independently of physics/kerr.ts (prograde, 0 <= a < 1). */
function bptIsco(a: number): number {
  const z1 = 1 + Math.cbrt(1 - a * a) * (Math.cbrt(1 + a) + Math.cbrt(1 - a));
  const z2 = Math.sqrt(3 * a * a + z1 * z1);
  return 3 + z2 - Math.sqrt((3 - z1) * (3 + z1 + 2 * z2));
}
const isco06 = bptIsco(0.6);

/** The geometry key of TAMSIN with another r_out and accuracy (r_in: the service's ISCO). */
function geometryOf(rOut: number, accuracy: DiskGeometry['accuracy']): DiskGeometry {
  return { a: 0.6, inclination: (40 * Math.PI) / 180, rIn: isco(0.6), rOut, accuracy };
}

/** The service's transfer computed in-process: the same grid split in the same parts. */
function inProcess(g: DiskGeometry) {
  return mergeTransfers(Array.from({ length: THREADS }, (_, index) => traceTransfer(g, { part: { index, of: THREADS } })));
}

describe('a single profile', () => {
  it('equals the profile computed in-process from the same transfer, normalised to unit total over the bins', async () => {
    const res = await post(TAMSIN);
    expect(res.status).toBe(200);
    const b = res.body;
    expect(b.flux).toHaveLength(120);
    expect(b.edges.value).toHaveLength(121);
    expect(b.edges.unit).toBe('keV');
    expect(Math.abs(sum(b.flux) - 1)).toBeLessThan(1e-12);
    const t = inProcess({ a: 0.6, inclination: (40 * Math.PI) / 180, rIn: b.disk.r_in.rg, rOut: 60, accuracy: 'fast' });
    expect(b.rays).toBe(t.rays);
    expect(b.g_min).toBe(t.gMin);
    expect(b.g_max).toBe(t.gMax);
    const gEdges = b.edges.value.map((e: number) => e / 5.9);
    const p = binProfile(t.cells, rayWeights(t, { emissivity: powerLaw(3), law: isotropic, power: 3 }), gEdges);
    const inBins = sum(Array.from(p.flux));
    b.flux.forEach((f: number, i: number) => expect(Math.abs(f - p.flux[i] / inBins)).toBeLessThanOrEqual(1e-12 * Math.max(...b.flux)));
    expect(b.fraction_in_range).toBeCloseTo(inBins / p.total, 12);
    // the default inner radius is the ISCO (BPT72), and it is reported
    expect(Math.abs(b.disk.r_in.rg / isco06 - 1)).toBeLessThan(1e-12);
    expect(Math.abs(b.disk.isco.rg / isco06 - 1)).toBeLessThan(1e-12);
    expect(b.disk.r_in.value).toBeUndefined(); // no mass: radii in rg only
    expect(b.model).toBe('kerr');
    expect(b.references.join(' ')).toMatch(/Cunningham 1975/);
    expect(b.accuracy.level).toBe('fast');
    expect(b.accuracy.l1_estimate).toBeGreaterThan(0);
    expect(b.accuracy.l1_estimate).toBeLessThan(0.2);
    // the line's ends in keV are g_min and g_max times the rest energy
    expect(b.line_range.low.value).toBeCloseTo(5.9 * b.g_min, 12);
    expect(b.line_range.high.value).toBeCloseTo(5.9 * b.g_max, 12);
  });

  it('face-on Schwarzschild disk: the line spans exactly sqrt(1 - 3M/r) from r_in to r_out (Cunningham 1975; exact)', async () => {
    const res = await post({ ...TAMSIN, body: { spin: 0 }, inclination: 0, r_in: 6, r_out: 50, accuracy: 'standard' });
    expect(res.status).toBe(200);
    expect(Math.abs(res.body.g_min / Math.sqrt(1 - 3 / 6) - 1)).toBeLessThan(1e-7);
    expect(Math.abs(res.body.g_max / Math.sqrt(1 - 3 / 50) - 1)).toBeLessThan(1e-7);
    expect(res.body.model).toBe('schwarzschild');
    // no flux outside the support (bins entirely below g_min or above g_max are empty)
    const e = res.body.edges.value as number[];
    res.body.flux.forEach((f: number, i: number) => {
      if (e[i + 1] < 5.9 * res.body.g_min || e[i] > 5.9 * res.body.g_max) expect(f).toBeLessThan(1e-12); // zero up to rounding of the ramp sums
    });
  });

  it('a mass gives the radii in metres too (r = rg GM/c^2; GM_sun IAU 2015 B3, c exact)', async () => {
    const res = await post({ ...TAMSIN, body: { spin: 0.6, mass: { value: 12, unit: 'solMass' } }, r_out: { value: 60 * 1.3271244e20 * 12 / 299792458 ** 2 / 1000, unit: 'km' } });
    expect(res.status).toBe(200);
    const rg = (12 * 1.3271244e20) / 299792458 ** 2;
    expect(res.body.disk.r_out.rg).toBeCloseTo(60, 9);
    expect(res.body.disk.r_in.value / (isco06 * rg) - 1).toBeLessThan(1e-12);
    expect(res.body.disk.r_in.unit).toBe('m');
  });

  it('wavelength bins give the same profile as the matching energy bins, in the caller\'s order', async () => {
    const hcKeVA = 12.398419843320026; // h c in keV Angstrom (CODATA 2018 exact h, c, e)
    const keV = Array.from({ length: 41 }, (_, i) => 3 + (4 * i) / 40);
    const angstrom = keV.map((e) => hcKeVA / e).reverse();
    const inE = await post({ ...TAMSIN, energies: { edges: keV } });
    const inA = await post({ ...TAMSIN, rest: { value: hcKeVA / 5.9, unit: 'Angstrom' }, energies: { edges: angstrom } });
    expect(inE.status).toBe(200);
    expect(inA.status).toBe(200);
    expect(inA.body.edges.unit).toBe('Angstrom');
    const back = (inA.body.flux as number[]).slice().reverse();
    back.forEach((f, i) => expect(Math.abs(f - inE.body.flux[i])).toBeLessThan(1e-9));
    // the line's range in Angstrom: long end from g_min
    expect(inA.body.line_range.high.value).toBeCloseTo(hcKeVA / 5.9 / inA.body.g_min, 9);
  });

  it('energy flux weighs each bin by its energy: energy/photon ratio per bin follows the bin centre (g^4 vs g^3)', async () => {
    const bins = { min: 3, max: 7, bins: 80 };
    const ph = await post({ ...TAMSIN, energies: bins });
    const en = await post({ ...TAMSIN, energies: bins, flux: 'energy' });
    expect(en.body.flux_kind).toBe('energy');
    const e = ph.body.edges.value as number[];
    const ratios: number[] = [];
    ph.body.flux.forEach((p: number, i: number) => {
      if (p > 1e-3) ratios.push(en.body.flux[i] / p / ((e[i] + e[i + 1]) / 2));
    });
    // constant up to the spread of energies within a bin (half a bin width: 0.025 keV / 5 keV)
    const mean = sum(ratios) / ratios.length;
    for (const r of ratios) expect(Math.abs(r / mean - 1)).toBeLessThan(0.01);
  });

  it('limb darkening (Laor 1991) reweights the profile and is cited', async () => {
    const iso = await post(TAMSIN);
    const ld = await post({ ...TAMSIN, emission: 'limb-darkened' });
    expect(ld.status).toBe(200);
    expect(ld.body.references.join(' ')).toMatch(/Laor 1991/);
    const l1 = (ld.body.flux as number[]).reduce((s, f, i) => s + Math.abs(f - iso.body.flux[i]), 0);
    expect(l1).toBeGreaterThan(1e-3);
    expect(ld.body.rays).toBe(iso.body.rays); // same geometry, same rays
  });

  it('replays byte-identically (cached or not)', async () => {
    const a = await post({ ...TAMSIN, emissivity: 2.5 });
    const b = await post({ ...TAMSIN, emissivity: 2.5 });
    expect(b.raw).toBe(a.raw);
  });

  it('answers image/svg+xml with a plot of the profile', async () => {
    const res = await post(TAMSIN, { accept: 'image/svg+xml' });
    expect(res.status).toBe(200);
    expect(res.headers['content-type']).toMatch(/^image\/svg\+xml/);
    expect(res.raw).toMatch(/<path id="profile" d="M/);
    expect(res.raw).not.toMatch(/NaN|Infinity/);
  });
});

describe('the transfer cache and batches', () => {
  it('traces each geometry once: a batch of emissivities and repeated requests reuse it', async () => {
    const rays = app.lapse.rays;
    const geometry = { ...TAMSIN, inclination: { value: 52, unit: 'deg' } };
    const before = rays.stats.traces;
    const res = await post({
      items: [
        { ...geometry, emissivity: 2 },
        { ...geometry, emissivity: { kind: 'broken-power-law', index_inner: 5, index_outer: 3, break_radius: 8 } },
        { ...geometry, emissivity: { kind: 'table', r: [3, 10, 30, 100], value: [1, 0.1, 0.004, 1e-4] } },
        { ...geometry, r_in: 1.2 },
      ],
    });
    expect(res.status).toBe(200);
    expect(res.body.count).toBe(4);
    expect(rays.stats.traces - before).toBe(1); // items 0-2 share a geometry; item 3 fails before tracing
    for (const item of res.body.items.slice(0, 3)) expect(Math.abs(sum(item.flux) - 1)).toBeLessThan(1e-12);
    const err = res.body.items[3].error;
    expect(err.status).toBe(422);
    expect(err.errors[0].pointer).toBe('/items/3/r_in');
    expect(err.detail).toMatch(/photon orbit|horizon/);
    const hits = rays.stats.cacheHits;
    const again = await post({ ...geometry, emissivity: 4 });
    expect(again.status).toBe(200);
    expect(rays.stats.traces - before).toBe(1);
    expect(rays.stats.cacheHits).toBeGreaterThan(hits);
    expect(again.body.rays).toBe(res.body.items[0].rays);
  });

  it('/metrics reports the traces, cache hits and cached geometries', async () => {
    const res = await app.inject({ method: 'GET', url: '/metrics' });
    const value = (name: string) => Number(new RegExp(`^${name} (\\S+)$`, 'm').exec(res.body)?.[1]);
    expect(value('lapse_ray_traces_total')).toBe(app.lapse.rays.stats.traces);
    expect(value('lapse_ray_traces_total')).toBeGreaterThan(0);
    expect(value('lapse_ray_cache_hits_total')).toBe(app.lapse.rays.stats.cacheHits);
    expect(value('lapse_ray_cache_entries')).toBe(app.lapse.rays.cacheEntries);
    expect(value('lapse_ray_cache_entries')).toBeGreaterThan(0);
  });

  it('a broken power law with equal indices is the plain power law', async () => {
    const plain = await post({ ...TAMSIN, emissivity: 2.7 });
    const broken = await post({ ...TAMSIN, emissivity: { kind: 'broken-power-law', index_inner: 2.7, index_outer: 2.7, break_radius: 10 } });
    broken.body.flux.forEach((f: number, i: number) => expect(Math.abs(f - plain.body.flux[i])).toBeLessThan(1e-12));
  });
});

describe('errors', () => {
  const cases: Array<[string, Record<string, unknown>, number, string, RegExp]> = [
    ['r_in inside the horizon', { r_in: 1.5 }, 422, '/r_in', /horizon|photon orbit/],
    ['r_in between the horizon and the photon orbit', { body: { spin: 0 }, r_in: 2.5 }, 422, '/r_in', /photon orbit/],
    ['r_out not above r_in', { r_in: 30, r_out: 20 }, 422, '/r_out', /greater than r_in/],
    ['r_out too large', { r_out: 2e5 }, 400, '/r_out', /at most 100000/],
    ['inclination beyond 89 deg', { inclination: { value: 89.5, unit: 'deg' } }, 400, '/inclination', /\[0, 89\] deg/],
    ['metres without a mass', { r_out: { value: 1e6, unit: 'm' } }, 400, '/r_out/unit', /mass/],
    ['an uncertainty', { inclination: { value: 40, unit: 'deg', uncertainty: 2 } }, 400, '/inclination/uncertainty', /batch/],
    ['decreasing edges', { energies: { edges: [3, 5, 4] } }, 400, '/energies/edges/2', /increasing/],
    ['max below min', { energies: { min: 6, max: 5, bins: 10 } }, 400, '/energies/max', /greater than min/],
    ['a table that does not cover the disk', { emissivity: { kind: 'table', r: [10, 100], value: [1, 0.01] } }, 400, '/emissivity/r', /cover/],
    ['a table of mismatched lengths', { emissivity: { kind: 'table', r: [1, 100], value: [1, 0.5, 0.1] } }, 400, '/emissivity/value', /as many/],
    ['a non-spectral unit for the bins', { energies: { min: 1, max: 2, bins: 4, unit: 'kg' } }, 400, '/energies/unit', /not a wavelength, frequency or photon energy/],
    ['a mass and a gm', { body: { spin: 0.5, mass: 1e31, gm: 1e20 } }, 400, '/body', /at most one/],
  ];
  it.each(cases)('%s', async (_what, change, status, pointer, message) => {
    const res = await post({ ...TAMSIN, ...change });
    expect(res.status).toBe(status);
    expect(res.headers['content-type']).toMatch(/^application\/problem\+json/);
    expect(res.body.errors.map((e: { pointer: string }) => e.pointer)).toContain(pointer);
    expect(res.body.detail).toMatch(message);
  });

  it('422 for a disk thinner than the finest cell of the grid ("fast": a 0.2 % ring), which "standard" resolves', async () => {
    const ring = { ...TAMSIN, body: { spin: 0 }, inclination: 0, r_in: 10, r_out: 10.02, energies: { min: 5, max: 5.2, bins: 40 } };
    const res = await post(ring);
    expect(res.status).toBe(422);
    expect(res.body.errors[0].pointer).toBe('/r_out');
    expect(res.body.detail).toMatch(/standard/);
    const ok = await post({ ...ring, accuracy: 'standard' });
    expect(ok.status).toBe(200);
    expect(Math.abs(ok.body.g_min / Math.sqrt(1 - 3 / 10) - 1)).toBeLessThan(1e-7); // face-on: g = sqrt(1 - 3M/r), exact
  });

  it('flags a disk reaching inside the ISCO (BPT72)', async () => {
    const res = await post({ ...TAMSIN, r_in: 3.2 });
    expect(res.status).toBe(200);
    expect(codes(res.body)).toContain('inside-isco');
  });

  it('flags bins that cut the line, and still normalises over the bins', async () => {
    const res = await post({ ...TAMSIN, energies: { min: 5, max: 6, bins: 20 } });
    expect(codes(res.body)).toContain('line-outside-bins');
    expect(res.body.fraction_in_range).toBeLessThan(0.9);
    expect(Math.abs(sum(res.body.flux) - 1)).toBeLessThan(1e-12);
  });

  it('413 when the new geometries of a request may trace more than RAYS_MAX rays', async () => {
    const small = await makeApp({ RAYS_MAX: 50_000 });
    try {
      const res = await post({ ...TAMSIN, accuracy: 'standard' }, {}, small);
      expect(res.status).toBe(413);
      expect(res.body.detail).toMatch(/RAYS_MAX/);
      expect(res.body.detail).toMatch(/50000/);
      const ok = await post(TAMSIN, {}, small); // "fast" fits
      expect(ok.status).toBe(200);
    } finally {
      await small.close();
    }
  });

  it('413 when binning the batch would read more than COMPUTE_BUDGET rays and cells', async () => {
    const small = await makeApp({ COMPUTE_BUDGET: 100_000 });
    try {
      const res = await post({ items: [TAMSIN, { ...TAMSIN, emissivity: 2 }, { ...TAMSIN, emissivity: 4 }, { ...TAMSIN, emissivity: 5 }] }, {}, small);
      expect(res.status).toBe(413);
      expect(res.body.detail).toMatch(/COMPUTE_BUDGET/);
      expect((await post({ items: [TAMSIN, { ...TAMSIN, emissivity: 2 }] }, {}, small)).status).toBe(200); // 2 x 30 000 fits
    } finally {
      await small.close();
    }
  });

  it('503 with Retry-After when the tracing exceeds RAY_TIMEOUT_MS, and the pool keeps serving', async () => {
    const slow = await makeApp({ RAY_TIMEOUT_MS: 150 });
    try {
      const res = await post({ ...TAMSIN, accuracy: 'fine', r_out: 300 }, {}, slow);
      expect(res.status).toBe(503);
      expect(res.headers['retry-after']).toBe('1');
      expect(res.body.type).toBe('/problems/compute-timeout');
      expect(res.body.detail).toMatch(/RAY_TIMEOUT_MS/);
      expect(slow.lapse.rays.has(geometryOf(300, 'fine'))).toBe(false);
    } finally {
      await slow.close();
    }
  });
});

describe('worker threads', () => {
  it('the event loop stays free while profiles trace: /healthz and /v1/radii answer while the trace runs', async () => {
    // A trace on the event loop would hold these requests for the whole trace (about a second on
    // one thread); on the worker they take milliseconds. The bound is loose because other test
    // files share the CPUs; the 50 ms is measured by `npm run bench` (README).
    const one = await makeApp({ RAY_WORKERS: 1 });
    try {
      await post({ ...TAMSIN, r_out: 20 }, {}, one); // start the worker
      const tracing = post({ ...TAMSIN, accuracy: 'standard', r_out: 500 }, {}, one);
      await new Promise((r) => setTimeout(r, 50));
      const times: number[] = [];
      for (let k = 0; k < 5; k++) {
        for (const [method, url, payload] of [['GET', '/healthz', undefined], ['POST', '/v1/radii', { body: { mass: { value: 8, unit: 'solMass' }, spin: 0.3 } }]] as const) {
          const t0 = performance.now();
          const res = await one.inject({ method, url, payload });
          times.push(performance.now() - t0);
          expect(res.statusCode).toBe(200);
        }
      }
      expect(one.lapse.rays.has(geometryOf(500, 'standard'))).toBe(true); // still tracing
      expect(Math.max(...times)).toBeLessThan(250);
      expect((await tracing).status).toBe(200);
    } finally {
      await one.close();
    }
  });

  it('a client that goes away cancels its trace and frees the worker', async () => {
    const one = await makeApp({ RAY_WORKERS: 1 });
    try {
      await one.listen({ port: 0, host: '127.0.0.1' });
      const port = (one.server.address() as AddressInfo).port;
      const body = JSON.stringify({ ...TAMSIN, accuracy: 'fine', r_out: 700 });
      const req = http.request({ host: '127.0.0.1', port, method: 'POST', path: '/v1/line-profile', headers: { 'content-type': 'application/json', 'content-length': Buffer.byteLength(body) } });
      req.on('error', () => undefined);
      req.end(body);
      const geometry = geometryOf(700, 'fine');
      const deadline = Date.now() + 5000;
      while (!one.lapse.rays.has(geometry) && Date.now() < deadline) await new Promise((r) => setTimeout(r, 10));
      expect(one.lapse.rays.has(geometry)).toBe(true);
      req.destroy();
      while (one.lapse.rays.has(geometry) && Date.now() < deadline) await new Promise((r) => setTimeout(r, 10));
      expect(one.lapse.rays.has(geometry)).toBe(false); // the trace was abandoned, not cached
      expect(one.lapse.rays.stats.aborted).toBeGreaterThan(0);
      // the single worker is free again: a small profile comes back promptly
      const t0 = performance.now();
      const res = await post({ ...TAMSIN, r_out: 15 }, {}, one);
      expect(res.status).toBe(200);
      expect(performance.now() - t0).toBeLessThan(3000); // far less than the abandoned fine trace
    } finally {
      await one.close();
    }
  });
});
