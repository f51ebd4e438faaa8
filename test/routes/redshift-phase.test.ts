/**
 * POST /v1/redshift with observer_inclination: the range of g over the orbital phase of a circular
 * emitter, from the ray tracer on the worker threads, against exact limits: face-on (every phase
 * shows g = 1/u^t, BPT72 eq. 2.16 / Cunningham 1975), nearly edge-on Schwarzschild at r = 6M
 * (the forward-emitted tangential photon: g_max = sqrt(2), derived below), the Newtonian
 * double horn far out (1 -+ v sin i, common practice); plus errors, warnings, batches and the ray
 * budget.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { FastifyInstance } from 'fastify';
import { buildApp } from '../../server/app.js';
import { makeConfig, type Config } from '../../server/config.js';

const base: Partial<Config> = { LOG_LEVEL: 'silent', RATE_LIMIT_MAX: 0, MAX_EVENT_LOOP_DELAY_MS: 0, BATCH_MAX: 50, RAY_WORKERS: 2 };
let app: FastifyInstance;
beforeAll(async () => {
  app = await buildApp(makeConfig(base));
  await app.ready();
});
afterAll(async () => app.close());

async function post(payload: unknown, on: FastifyInstance = app) {
  const res = await on.inject({ method: 'POST', url: '/v1/redshift', payload: payload as object });
  return { status: res.statusCode, body: res.json() };
}
const rel = (x: number, ref: number) => Math.abs(x / ref - 1);
const codes = (b: { warnings?: Array<{ code: string }> }) => (b.warnings ?? []).map((w) => w.code);

// Invented scenario: a hot spot orbiting the imaginary hole "Orrin-2" (9 solar masses), seen by a
// made-up observatory; numbers are demo inputs.
const ORRIN = { body: { mass: { value: 9, unit: 'solMass' } }, emitter: { motion: 'circular', r: { value: 6, unit: 'rg' } } };

describe('orbital-phase range of g', () => {
  it('face-on (i = 0): every phase shows the face-on shift g = 1/u^t (Schwarzschild r = 6M: sqrt(1/2), exact)', async () => {
    const res = await post({ ...ORRIN, observer_inclination: 0 });
    expect(res.status).toBe(200);
    const p = res.body.orbital_phase_range;
    expect(rel(p.g_min, Math.SQRT1_2)).toBeLessThan(1e-9);
    expect(rel(p.g_max, Math.SQRT1_2)).toBeLessThan(1e-9);
    expect(rel(p.g_max, res.body.g)).toBeLessThan(1e-9);
    expect(p.inclination_deg).toBe(0);
    expect(p.rays).toBeGreaterThan(0);
    expect(res.body.references.join(' ')).toMatch(/Cunningham 1975/);
  });

  it('face-on Kerr orbit: g = 1/u^t with u^t of BPT72 eq. 2.16 at every phase, both senses', async () => {
    for (const direction of ['prograde', 'retrograde'] as const) {
      const a = 0.7;
      const r = 8;
      const s = direction === 'prograde' ? a : -a;
      // u^t = (r^(3/2) + s) / (r^(3/4) sqrt(r^(3/2) - 3 r^(1/2) + 2 s)), BPT72 eq. 2.16 (signed spin)
      const ut = (r ** 1.5 + s) / (r ** 0.75 * Math.sqrt(r ** 1.5 - 3 * Math.sqrt(r) + 2 * s));
      const res = await post({ body: { mass: 1e31, spin: a }, emitter: { motion: 'circular', r: { value: r, unit: 'rg' }, direction }, observer_inclination: 0 });
      expect(res.status).toBe(200);
      expect(rel(res.body.orbital_phase_range.g_min, 1 / ut)).toBeLessThan(1e-9);
      expect(rel(res.body.orbital_phase_range.g_max, 1 / ut)).toBeLessThan(1e-9);
    }
  });

  it('nearly edge-on Schwarzschild orbit at r = 6M: g_max -> sqrt(2)', async () => {
    // Derivation (Schwarzschild, M = 1): a photon emitted tangentially forward at r = 6 has the
    // largest impact parameter that escapes from there, b = r/sqrt(1 - 2/r) = sqrt(54) (r > 3: it is at
    // its periastron), and seen edge-on some phase sends it to the observer. g = 1/(u^t (1 - Omega b))
    // with u^t = 1/sqrt(1 - 3/r) = sqrt(2) and Omega = r^(-3/2): Omega b = 1/2, so g_max = sqrt(2).
    // At 89.9 deg instead of 90 the difference is second order in the 0.1 deg offset.
    const res = await post({ ...ORRIN, observer_inclination: { value: 89.9, unit: 'deg' } });
    expect(res.status).toBe(200);
    expect(rel(res.body.orbital_phase_range.g_max, Math.SQRT2)).toBeLessThan(1e-5);
    expect(res.body.orbital_phase_range.g_min).toBeLessThan(res.body.g);
  });

  it('far out the range is the Newtonian double horn 1 -+ v sin i, v = sqrt(GM/r) (common practice; O(GM/(c^2 r)) corrections)', async () => {
    const r = 1e5;
    for (const deg of [20, 60]) {
      const res = await post({ ...ORRIN, emitter: { motion: 'circular', r: { value: r, unit: 'rg' } }, observer_inclination: { value: deg, unit: 'deg' } });
      const vs = Math.sqrt(1 / r) * Math.sin((deg * Math.PI) / 180);
      expect(Math.abs(res.body.orbital_phase_range.g_max - (1 + vs))).toBeLessThan(3 / r);
      expect(Math.abs(res.body.orbital_phase_range.g_min - (1 - vs))).toBeLessThan(3 / r);
    }
  });

  it('with a rest value, the observed extremes in its unit (energies scale by g, wavelengths by 1/g)', async () => {
    const e = await post({ ...ORRIN, rest: { value: 6.4, unit: 'keV' }, observer_inclination: { value: 45, unit: 'deg' } });
    const p = e.body.orbital_phase_range;
    expect(rel(p.observed_min.value, 6.4 * p.g_min)).toBeLessThan(1e-14);
    expect(rel(p.observed_max.value, 6.4 * p.g_max)).toBeLessThan(1e-14);
    expect(p.observed_max.unit).toBe('keV');
    expect(rel(p.one_plus_z_max, 1 / p.g_min)).toBeLessThan(1e-14);
    const w = await post({ ...ORRIN, rest: { value: 1.94, unit: 'Angstrom' }, observer_inclination: { value: 45, unit: 'deg' } });
    const q = w.body.orbital_phase_range;
    expect(rel(q.observed_min.value, 1.94 / q.g_max)).toBeLessThan(1e-14);
    expect(rel(q.observed_max.value, 1.94 / q.g_min)).toBeLessThan(1e-14);
  });
});

describe('errors, warnings and batches', () => {
  it('400 for a static emitter, an inclination beyond 89.9 deg, or an uncertain inclination', async () => {
    const stat = await post({ ...ORRIN, emitter: { motion: 'static', r: { value: 6, unit: 'rg' } }, observer_inclination: 0.3 });
    expect(stat.status).toBe(400);
    expect(stat.body.errors[0].pointer).toBe('/observer_inclination');
    const wide = await post({ ...ORRIN, observer_inclination: { value: 95, unit: 'deg' } });
    expect(wide.status).toBe(400);
    expect(wide.body.detail).toMatch(/89\.9/);
    const unc = await post({ ...ORRIN, observer_inclination: { value: 30, unit: 'deg', uncertainty: 1 } });
    expect(unc.status).toBe(400);
    expect(unc.body.errors[0].pointer).toBe('/observer_inclination/uncertainty');
  });

  it('flags that the range is nominal when other inputs are uncertain', async () => {
    const res = await post({ ...ORRIN, body: { mass: { value: 9, unit: 'solMass', uncertainty: 1 } }, observer_inclination: 0.5 });
    expect(res.status).toBe(200);
    expect(codes(res.body)).toContain('phase-range-nominal');
    expect(typeof res.body.orbital_phase_range.g_max).toBe('number');
  });

  it('a batch keeps per-item physics errors and traces the others', async () => {
    const res = await post({ items: [{ ...ORRIN, observer_inclination: 0.4 }, { ...ORRIN, emitter: { motion: 'circular', r: { value: 2.5, unit: 'rg' } }, observer_inclination: 0.4 }] });
    expect(res.status).toBe(200);
    expect(res.body.items[0].orbital_phase_range.g_max).toBeGreaterThan(res.body.items[0].g);
    expect(res.body.items[1].error.status).toBe(422);
  });

  it('413 past RAYS_MAX', async () => {
    const small = await buildApp(makeConfig({ ...base, RAYS_MAX: 10_000 }));
    try {
      const res = await post({ items: Array.from({ length: 3 }, () => ({ ...ORRIN, observer_inclination: 0.2 })) }, small);
      expect(res.status).toBe(413);
      expect(res.body.detail).toMatch(/RAYS_MAX/);
    } finally {
      await small.close();
    }
  });
});
