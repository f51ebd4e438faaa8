/**
 * POST /v1/radii against published values (Bardeen, Press & Teukolsky 1972; Thorne 1974), the
 * nominal solar GM (IAU 2015 B3), and 40-digit decimal.js references for propagated uncertainties.
 */
import { Decimal } from 'decimal.js';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { FastifyInstance } from 'fastify';
import { buildApp } from '../../server/app.js';
import { makeConfig } from '../../server/config.js';

const D = Decimal.clone({ precision: 45 });
let app: FastifyInstance;

beforeAll(async () => {
  app = await buildApp(makeConfig({ LOG_LEVEL: 'silent', RATE_LIMIT_MAX: 0, MAX_EVENT_LOOP_DELAY_MS: 0, BATCH_MAX: 50 }));
  await app.ready();
});
afterAll(async () => app.close());

async function post(payload: unknown) {
  const res = await app.inject({ method: 'POST', url: '/v1/radii', payload: payload as object });
  return { status: res.statusCode, body: res.json(), raw: res.body, headers: res.headers };
}

/** BPT72 eq. (2.21), written independently at 45 digits. Signed spin: a > 0 prograde. */
function iscoRef(a: Decimal.Value): Decimal {
  const A = new D(a);
  const one = new D(1);
  const third = one.div(3);
  const z1 = one.plus(one.minus(A.pow(2)).pow(third).times(one.plus(A).pow(third).plus(one.minus(A).pow(third))));
  const z2 = A.pow(2).times(3).plus(z1.pow(2)).sqrt();
  const root = new D(3).minus(z1).times(new D(3).plus(z1).plus(z2.times(2))).sqrt();
  return new D(3).plus(z2).minus(root.times(A.isNegative() ? -1 : 1));
}

const C = new D(299792458); // m/s, exact (SI)
const GM_SUN = new D('1.3271244e20'); // m^3 s^-2, IAU 2015 Resolution B3 (nominal)

describe('POST /v1/radii: published values', () => {
  it('a* = 0: ISCO 6 rg, photon orbit 3 rg, marginally bound 4 rg, efficiency 1 - sqrt(8/9) (BPT72)', async () => {
    const { status, body } = await post({ body: { mass: { value: 1, unit: 'solMass' } } });
    expect(status).toBe(200);
    expect(body.model).toBe('schwarzschild');
    for (const dir of ['prograde', 'retrograde']) {
      expect(body.isco[dir].rg).toBeCloseTo(6, 12);
      expect(body.photon_orbit[dir].rg).toBeCloseTo(3, 12);
      expect(body.marginally_bound[dir].rg).toBeCloseTo(4, 12);
      expect(body.efficiency[dir]).toBeCloseTo(1 - Math.sqrt(8 / 9), 12);
    }
    expect(body.horizon.outer.rg).toBeCloseTo(2, 12);
    expect(body.horizon.inner.rg).toBe(0);
    // rg = GM_sun/c^2 with the IAU 2015 B3 nominal GM: 1476.625... m (40-digit reference).
    const rg = GM_SUN.div(C.pow(2)).toNumber();
    expect(Math.abs(body.rg.value / rg - 1)).toBeLessThan(1e-15);
    expect(body.rs.value).toBeCloseTo(2 * rg, 9);
    expect(body.rg.unit).toBe('m');
    expect(body.mass_solar).toBe(1);
  });

  it('a* = 1: prograde ISCO 1 rg, retrograde 9 rg; efficiencies 1 - 1/sqrt(3) and 1 - sqrt(25/27) (BPT72)', async () => {
    const { body } = await post({ body: { gm: 1e20, spin: 1 } });
    expect(body.model).toBe('kerr');
    expect(body.isco.prograde.rg).toBeCloseTo(1, 12);
    expect(body.isco.retrograde.rg).toBeCloseTo(9, 12);
    expect(body.efficiency.prograde).toBeCloseTo(1 - 1 / Math.sqrt(3), 12);
    expect(body.efficiency.retrograde).toBeCloseTo(1 - Math.sqrt(25 / 27), 12);
    expect(body.photon_orbit.prograde.rg).toBeCloseTo(1, 12);
    expect(body.photon_orbit.retrograde.rg).toBeCloseTo(4, 12);
    expect(body.hawking_temperature.value).toBe(0);
    expect(body.warnings.map((w: { code: string }) => w.code)).toContain('extremal-spin');
  });

  it('a* = -1 swaps the columns: the prograde (reference-sense) orbit counter-rotates', async () => {
    const { body } = await post({ body: { gm: 1e20, spin: -1 } });
    expect(body.isco.prograde.rg).toBeCloseTo(9, 12);
    expect(body.isco.retrograde.rg).toBeCloseTo(1, 12);
  });

  it('a* = 0.998: ISCO 1.237 rg and efficiency 0.32 (Thorne 1974, ApJ 191, 507; digits from memory)', async () => {
    const { body } = await post({ body: { mass: { value: 10, unit: 'solMass' }, spin: 0.998 } });
    expect(Math.abs(body.isco.prograde.rg - 1.237)).toBeLessThan(5e-4);
    expect(Math.abs(body.efficiency.prograde - 0.32)).toBeLessThan(0.005);
  });

  it('Schwarzschild hole of one solar mass: Hawking temperature 6.17e-8 K (Hawking 1975; value from memory)', async () => {
    const { body } = await post({ body: { preset: 'sun' } });
    expect(body.hawking_temperature.unit).toBe('K');
    expect(Math.abs(body.hawking_temperature.value / 6.17e-8 - 1)).toBeLessThan(2e-3);
    expect(body.warnings[0].code).toBe('not-a-black-hole');
  });

  it('a mass in solMass converts through the nominal solar GM, never through G (api.md)', async () => {
    const { body } = await post({ body: { mass: { value: 3, unit: 'solMass' } } });
    expect(body.gm.value).toBe(3 * 1.3271244e20);
  });
});

