/**
 * POST /v1/infall through the API: the closed forms of MTW (Misner, Thorne & Wheeler 1973,
 * Gravitation, eq. 25.28 and §31.4) and radial light along the tortoise coordinate (Regge & Wheeler
 * 1957) evaluated independently at 50 digits with decimal.js; common practice (Ames & Thorne 1968):
 * the redshift of late pulses e-folds every 4GM/c^3, 19.7 us for one nominal solar mass; the
 * agreement of 1 + z with arrival_interval/pulse_interval as pulse_interval -> 0; uncertainties
 * against a 50-digit propagation through an independent implementation of the whole chain;
 * Monte Carlo reproducibility; batches with per-item 422s; 400, 413 and 422 documents.
 *
 * Scenario (invented): the probe "Lantern" falls into the invented hole "Umbra-7" of 12 solar masses,
 * timed by a receiver at "Quay station".
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { FastifyInstance } from 'fastify';
import { buildApp } from '../../server/app.js';
import { makeConfig } from '../../server/config.js';
import { reference } from '../support/reference.js';
import { expectFieldErrors } from '../support/problems.js';

const { D, exact, relErr } = reference(50);
type Dec = InstanceType<typeof D>;
const d = (x: number): Dec => exact(x);
const ONE = new D(1);
const PI = D.acos(-1);

const C = 299792458; // m/s, exact (SI 2019)
const GM_SUN = 1.3271244e20; // m^3 s^-2, IAU 2015 Resolution B3 (nominal)

let app: FastifyInstance;
let small: FastifyInstance;
const TEST = { LOG_LEVEL: 'silent', RATE_LIMIT_MAX: 0, MAX_EVENT_LOOP_DELAY_MS: 0, BATCH_MAX: 50 } as const;

beforeAll(async () => {
  app = await buildApp(makeConfig(TEST));
  small = await buildApp(makeConfig({ ...TEST, PULSES_MAX: 300, COMPUTE_BUDGET: 20000 }));
  await app.ready();
  await small.ready();
});
afterAll(async () => {
  await app.close();
  await small.close();
});

async function infall(payload: unknown, on: FastifyInstance = app) {
  const res = await on.inject({ method: 'POST', url: '/v1/infall', payload: payload as object });
  return { status: res.statusCode, body: res.json(), raw: res.body };
}

type Num = number | { value: number; uncertainty?: number; p16?: number; p50?: number; p84?: number };
const val = (x: Num): number => (typeof x === 'number' ? x : x.value);
const sig = (x: Num): number => (typeof x === 'number' ? 0 : (x.uncertainty ?? 0));
const codes = (body: { warnings?: Array<{ code: string }> }) => (body.warnings ?? []).map((w) => w.code);
const rel = (x: number, ref: number) => Math.abs(x / ref - 1);

interface Pulse {
  index: number;
  proper_time: { value: number; uncertainty?: number };
  emission_r: { value: number; rg: number; uncertainty?: number };
  emission_time: { value: number; uncertainty?: number };
  arrival_time: { value: number; uncertainty?: number };
  arrival_interval?: { value: number; uncertainty?: number };
  one_plus_z: Num;
}

// Umbra-7 (invented): 12 nominal solar masses; the probe is released from rest at 30 rs.
const GM7 = 12 * GM_SUN;
const RS7 = (2 * GM7) / C ** 2; // m
const LANTERN = {
  body: { mass: { value: 12, unit: 'solMass' } },
  start_r: { value: 30 * RS7 * 1e-3, unit: 'km' },
  observer_r: { value: 1000, unit: 'rs' },
  pulse_interval: { value: 0.25, unit: 'ms' },
};

// ---------------------------------------------------------------------------
// 50-digit reference: an independent implementation of the chain in SI (textbook forms)

/** A pulse emitted k dtau after the release from rest at R, received by a static receiver at ro. */
function pulseRef(gm: Dec, R: Dec, ro: Dec, dtau: Dec, k: number) {
  const c = new D(C);
  const rs = gm.times(2).div(c.pow(2)); // 2GM/c^2
  const A = R.pow(3).div(gm.times(8)).sqrt(); // sqrt(R^3/(8GM)), s (MTW eq. 25.28)
  const y = dtau.times(k).div(A);
  // eta + sin eta = tau/A: Newton from the left converges monotonically (the function is concave)
  let eta = y.div(2);
  for (let i = 0; i < 200; i++) {
    const step = eta.plus(eta.sin()).minus(y).div(ONE.plus(eta.cos()));
    eta = eta.minus(step);
    if (step.abs().lt('1e-48')) break;
  }
  const r = R.times(eta.div(2).cos().pow(2)); // r = R cos^2(eta/2) = (R/2)(1 + cos eta)
  const a = R.div(rs).minus(1).sqrt();
  const th = eta.div(2).tan();
  // MTW eq. 31.10b: t = 2M ln|(a + tan(eta/2))/(a - tan(eta/2))| + 2M a [eta + (R/4M)(eta + sin eta)], 2M = rs (/c for seconds)
  const t = rs.div(c).times(a.plus(th).div(a.minus(th)).abs().ln().plus(a.times(eta.plus(R.div(rs.times(2)).times(eta.plus(eta.sin()))))));
  const tortoise = (x: Dec) => x.plus(rs.times(x.div(rs).minus(1).ln())); // r* = r + rs ln(r/rs - 1)
  const outgoing = r.lt(ro);
  const light = tortoise(ro).minus(tortoise(r)).abs().div(c);
  const fo = ONE.minus(rs.div(ro));
  const fe = ONE.minus(rs.div(r));
  const E = ONE.minus(rs.div(R)).sqrt();
  const v = E.pow(2).minus(fe).sqrt();
  // -k.u ratio (MTW ch. 2, §25.5): probe u = (E/f, -v), receiver u = (1/sqrt(f_o), 0), k = (1/f, +-1)
  const onePlusZ = (outgoing ? E.plus(v) : E.minus(v)).div(fe).times(fo.sqrt());
  return { r, t, arrival: fo.sqrt().times(t.plus(light)), onePlusZ, tauH: A.times(a.atan().times(2).plus(a.atan().times(2).sin())), tauS: A.times(PI) };
}

