/**
 * POST /v1/shadow against published values (the Schwarzschild shadow 2 sqrt(27) GM/c^2; the
 * extremal hole edge-on, alpha from -2 to 7, Bardeen 1973 / Chandrasekhar 1983 section 63; the
 * extremal pole-on circle), 40-digit references (decimal.js: sizes in metres and angles; Bardeen's
 * formulas in the r-parametrisation for the derivatives of the diameters), closed-form uncertainty
 * propagation, Monte Carlo reproducibility, batches with per-item physics errors, error documents,
 * and the SVG figure (well-formed XML, the outline path, the labels).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { FastifyInstance } from 'fastify';
import { buildApp } from '../../server/app.js';
import { makeConfig } from '../../server/config.js';
import { reference } from '../support/reference.js';
import { checkXml } from '../support/xml.js';
import { expectFieldErrors } from '../support/problems.js';

const { D, exact, relErr } = reference(40);
type Dec = InstanceType<typeof D>;
let app: FastifyInstance;

beforeAll(async () => {
  app = await buildApp(makeConfig({ LOG_LEVEL: 'silent', RATE_LIMIT_MAX: 0, MAX_EVENT_LOOP_DELAY_MS: 0, BATCH_MAX: 50 }));
  await app.ready();
});
afterAll(async () => app.close());

async function post(payload: unknown, headers: Record<string, string> = {}) {
  const res = await app.inject({ method: 'POST', url: '/v1/shadow', payload: payload as object, headers });
  return { status: res.statusCode, raw: res.body, headers: res.headers, body: () => res.json() };
}
const shadow = async (p: unknown) => {
  const r = await post(p);
  return { ...r, body: r.body() };
};
const codes = (body: { warnings?: Array<{ code: string }> }) => (body.warnings ?? []).map((w) => w.code);
const rel = (x: number, ref: number) => Math.abs(x / ref - 1);
type Num = number | { value: number; uncertainty?: number };
const val = (x: Num) => (typeof x === 'number' ? x : x.value);

// Published constants (sources beside each).
const C = 299792458; // m/s, exact (SI 2019)
const GM_SUN = 1.3271244e20; // m^3 s^-2, IAU 2015 Resolution B3 (nominal)
const AU = 149597870700; // m, IAU 2012 Resolution B2 (exact)
const SQRT27 = Math.sqrt(27);

const d = (x: number): Dec => exact(x);
const PI = D.acos(-1);
const PARSEC = d(AU).times(648000).div(PI); // IAU 2015 Resolution B2 (exact)

// ---------------------------------------------------------------------------
// Bardeen's formulas (r-parametrisation) at 40 digits, for derivatives of the diameters

const xiR = (a: Dec, r: Dec) => r.pow(3).minus(r.pow(2).times(3)).plus(a.pow(2).times(r)).plus(a.pow(2)).div(a.times(r.minus(1))).neg();
const etaR = (a: Dec, r: Dec) => r.pow(3).times(a.pow(2).times(4).minus(r.times(r.minus(3).pow(2)))).div(a.pow(2).times(r.minus(1).pow(2)));
const photonR = (a: Dec) => D.acos(a.neg()).times(2).div(3).cos().plus(1).times(2); // BPT72 eq. 2.18

function bisect(f: (x: Dec) => Dec, lo: Dec, hi: Dec): Dec {
  const neg = f(lo).isNegative();
  for (let k = 0; k < 125; k++) {
    const mid = lo.plus(hi).div(2);
    if (f(mid).isNegative() === neg) lo = mid;
    else hi = mid;
  }
  return lo.plus(hi).div(2);
}

/** Horizontal and vertical diameters (rg) for 0 < a < 1, 0 < i < pi/2, from Bardeen 1973 at 40 digits. */
function diametersRef(a: Dec, i: Dec): { h: Dec; v: Dec } {
  const s = i.sin();
  const c = i.cos();
  const b2 = (r: Dec) => etaR(a, r).plus(a.pow(2).times(c.pow(2))).minus(xiR(a, r).pow(2).times(c.pow(2)).div(s.pow(2)));
  const lo = photonR(a);
  const hi = photonR(a.neg());
  const rp = bisect((r) => r.pow(3).minus(r.pow(2).times(3)).plus(a.pow(2).times(r)).plus(a.pow(2)), lo, hi);
  const r1 = bisect(b2, lo, rp);
  const r2 = bisect(b2, rp, hi);
  const h = xiR(a, r1).minus(xiR(a, r2)).div(s);
  // golden-section search for the largest beta^2
  const g = new D(5).sqrt().minus(1).div(2);
  let x = r1;
  let y = r2;
  for (let k = 0; k < 95; k++) {
    const x1 = y.minus(g.times(y.minus(x)));
    const x2 = x.plus(g.times(y.minus(x)));
    if (b2(x1).lt(b2(x2))) x = x1;
    else y = x2;
  }
  return { h, v: b2(x.plus(y).div(2)).sqrt().times(2) };
}