describe('POST /v1/radii: uncertainties', () => {
  it('an uncertain mass gives uncertain radii: sigma(rg) = sigma(GM)/c^2 (first order, exact here)', async () => {
    const { body } = await post({ body: { gm: { value: 1e20, uncertainty: 1e18 }, spin: 0.5 } });
    const expected = new D('1e18').div(C.pow(2)).toNumber();
    expect(Math.abs(body.rg.uncertainty / expected - 1)).toBeLessThan(1e-8);
    // ISCO in metres scales with GM at fixed spin: relative uncertainty 1 %.
    expect(Math.abs(body.isco.prograde.uncertainty / body.isco.prograde.value - 0.01)).toBeLessThan(1e-8);
  });

  it.each([0.3, 0.9, 0.99, 0.9999, -0.7])('an uncertain spin (a* = %s) gives an uncertain ISCO: |dr/da| sigma to 1e-8 (45-digit reference)', async (a) => {
    const sigma = 1e-6;
    const { body } = await post({ body: { gm: { value: 1e20, unit: 'm3.s-2' }, spin: { value: a, uncertainty: sigma } } });
    // Reference derivative: central difference at 45 digits with h = 1e-20 (truncation ~1e-40).
    const h = new D('1e-20');
    const deriv = iscoRef(new D(a).plus(h)).minus(iscoRef(new D(a).minus(h))).div(h.times(2));
    const rgM = new D('1e20').div(C.pow(2));
    const expected = deriv.abs().times(sigma).times(rgM).toNumber();
    expect(Math.abs(body.isco.prograde.uncertainty / expected - 1)).toBeLessThan(1e-8);
    expect(body.spin).toEqual({ value: a, uncertainty: sigma });
  });

  it('spin at the closed edge a* = 1 with an uncertainty: differentiates one-sided, flags the singular derivative', async () => {
    const { status, body, raw } = await post({ body: { gm: 1e20, spin: { value: 1, uncertainty: 0.001 } } });
    expect(status).toBe(200);
    expect(raw).not.toMatch(/NaN|Infinity/);
    expect(body.warnings.some((w: { code: string }) => w.code === 'derivative-inaccurate')).toBe(true);
  });

  it('Monte Carlo: same seed, byte-identical reply; percentiles ordered; SD close to linear for a small sigma', async () => {
    const req = { body: { mass: { value: 10, unit: 'solMass', uncertainty: 0.2 }, spin: 0.5 }, uncertainty_method: { kind: 'monte-carlo', samples: 20000, seed: 7 } };
    const a = await post(req);
    const b = await post(req);
    expect(a.status).toBe(200);
    expect(a.raw).toBe(b.raw);
    const isco = a.body.isco.prograde;
    expect(isco.p16).toBeLessThan(isco.p50);
    expect(isco.p50).toBeLessThan(isco.p84);
    // Linear: ISCO(m) is proportional to m, so sigma/value = 0.02; Monte Carlo SE of an SD with
    // n = 20000 is about 1/sqrt(2n) = 0.5 % relative: allow 3 %.
    expect(Math.abs(isco.uncertainty / isco.value / 0.02 - 1)).toBeLessThan(0.03);
    const other = await post({ ...req, uncertainty_method: { kind: 'monte-carlo', samples: 20000, seed: 8 } });
    expect(other.raw).not.toBe(a.raw);
  });

  it('Monte Carlo samples above MC_SAMPLES_MAX are refused with the limit', async () => {
    const { status, body } = await post({ body: { gm: { value: 1e20, uncertainty: 1e18 } }, uncertainty_method: { kind: 'monte-carlo', samples: 5_000_000 } });
    expect(status).toBe(400);
    expect(body.errors[0].pointer).toBe('/uncertainty_method/samples');
  });
});