// ---------------------------------------------------------------------------

describe('POST /v1/infall: closed forms and published values', () => {
  it('Lantern into Umbra-7: proper times to the horizon and to r = 0 (MTW §25.5: pi sqrt(R^3/(8GM))), pulses against the 50-digit chain', async () => {
    const { status, body } = await infall(LANTERN);
    expect(status).toBe(200);
    expect(body.model).toBe('schwarzschild');
    expect(body.references.join(' ')).toMatch(/Misner, Thorne & Wheeler 1973/);
    expect(body.references.join(' ')).toMatch(/Regge & Wheeler 1957/);
    const R = d(LANTERN.start_r.value).times(1000);
    const ref = pulseRef(d(GM7), R, d(RS7).times(1000), d(2.5e-4), 0);
    expect(relErr(body.singularity_proper_time.value, ref.tauS)).toBeLessThan(1e-13);
    expect(body.singularity_proper_time.unit).toBe('s');
    expect(relErr(body.horizon_proper_time.value, ref.tauH)).toBeLessThan(1e-13);
    // every pulse emitted before the horizon is listed
    const last = Math.ceil(ref.tauH.toNumber() / 2.5e-4) - 1;
    expect(body.last_arriving_index).toBe(last);
    expect(body.pulse_count).toBe(last + 1);
    expect(body.last_emitted_index).toBe(Math.ceil(ref.tauS.toNumber() / 2.5e-4) - 1);
    const pulses = body.pulses as Pulse[];
    expect(pulses.map((p) => p.index)).toEqual(Array.from({ length: last + 1 }, (_, k) => k));
    for (const k of [0, 1, Math.floor(last / 3), last - 1, last]) {
      const p = pulses[k];
      const r = pulseRef(d(GM7), R, d(RS7).times(1000), d(2.5e-4), k);
      expect(Math.abs(p.proper_time.value - k * 2.5e-4)).toBeLessThanOrEqual(1e-15 * k * 2.5e-4);
      expect(relErr(p.emission_r.value, r.r), `r of pulse ${k}`).toBeLessThan(1e-12);
      expect(Math.abs(p.emission_r.rg - r.r.div(RS7 / 2).toNumber())).toBeLessThan(1e-11 * p.emission_r.rg);
      if (k > 0) expect(relErr(p.emission_time.value, r.t), `t of pulse ${k}`).toBeLessThan(1e-11);
      expect(relErr(p.arrival_time.value, r.arrival), `arrival of pulse ${k}`).toBeLessThan(1e-12);
      expect(relErr(val(p.one_plus_z), r.onePlusZ), `1+z of pulse ${k}`).toBeLessThan(1e-12);
      if (k > 0) {
        const prev = pulseRef(d(GM7), R, d(RS7).times(1000), d(2.5e-4), k - 1);
        expect(relErr(p.arrival_interval!.value, r.arrival.minus(prev.arrival)), `interval of pulse ${k}`).toBeLessThan(1e-9);
      } else {
        expect(p.arrival_interval).toBeUndefined();
        expect(p.emission_time.value).toBe(0);
      }
    }
    // arrivals strictly increase
    for (let k = 1; k <= last; k++) expect(pulses[k].arrival_time.value).toBeGreaterThan(pulses[k - 1].arrival_time.value);
  });

  it('from rest at infinity: tau_H = (2/3)(r0^{3/2} - rs^{3/2})/sqrt(2GM) (MTW §31.4); pulse 0 at observer_r by default, or at first_pulse_r', async () => {
    const base = { body: { gm: GM7 }, start_r: 'from_rest_at_infinity', observer_r: { value: 40, unit: 'rs' }, pulse_interval: 1e-3 };
    const { status, body } = await infall(base);
    expect(status).toBe(200);
    const rs = d(RS7);
    const tauH = (r0: Dec) => r0.pow(1.5).minus(rs.pow(1.5)).times(2).div(3).div(d(GM7).times(2).sqrt());
    expect(relErr(body.horizon_proper_time.value, tauH(rs.times(40)))).toBeLessThan(1e-13);
    expect(relErr(body.singularity_proper_time.value, rs.times(40).pow(1.5).times(2).div(3).div(d(GM7).times(2).sqrt()))).toBeLessThan(1e-13);
    expect(body.pulses[0].emission_r.rg).toBeCloseTo(80, 12);
    // pulse 1: r^{3/2} = r0^{3/2} - (3/2) sqrt(2GM) dtau
    const r1 = rs.times(40).pow(1.5).minus(d(GM7).times(2).sqrt().times(1.5e-3)).pow(new D(2).div(3));
    expect(relErr(body.pulses[1].emission_r.value, r1)).toBeLessThan(1e-13);
    const later = await infall({ ...base, first_pulse_r: { value: 10, unit: 'rs' } });
    expect(relErr(later.body.horizon_proper_time.value, tauH(rs.times(10)))).toBeLessThan(1e-13);
    expect(later.body.pulses[0].emission_r.rg).toBeCloseTo(20, 12);
  });

  it('common practice (Ames & Thorne 1968): late pulses from a 1 solar-mass hole e-fold in 1 + z every 4GM/c^3 = 19.7 us, within 1 %', async () => {
    const { status, body } = await infall({
      body: { mass: { value: 1, unit: 'solMass' } },
      start_r: { value: 20, unit: 'rs' },
      observer_r: { value: 1e6, unit: 'rs' },
      pulse_interval: { value: 1e-12, unit: 's' },
      r_range: { max: { value: 1 + 1e-5, unit: 'rs' } }, // only pulses emitted within 1e-5 rs of the horizon
    });
    expect(status).toBe(200);
    const pulses = body.pulses as Pulse[];
    expect(pulses.length).toBeGreaterThan(30);
    expect(pulses.length).toBeLessThan(1000);
    let sx = 0, sy = 0, sxx = 0, sxy = 0;
    const t0 = pulses[0].arrival_time.value;
    for (const p of pulses) {
      const X = p.arrival_time.value - t0;
      const Y = Math.log(val(p.one_plus_z));
      sx += X; sy += Y; sxx += X * X; sxy += X * Y;
    }
    const n = pulses.length;
    const efold = (n * sxx - sx * sx) / (n * sxy - sx * sy);
    expect(Math.abs(efold / 19.7e-6 - 1)).toBeLessThan(0.01);
    expect(Math.abs(efold / ((4 * GM_SUN) / C ** 3) - 1)).toBeLessThan(0.01);
    // the reported e-folding time: 4GM/c^3 sqrt(1 - rs/r_o)
    expect(relErr(body.efolding_time.value, d(GM_SUN).times(4).div(d(C).pow(3)).times(ONE.minus(new D('1e-6')).sqrt()))).toBeLessThan(1e-14);
    // the last pulse ever received is the last one listed, and the horizon is ~1e-5 rs/c of proper time after it
    expect(pulses[n - 1].index).toBe(body.last_arriving_index);
  });

  it('1 + z (photon energy ratio) = lim arrival_interval/pulse_interval: the gap halves with the interval (first order)', async () => {
    const tauStar = 0.02; // s of proper time after the release (Umbra-7: horizon at 30.3 ms)
    const gaps: number[] = [];
    for (const n of [40, 80, 160, 320]) {
      const { body } = await infall({ ...LANTERN, pulse_interval: tauStar / n, every: n, r_range: undefined });
      const p = (body.pulses as Pulse[]).find((q) => q.index === n)!;
      expect(rel(p.proper_time.value, tauStar)).toBeLessThan(1e-15);
      gaps.push(p.arrival_interval!.value / (tauStar / n) - val(p.one_plus_z));
    }
    for (let i = 1; i < gaps.length; i++) expect(Math.abs(gaps[i - 1] / gaps[i] - 2)).toBeLessThan(0.03);
    expect(Math.abs(gaps[3])).toBeLessThan(2e-3);
  });

  it('every and r_range: indices are multiples of every, radii within the range, spacing still to pulse k - 1', async () => {
    const full = await infall(LANTERN);
    const all = full.body.pulses as Pulse[];
    const lo = 8 * RS7;
    const hi = 20 * RS7;
    const { body } = await infall({ ...LANTERN, every: 3, r_range: { min: lo, max: { value: hi / 1000, unit: 'km' } } });
    const want = all.filter((p) => p.index % 3 === 0 && p.emission_r.value >= lo && p.emission_r.value <= hi);
    expect(want.length).toBeGreaterThan(3);
    expect(body.pulses).toEqual(want);
    expect(body.pulse_count).toBe(want.length);
    expect(body.last_arriving_index).toBe(full.body.last_arriving_index);
    // arrival_interval of a listed pulse is its arrival minus that of the pulse before it
    for (const p of want) expect(rel(p.arrival_interval!.value, p.arrival_time.value - all[p.index - 1].arrival_time.value)).toBeLessThan(1e-9);
    const none = await infall({ ...LANTERN, r_range: { min: 40 * RS7 } });
    expect(none.body.pulse_count).toBe(0);
    expect(codes(none.body)).toContain('no-pulses-listed');
  });

  it('a receiver below the release: early pulses come down on ingoing light, blueshifted; arrivals still in order', async () => {
    const { status, body } = await infall({ ...LANTERN, observer_r: { value: 10, unit: 'rs' } });
    expect(status).toBe(200);
    expect(codes(body)).toContain('probe-passes-receiver');
    const pulses = body.pulses as Pulse[];
    expect(val(pulses[1].one_plus_z)).toBeLessThan(1);
    expect(val(pulses[pulses.length - 1].one_plus_z)).toBeGreaterThan(1);
    for (let k = 1; k < pulses.length; k++) expect(pulses[k].arrival_time.value).toBeGreaterThan(pulses[k - 1].arrival_time.value);
    const R = d(LANTERN.start_r.value).times(1000);
    for (const k of [1, 5, pulses.length - 1]) {
      const r = pulseRef(d(GM7), R, d(RS7).times(10), d(2.5e-4), k);
      expect(relErr(pulses[k].arrival_time.value, r.arrival), `arrival ${k}`).toBeLessThan(1e-12);
      expect(relErr(val(pulses[k].one_plus_z), r.onePlusZ), `1+z ${k}`).toBeLessThan(1e-12);
    }
  });

  it('identical requests give byte-identical replies', async () => {
    const a = await infall(LANTERN);
    const b = await infall(LANTERN);
    expect(a.raw).toBe(b.raw);
  });
});