// Invented scenario: the hole "Tamsin A*" of 3.1e9 solar masses at 27 Mpc, seen by the invented
// Skerrow Array at 38 deg from its spin axis.
const TAMSIN = { body: { mass: { value: 3.1e9, unit: 'solMass' }, spin: 0.85 }, inclination: { value: 38, unit: 'deg' }, distance: { value: 27, unit: 'Mpc' } };

// ---------------------------------------------------------------------------

describe('POST /v1/shadow', () => {
  it('a non-rotating hole: diameters 2 sqrt(27) GM/c^2 (Synge 1966; Bardeen 1973) to 1e-12, in m from the 40-digit GM/c^2; model schwarzschild', async () => {
    const gm = 4.4e20;
    const { status, body } = await shadow({ body: { gm }, inclination: { value: 60, unit: 'deg' } });
    expect(status).toBe(200);
    expect(body.model).toBe('schwarzschild');
    expect(body.references.join(' ')).toMatch(/Bardeen 1973/);
    const ref = new D(27).sqrt().times(2).times(d(gm)).div(d(C).pow(2));
    expect(relErr(body.diameter.horizontal.value, ref)).toBeLessThan(1e-12);
    expect(relErr(body.diameter.vertical.value, ref)).toBeLessThan(1e-12);
    expect(body.diameter.horizontal.unit).toBe('m');
    expect(Math.abs(body.diameter.horizontal.rg / (2 * SQRT27) - 1)).toBeLessThan(1e-12);
    expect(Math.abs(body.extent_rg.vertical / (2 * SQRT27) - 1)).toBeLessThan(1e-12);
    expect(Math.abs(body.extent_rg.center_offset)).toBeLessThan(1e-12);
    expect(relErr(body.schwarzschild_diameter.value, ref)).toBeLessThan(1e-15);
    expect(body.outline).toHaveLength(256);
    for (const p of body.outline) expect(Math.abs(Math.hypot(p.alpha, p.beta) / SQRT27 - 1)).toBeLessThan(1e-12);
    expect(body.angular_diameter).toBeUndefined();
    expect(body.warnings).toBeUndefined();
  });

  it('an extremal hole seen edge-on: alpha from -2 to +7 (Bardeen 1973; Chandrasekhar 1983 section 63), vertical 2 sqrt(27) (Bardeen\'s eta = r^3 (4 - r) at a = 1, maximal at r = 3)', async () => {
    const { status, body } = await shadow({ body: { mass: { value: 10, unit: 'solMass' }, spin: 1 }, inclination: { value: 90, unit: 'deg' }, points: 400 });
    expect(status).toBe(200);
    expect(body.model).toBe('kerr');
    expect(Math.abs(body.extent_rg.alpha_min + 2)).toBeLessThan(1e-12);
    expect(Math.abs(body.extent_rg.alpha_max - 7)).toBeLessThan(1e-12);
    expect(Math.abs(body.extent_rg.horizontal - 9)).toBeLessThan(1e-12);
    expect(Math.abs(body.extent_rg.vertical - 2 * SQRT27)).toBeLessThan(1e-12);
    expect(Math.abs(body.extent_rg.center_offset - 2.5)).toBeLessThan(1e-12);
    expect(body.outline).toHaveLength(400);
    const alphas = body.outline.map((p: { alpha: number }) => p.alpha);
    expect(Math.min(...alphas)).toBe(body.extent_rg.alpha_min);
    expect(Math.max(...alphas)).toBe(body.extent_rg.alpha_max);
    expect(codes(body)).toContain('extremal-spin');
    // a negative spin mirrors it
    const mirror = await shadow({ body: { mass: { value: 10, unit: 'solMass' }, spin: -1 }, inclination: { value: 90, unit: 'deg' } });
    expect(Math.abs(mirror.body.extent_rg.alpha_min + 7)).toBeLessThan(1e-12);
    expect(Math.abs(mirror.body.extent_rg.alpha_max - 2)).toBeLessThan(1e-12);
  });

  it('an extremal hole seen pole-on: a circle of radius 2 + 2 sqrt 2 (the polar photon orbit r = 1 + sqrt 2, Teo 2003; Bardeen\'s eta + a^2)', async () => {
    const { status, body } = await shadow({ body: { gm: 1e21, spin: 1 }, inclination: 0, points: 24 });
    expect(status).toBe(200);
    expect(Math.abs(body.extent_rg.horizontal - (4 + 4 * Math.SQRT2))).toBeLessThan(1e-13);
    expect(Math.abs(body.extent_rg.vertical - (4 + 4 * Math.SQRT2))).toBeLessThan(1e-13);
    for (const p of body.outline) expect(Math.abs(Math.hypot(p.alpha, p.beta) - (2 + 2 * Math.SQRT2))).toBeLessThan(1e-13);
  });

  it('angular diameter at a distance: diameter / distance in rad and microarcseconds, against 40-digit arithmetic (IAU 2015 B2 parsec, IAU 2015 B3 solar GM)', async () => {
    const { status, body } = await shadow({ ...TAMSIN, body: { mass: { value: 3.1e9, unit: 'solMass' } } });
    expect(status).toBe(200);
    const dist = PARSEC.times(27e6);
    const theta = new D(27).sqrt().times(2).times(d(3.1e9 * GM_SUN)).div(d(C).pow(2)).div(dist);
    expect(relErr(body.angular_diameter.horizontal.value, theta)).toBeLessThan(1e-12);
    expect(relErr(body.angular_diameter.vertical.uas, theta.times(648000e6).div(PI))).toBeLessThan(1e-12);
    expect(body.angular_diameter.horizontal.unit).toBe('rad');
    expect(Math.abs(body.mass_solar - 3.1e9)).toBeLessThan(1e-3);
    expect(Math.abs(body.inclination.deg - 38)).toBeLessThan(1e-12);
  });

  it('a batch answers in order, with a 422 in the slot of a distance too small for a distant observer', async () => {
    const { status, body } = await shadow({
      items: [TAMSIN, { ...TAMSIN, distance: { value: 50, unit: 'rg' } }, { ...TAMSIN, distance: { value: 500, unit: 'rg' } }],
    });
    expect(status).toBe(200);
    expect(body.count).toBe(3);
    expect(body.items[0].error).toBeUndefined();
    expect(body.items[1].error.status).toBe(422);
    expect(body.items[1].error.errors[0].pointer).toBe('/items/1/distance');
    expect(body.items[1].error.detail).toMatch(/allowed: distance >= 100 GM\/c\^2/);
    expect(codes(body.items[2])).toContain('distant-observer-approximation');
    expect(Math.abs(body.items[2].angular_diameter.horizontal.value - body.items[2].extent_rg.horizontal / 500)).toBeLessThan(1e-15);
  });

  it('linear uncertainty equals the closed-form propagation: sigma_D^2 = (D sigma_GM/GM)^2 + (rg dD/da sigma_a)^2 + (rg dD/di sigma_i)^2, derivatives of Bardeen\'s formulas at 40 digits', async () => {
    const [gm, a, inc, dist] = [6e22, 0.6, 1.0, 3e24];
    const [sg, sa, si, sd] = [3e21, 0.04, 0.05, 1e23];
    const { status, body } = await shadow({
      body: { gm: { value: gm, uncertainty: sg }, spin: { value: a, uncertainty: sa } },
      inclination: { value: inc, uncertainty: si },
      distance: { value: dist, uncertainty: sd },
    });
    expect(status).toBe(200);
    const h = new D('1e-10');
    const at = (aa: number, ii: number) => diametersRef(d(aa), d(ii));
    const base = at(a, inc);
    const [ap, am, ip, im] = [diametersRef(d(a).plus(h), d(inc)), diametersRef(d(a).minus(h), d(inc)), diametersRef(d(a), d(inc).plus(h)), diametersRef(d(a), d(inc).minus(h))];
    const rg = gm / C / C;
    for (const k of ['h', 'v'] as const) {
      const D0 = base[k].toNumber();
      const dDa = ap[k].minus(am[k]).div(h.times(2)).toNumber();
      const dDi = ip[k].minus(im[k]).div(h.times(2)).toNumber();
      const key = k === 'h' ? 'horizontal' : 'vertical';
      expect(Math.abs(body.extent_rg[key].value - D0)).toBeLessThan(1e-12);
      const sigmaRg = Math.hypot(dDa * sa, dDi * si);
      expect(rel(body.extent_rg[key].uncertainty, sigmaRg)).toBeLessThan(1e-6);
      const sigmaM = Math.hypot(D0 * rg * (sg / gm), rg * sigmaRg);
      expect(rel(body.diameter[key].uncertainty, sigmaM)).toBeLessThan(1e-6);
      const theta = (D0 * rg) / dist;
      const sigmaAng = Math.hypot(theta * (sg / gm), theta * (sd / dist), (rg / dist) * sigmaRg);
      expect(rel(body.angular_diameter[key].uncertainty, sigmaAng)).toBeLessThan(1e-6);
    }
    expect(codes(body)).toContain('outline-nominal');
    // the outline is drawn at the nominal inputs: the same points as without uncertainties
    const nominal = await shadow({ body: { gm, spin: a }, inclination: inc, distance: dist });
    expect(JSON.stringify(body.outline)).toBe(JSON.stringify(nominal.body.outline));
  });

  it('Monte Carlo: the same seed gives byte-identical replies; percentiles ordered; spread close to linear', async () => {
    const base = { ...TAMSIN, body: { mass: { value: 3.1e9, unit: 'solMass', uncertainty: 0.2e9 }, spin: { value: 0.85, uncertainty: 0.05 } }, inclination: { value: 38, unit: 'deg', uncertainty: 4 }, points: 32 };
    const req = { ...base, uncertainty_method: { kind: 'monte-carlo', samples: 2000, seed: 21 } };
    const a = await shadow(req);
    const b = await shadow(req);
    expect(a.status).toBe(200);
    expect(a.raw).toBe(b.raw);
    const h = a.body.angular_diameter.horizontal;
    expect(h.p16).toBeLessThan(h.p50);
    expect(h.p50).toBeLessThan(h.p84);
    const lin = await shadow(base);
    expect(rel(h.uncertainty, lin.body.angular_diameter.horizontal.uncertainty)).toBeLessThan(0.15);
    const other = await shadow({ ...base, uncertainty_method: { kind: 'monte-carlo', samples: 2000, seed: 22 } });
    expect(other.raw).not.toBe(a.raw);
  });

  it('warns for a preset body (not a black hole)', async () => {
    const { status, body } = await shadow({ body: { preset: 'sun' }, inclination: 1 });
    expect(status).toBe(200);
    expect(codes(body)).toContain('not-a-black-hole');
    expect(relErr(val(body.diameter.horizontal), new D(27).sqrt().times(2).times(d(GM_SUN)).div(d(C).pow(2)))).toBeLessThan(1e-12);
  });

  it('400s name the field', async () => {
    const cases: Array<[unknown, string, RegExp]> = [
      [{ ...TAMSIN, inclination: { value: 190, unit: 'deg' } }, '/inclination', /\[0, pi\]/],
      [{ ...TAMSIN, inclination: { value: 1, unit: 'm' } }, '/inclination/unit', /not a angle|angle/],
      [{ ...TAMSIN, points: 5000 }, '/points', /.+/],
      [{ ...TAMSIN, points: 7 }, '/points', /.+/],
      [{ ...TAMSIN, points: 16.5 }, '/points', /.+/],
      [{ ...TAMSIN, distance: -3 }, '/distance', /.+/],
      [{ ...TAMSIN, distance: { value: 3, unit: 'kg' } }, '/distance/unit', /not a length/],
      [{ ...TAMSIN, body: { mass: 1e31, spin: 1.5 } }, '/body/spin', /.+/],
      [{ body: TAMSIN.body }, '/inclination', /.+/],
    ];
    await expectFieldErrors(shadow, cases);
  });

  it('422 states the allowed domain', async () => {
    const { status, body } = await shadow({ ...TAMSIN, distance: { value: 20, unit: 'rs' } });
    expect(status).toBe(422);
    expect(body.errors[0].pointer).toBe('/distance');
    expect(body.detail).toMatch(/allowed: distance >= 100 GM\/c\^2 = \d/);
  });

  describe('SVG figure (Accept: image/svg+xml)', () => {
    it('is well-formed XML with the outline path, the reference circle, axes labels and a caption with mass, spin and inclination', async () => {
      const res = await post({ ...TAMSIN, points: 64 }, { accept: 'image/svg+xml' });
      expect(res.status).toBe(200);
      expect(res.headers['content-type']).toMatch(/^image\/svg\+xml/);
      const svg = res.raw;
      expect(checkXml(svg)).toEqual([]);
      expect(svg).toMatch(/<svg xmlns="http:\/\/www\.w3\.org\/2000\/svg"/);
      const path = /<path id="outline" d="([^"]+)"/.exec(svg);
      expect(path).not.toBeNull();
      const d = path![1];
      expect(d.startsWith('M')).toBe(true);
      expect(d.trim().endsWith('Z')).toBe(true);
      expect((d.match(/L/g) ?? []).length).toBe(63);
      expect(svg).toMatch(/<circle id="schwarzschild"/);
      expect(svg).toContain('α [GM/c²]');
      expect(svg).toContain('β [GM/c²]');
      expect(svg).toMatch(/Mass 3\.1e\+?9 solar masses/);
      expect(svg).toContain('spin a* = 0.85');
      expect(svg).toContain('inclination 38° from the spin axis');
      expect(svg).toMatch(/µas/);
    });

    it('the path follows the outline of the JSON reply (same points, scaled), and the checker itself rejects broken XML', async () => {
      const json = await shadow({ ...TAMSIN, points: 16 });
      const svg = (await post({ ...TAMSIN, points: 16 }, { accept: 'image/svg+xml' })).raw;
      const coords = [...(/<path id="outline" d="([^"]+)"/.exec(svg)![1].matchAll(/[ML]([-\d.]+) ([-\d.]+)/g))].map((m) => [Number(m[1]), Number(m[2])]);
      expect(coords).toHaveLength(16);
      // a linear map alpha -> x, beta -> -y: check it with the first two points and apply it to all
      const o = json.body.outline as Array<{ alpha: number; beta: number }>;
      const sx = (coords[8][0] - coords[0][0]) / (o[8].alpha - o[0].alpha);
      const sy = (coords[4][1] - coords[0][1]) / (o[4].beta - o[0].beta);
      expect(sx).toBeGreaterThan(0);
      expect(sy).toBeLessThan(0);
      expect(Math.abs(sx + sy)).toBeLessThan(0.01);
      for (let k = 0; k < 16; k++) {
        expect(Math.abs(coords[k][0] - (coords[0][0] + sx * (o[k].alpha - o[0].alpha)))).toBeLessThan(0.02);
        expect(Math.abs(coords[k][1] - (coords[0][1] + sy * (o[k].beta - o[0].beta)))).toBeLessThan(0.02);
      }
      expect(checkXml('<svg><g></svg>')).not.toEqual([]);
      expect(checkXml('<svg a="1" a="2"/>')).not.toEqual([]);
      expect(checkXml('<svg>a & b</svg>')).not.toEqual([]);
      expect(checkXml('<svg/><svg/>')).not.toEqual([]);
    });

    it('JSON stays the default; a batch is JSON even when SVG is asked for; a 422 is a problem document', async () => {
      const plain = await post(TAMSIN);
      expect(plain.headers['content-type']).toMatch(/^application\/json/);
      const batch = await post({ items: [TAMSIN] }, { accept: 'image/svg+xml' });
      expect(batch.headers['content-type']).toMatch(/^application\/json/);
      expect(batch.body().count).toBe(1);
      const bad = await post({ ...TAMSIN, distance: { value: 10, unit: 'rg' } }, { accept: 'image/svg+xml' });
      expect(bad.status).toBe(422);
      expect(bad.headers['content-type']).toMatch(/application\/problem\+json/);
    });
  });
});