describe('POST /v1/radii: batches and errors', () => {
  it('a batch answers in order, with count, and per-item physics errors in their slots', async () => {
    const { status, body } = await post({
      items: [
        { body: { gm: 1e20, spin: 0 } },
        // 1e-300 kg: the horizon's surface gravity overflows a double, so no finite result exists.
        { body: { mass: 1e-300 } },
        { body: { gm: 1e20, spin: 1 } },
      ],
    });
    expect(status).toBe(200);
    expect(body.count).toBe(3);
    expect(body.items[0].isco.prograde.rg).toBeCloseTo(6, 12);
    expect(body.items[1].error.status).toBe(422);
    expect(body.items[1].error.errors[0].pointer).toBe('/items/1');
    expect(body.items[2].isco.prograde.rg).toBeCloseTo(1, 12);
  });

  it('a single case with no finite result is a 422 problem naming the quantity', async () => {
    const { status, body, headers } = await post({ body: { mass: 1e-300 } });
    expect(status).toBe(422);
    expect(headers['content-type']).toMatch(/application\/problem\+json/);
    expect(body.detail).toMatch(/surface_gravity|not a finite/);
  });

  it('schema errors in a batch name the item and the field (RFC 6901)', async () => {
    const { status, body } = await post({ items: [{ body: { gm: 1e20 } }, { body: { gm: 1e20 } }, { body: { gm: 1e20, spin: 1.5 } }] });
    expect(status).toBe(400);
    expect(body.errors[0].pointer).toBe('/items/2/body/spin');
    expect(body.errors[0].message).toMatch(/>= -1 and <= 1/);
  });

  it('unit errors name the unit field and list accepted units', async () => {
    const { status, body } = await post({ body: { mass: { value: 1, unit: 'km' } } });
    expect(status).toBe(400);
    expect(body.errors[0].pointer).toBe('/body/mass/unit');
    expect(body.errors[0].message).toMatch(/solMass/);
  });

  it('a body needs exactly one of mass, gm, preset', async () => {
    expect((await post({ body: { spin: 0.1 } })).body.errors[0].message).toMatch(/one of mass, gm or preset/);
    expect((await post({ body: { mass: 1, preset: 'sun' } })).status).toBe(400);
  });

  it('more items than BATCH_MAX is a 413', async () => {
    const items = Array.from({ length: 51 }, () => ({ body: { gm: 1e20 } }));
    const { status, body } = await post({ items });
    expect(status).toBe(413);
    expect(body.detail).toMatch(/50/);
  });

  it('identical requests give byte-identical replies (api.md: pure functions of their inputs)', async () => {
    const a = await post({ body: { gm: 4e20, spin: { value: 0.3, uncertainty: 0.01 } } });
    const b = await post({ body: { gm: 4e20, spin: { value: 0.3, uncertainty: 0.01 } } });
    expect(a.raw).toBe(b.raw);
  });
});