describe('POST /v1/infall: batches, uncertainties, errors', () => {
  it('a batch answers in order, with 422s (allowed domain in detail) in the slots of impossible cases', async () => {
    const { status, body } = await infall({
      items: [
        LANTERN,
        { ...LANTERN, observer_r: { value: 0.5, unit: 'rs' } },
        { ...LANTERN, start_r: { value: 1, unit: 'rs' } },
        { ...LANTERN, first_pulse_r: { value: 31, unit: 'rs' } },
        { ...LANTERN, start_r: 'from_rest_at_infinity' },
      ],
    });
    expect(status).toBe(200);
    expect(body.count).toBe(5);
    expect(body.items[0].pulse_count).toBeGreaterThan(10);
    const rsText = String(RS7).slice(0, 8);
    expect(body.items[1].error.status).toBe(422);
    expect(body.items[1].error.errors[0].pointer).toBe('/items/1/observer_r');
    expect(body.items[1].error.detail).toMatch(new RegExp(`allowed: observer_r > rs = 2GM/c\\^2 = ${rsText}`));
    expect(body.items[2].error.errors[0].pointer).toBe('/items/2/start_r');
    expect(body.items[2].error.detail).toMatch(/allowed: start_r > rs/);
    expect(body.items[3].error.errors[0].pointer).toBe('/items/3/first_pulse_r');
    expect(body.items[3].error.detail).toMatch(/allowed: .* < first_pulse_r <= start_r/);
    expect(body.items[4].pulses[0].emission_r.rg).toBeCloseTo(2000, 9);
  });

  it('linear uncertainty equals a 50-digit propagation through the independent chain (GM, start_r, observer_r, pulse_interval)', async () => {
    const gm = GM7;
    const R = 30 * RS7;
    const ro = 1000 * RS7;
    const dt = 2.5e-4;
    const s = { gm: 0.01 * gm, R: 0.004 * R, ro: 0.02 * ro, dt: 0.01 * dt };
    const { status, body } = await infall({
      body: { gm: { value: gm, uncertainty: s.gm } },
      start_r: { value: R, uncertainty: s.R },
      observer_r: { value: ro, uncertainty: s.ro },
      pulse_interval: { value: dt, uncertainty: s.dt },
      every: 5,
    });
    expect(status).toBe(200);
    const pulses = body.pulses as Pulse[];
    const k = pulses[3].index; // 15
    const x0 = [gm, R, ro, dt].map(d);
    const sig0 = [s.gm, s.R, s.ro, s.dt];
    const f = (x: Dec[]) => pulseRef(x[0], x[1], x[2], x[3], k);
    const sigma = (pick: (r: ReturnType<typeof f>) => Dec) => {
      let v = new D(0);
      for (let i = 0; i < 4; i++) {
        const h = x0[i].times('1e-18');
        const up = x0.slice();
        const dn = x0.slice();
        up[i] = x0[i].plus(h);
        dn[i] = x0[i].minus(h);
        const deriv = pick(f(up)).minus(pick(f(dn))).div(h.times(2));
        v = v.plus(deriv.times(sig0[i]).pow(2));
      }
      return v.sqrt();
    };
    const p = pulses[3];
    expect(relErr(p.arrival_time.uncertainty!, sigma((r) => r.arrival))).toBeLessThan(1e-6);
    expect(relErr(p.emission_r.uncertainty!, sigma((r) => r.r))).toBeLessThan(1e-6);
    expect(relErr(sig(p.one_plus_z), sigma((r) => r.onePlusZ))).toBeLessThan(1e-6);
    expect(relErr(p.emission_time.uncertainty!, sigma((r) => r.t))).toBeLessThan(1e-6);
    expect(relErr(body.horizon_proper_time.uncertainty, sigma((r) => r.tauH))).toBeLessThan(1e-6);
    // tau_S = pi sqrt(R^3/(8GM)): relative sigma = hypot(1.5 sigma_R/R, 0.5 sigma_GM/GM) (closed form)
    expect(rel(body.singularity_proper_time.uncertainty / body.singularity_proper_time.value, Math.hypot(1.5 * 0.004, 0.5 * 0.01))).toBeLessThan(1e-7);
    // proper time k dtau: sigma = k sigma_dtau
    expect(rel(p.proper_time.uncertainty!, k * s.dt)).toBeLessThan(1e-8);
    expect(body.last_arriving_index).toBeGreaterThan(k);
  });

  it('Monte Carlo: the same seed gives byte-identical replies, ordered percentiles, and a spread near the linear one', async () => {
    // r_range keeps the listed pulses well above the horizon, so that no sample moves one behind it
    const req = {
      ...LANTERN,
      body: { mass: { value: 12, unit: 'solMass', uncertainty: 0.12 } },
      start_r: { value: 30, unit: 'rs' },
      every: 4,
      r_range: { min: { value: 10, unit: 'rs' } },
      uncertainty_method: { kind: 'monte-carlo', samples: 2000, seed: 11 },
    };
    const a = await infall(req);
    const b = await infall(req);
    expect(a.status).toBe(200);
    expect(a.raw).toBe(b.raw);
    expect(codes(a.body)).not.toContain('samples-failed');
    const h = a.body.horizon_proper_time;
    expect(h.p16).toBeLessThan(h.p50);
    expect(h.p50).toBeLessThan(h.p84);
    // start and observer in body-relative units: every time scales as GM, so sigma_t/t = sigma_GM/GM (1 %) within 10 %
    expect(rel(h.uncertainty / h.value, 0.01)).toBeLessThan(0.1);
    // per pulse (pulse_interval is fixed in seconds, so no simple scaling): near the linear propagation, within 10 %
    const lin = await infall({ ...req, uncertainty_method: undefined });
    for (const j of [2, 10, 20]) {
      const p = a.body.pulses[j];
      expect(p.index).toBe(4 * j);
      expect(rel(p.arrival_time.uncertainty, lin.body.pulses[j].arrival_time.uncertainty), `pulse ${p.index}`).toBeLessThan(0.1);
      expect(rel(p.one_plus_z.uncertainty, lin.body.pulses[j].one_plus_z.uncertainty), `pulse ${p.index}`).toBeLessThan(0.1);
      expect(p.arrival_time.p16).toBeLessThan(p.arrival_time.p84);
    }
    const other = await infall({ ...req, uncertainty_method: { kind: 'monte-carlo', samples: 2000, seed: 12 } });
    expect(other.raw).not.toBe(a.raw);
  });

  it('Monte Carlo with pulses listed up to the horizon: samples that would put one behind it are left out, and said so', async () => {
    const { status, body } = await infall({
      ...LANTERN,
      body: { mass: { value: 12, unit: 'solMass', uncertainty: 0.36 } },
      every: 10,
      uncertainty_method: { kind: 'monte-carlo', samples: 500, seed: 5 },
    });
    expect(status).toBe(200);
    expect(codes(body)).toContain('samples-failed');
    expect(codes(body)).toContain('pulses-near-horizon-uncertain');
  });

  it('400s name the field', async () => {
    const cases: Array<[unknown, string, RegExp]> = [
      [{ ...LANTERN, pulse_interval: { value: 1, unit: 'm' } }, '/pulse_interval/unit', /not a time/],
      [{ ...LANTERN, start_r: 'from_rest_at_the_moon' }, '/start_r', /.+/],
      [{ ...LANTERN, body: { mass: { value: 12, unit: 'solMass' }, spin: 0.5 } }, '/body/spin', /Schwarzschild/],
      [{ ...LANTERN, r_range: { min: 20 * RS7, max: 10 * RS7 } }, '/r_range/min', /must not exceed/],
      [{ ...LANTERN, r_range: { min: { value: 5, unit: 'rs', uncertainty: 0.1 } } }, '/r_range/min/uncertainty', /no uncertainty/],
      [{ ...LANTERN, pulse_interval: { value: 1e-25, unit: 's' } }, '/pulse_interval', /2\^53/],
      [{ ...LANTERN, every: 0 }, '/every', /.+/],
      [{ ...LANTERN, observer_r: { value: 1, unit: 'furlong' } }, '/observer_r/unit', /rg/],
      [{ body: LANTERN.body, start_r: LANTERN.start_r, pulse_interval: 1 }, '/observer_r', /.+/],
    ];
    await expectFieldErrors(infall, cases);
  });

  it('413 over PULSES_MAX (per request, batches summed) and over the propagation budget, before any pulse is computed', async () => {
    // PULSES_MAX = 300 on this app; Umbra-7 at 0.25 ms lists 122 pulses (0 to 121)
    const one = await infall({ ...LANTERN, pulse_interval: { value: 0.05, unit: 'ms' } }, small);
    expect(one.status).toBe(413);
    expect(one.body.errors[0].pointer).toBe('/pulse_interval');
    expect(one.body.detail).toMatch(/PULSES_MAX/);
    expect((await infall({ ...LANTERN, pulse_interval: { value: 0.05, unit: 'ms' }, every: 3 }, small)).status).toBe(200);
    const batch = await infall({ items: [LANTERN, LANTERN, LANTERN] }, small);
    expect(batch.status).toBe(413);
    expect(batch.body.errors[0].pointer).toBe('/items/2/pulse_interval');
    expect((await infall({ items: [LANTERN, LANTERN] }, small)).status).toBe(200);
    // uncertain: 122 pulses x 2000 samples > COMPUTE_BUDGET = 20000 pulse evaluations on this app
    const mc = await infall({ ...LANTERN, body: { mass: { value: 12, unit: 'solMass', uncertainty: 0.1 } }, uncertainty_method: { kind: 'monte-carlo', samples: 2000 } }, small);
    expect(mc.status).toBe(413);
    expect(mc.body.detail).toMatch(/pulse evaluations/);
    // default app: a millisecond pulse from 1e6 rs above a supermassive hole asks for ~6e13 pulses: refused at once
    const t0 = performance.now();
    const huge = await infall({ body: { mass: { value: 4e6, unit: 'solMass' } }, start_r: { value: 1e6, unit: 'rs' }, observer_r: { value: 2e6, unit: 'rs' }, pulse_interval: { value: 1, unit: 'ms' } });
    expect(huge.status).toBe(413);
    expect(performance.now() - t0).toBeLessThan(1000);
  });

  it('422 states the allowed domain for a single case', async () => {
    const { status, body } = await infall({ ...LANTERN, start_r: { value: 0.99, unit: 'rs' } });
    expect(status).toBe(422);
    expect(body.errors[0].pointer).toBe('/start_r');
    expect(body.detail).toMatch(/allowed: start_r > rs = 2GM\/c\^2 = /);
  });

  it('a preset body is flagged as not a black hole', async () => {
    const { status, body } = await infall({ ...LANTERN, body: { preset: 'sun' }, start_r: { value: 3, unit: 'rs' }, observer_r: { value: 10, unit: 'rs' }, pulse_interval: 1e-5 });
    expect(status).toBe(200);
    expect(codes(body)).toContain('not-a-black-hole');
  });
});
