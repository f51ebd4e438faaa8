/**
 * POST /v1/light/delay and POST /v1/light/deflection against published values (the solar-limb
 * deflection and its second-order part, the Viking-era Mars delay), 40-digit references
 * (decimal.js: the Shapiro closed form, Darwin's elliptic-integral deflection), closed-form
 * uncertainty propagation, Monte Carlo reproducibility, batches with per-item physics errors,
 * and error documents.
 */
import { describe, expect, it } from 'vitest';
import { routeTestApp } from '../support/app.js';
import { darwinReference } from '../support/darwin.js';
import { reference } from '../support/reference.js';
import { expectFieldErrors } from '../support/problems.js';

const { D, exact, relErr } = reference(40);
type Dec = InstanceType<typeof D>;
const { post } = routeTestApp();
const delay = (p: unknown) => post('/v1/light/delay', p);
const deflection = (p: unknown) => post('/v1/light/deflection', p);
const codes = (body: { warnings?: Array<{ code: string }> }) => (body.warnings ?? []).map((w) => w.code);
const rel = (x: number, ref: number) => Math.abs(x / ref - 1);

// Published constants (sources beside each).
const C = 299792458; // m/s, exact (SI 2019)
const GM_SUN = 1.3271244e20; // m^3 s^-2, IAU 2015 Resolution B3 (nominal)
const R_SUN = 6.957e8; // m, IAU 2015 Resolution B3 (nominal)
const AU = 149597870700; // m, IAU 2012 Resolution B2 (exact)
const ARCSEC = 648000 / Math.PI;

const d = (x: number): Dec => exact(x);
const PI = D.acos(-1);

/** (1 + gamma) GM/c^3 ln[(r_e + r_r + R)/(r_e + r_r - R)], R = sqrt(r_e^2 - b^2) +- sqrt(r_r^2 - b^2) (Shapiro 1964; Will 2014). */
function shapiroRef(gm: Dec, re: Dec, rr: Dec, b: Dec, gamma: Dec = new D(1), between = true): Dec {
  const pe = re.pow(2).minus(b.pow(2)).sqrt();
  const pr = rr.pow(2).minus(b.pow(2)).sqrt();
  const R = between ? pe.plus(pr) : pe.minus(pr).abs();
  const s = re.plus(rr);
  return new D(1).plus(gamma).times(gm).div(d(C).pow(3)).times(s.plus(R).div(s.minus(R)).ln());
}

const { turningRef, darwinDeflection } = darwinReference(D);

// Earth-Mars superior conjunction with the ray grazing the Sun: Earth at 1 AU, Mars at 1.524 AU
// (mean distance; from memory), b = R_sun (IAU 2015 B3).
const MARS = { body: { preset: 'sun' }, r_emitter: { value: 1, unit: 'AU' }, r_receiver: { value: 1.524, unit: 'AU' }, impact_parameter: { value: 1, unit: 'solRad' } };

// ---------------------------------------------------------------------------

describe('POST /v1/light/delay', () => {
  it('Earth-Mars conjunction: round trip about 250 us (Reasenberg et al. 1979, ApJ 234, L219, Viking; from memory) within 10 us; the closed form at 40 digits', async () => {
    const { status, body } = await delay(MARS);
    expect(status).toBe(200);
    expect(body.model).toBe('weak-field');
    expect(body.references.join(' ')).toMatch(/Shapiro 1964/);
    expect(Math.abs(body.round_trip.value * 1e6 - 250)).toBeLessThan(10);
    const ref = shapiroRef(d(GM_SUN), d(AU), d(1.524 * AU), d(R_SUN));
    expect(relErr(body.one_way.value, ref)).toBeLessThan(1e-14);
    expect(body.one_way.unit).toBe('s');
    expect(body.round_trip.value).toBe(2 * body.one_way.value);
    expect(relErr(body.excess_path.value, ref.times(C))).toBeLessThan(1e-14);
    const R = d(AU).pow(2).minus(d(R_SUN).pow(2)).sqrt().plus(d(1.524 * AU).pow(2).minus(d(R_SUN).pow(2)).sqrt());
    expect(relErr(body.distance.value, R)).toBeLessThan(1e-15);
    // the b << r form differs by O(b^2/r^2) (Will 2014)
    expect(rel(body.one_way_small_b.value, body.one_way.value)).toBeLessThan(1e-5);
    expect(body.closest_approach.value).toBe(R_SUN);
    expect(body.ppn_factor).toBe(1);
    expect(body.warnings).toBeUndefined();
  });

  it('lengths in rg and rs, GM in km3.s-2, gamma: the closed form at 40 digits; rs = 2 rg gives the same bytes', async () => {
    const gm = 7.1e12; // km^3 s^-2
    const req = { body: { gm: { value: gm, unit: 'km3.s-2' } }, r_emitter: { value: 3e4, unit: 'rg' }, r_receiver: 9e9, impact_parameter: { value: 40, unit: 'rg' }, ppn_gamma: 0.8 };
    const { status, body } = await delay(req);
    expect(status).toBe(200);
    const GM = d(gm).times(1e9);
    const rg = GM.div(d(C).pow(2));
    expect(relErr(body.one_way.value, shapiroRef(GM, rg.times(3e4), d(9e9), rg.times(40), d(0.8)))).toBeLessThan(1e-13);
    expect(Math.abs(body.ppn_factor - 0.9)).toBeLessThan(1e-15);
    expect(codes(body)).toContain('weak-field-formula'); // GM/(c^2 b) = 1/40
    const rs = await delay({ ...req, r_emitter: { value: 1.5e4, unit: 'rs' }, impact_parameter: { value: 20, unit: 'rs' } });
    const rg2 = await delay(req);
    expect(rs.raw).toBe(rg2.raw);
  });

  it('"outside" geometry: a radial path (b = 0) gives (1 + gamma) GM/c^3 ln(r_r/r_e) (common practice), 40 digits', async () => {
    const { status, body } = await delay({ body: { preset: 'sun' }, r_emitter: { value: 0.4, unit: 'AU' }, r_receiver: { value: 1.2, unit: 'AU' }, impact_parameter: 0, geometry: 'outside' });
    expect(status).toBe(200);
    expect(relErr(body.one_way.value, d(GM_SUN).times(2).div(d(C).pow(3)).times(new D(3).ln()))).toBeLessThan(1e-14);
    expect(body.one_way_small_b).toBeUndefined();
    expect(relErr(body.closest_approach.value, d(0.4 * AU))).toBeLessThan(1e-15);
    const general = await delay({ body: { preset: 'sun' }, r_emitter: { value: 0.4, unit: 'AU' }, r_receiver: { value: 1.2, unit: 'AU' }, impact_parameter: { value: 0.3, unit: 'AU' }, geometry: 'outside' });
    expect(relErr(general.body.one_way.value, shapiroRef(d(GM_SUN), d(0.4 * AU), d(1.2 * AU), d(0.3 * AU), new D(1), false))).toBeLessThan(1e-13);
  });

  it('a batch answers in order, with 422s in the slots of impossible paths', async () => {
    const { status, body } = await delay({
      items: [
        MARS,
        // b beyond the emitter's distance
        { ...MARS, impact_parameter: { value: 2, unit: 'AU' } },
        // a path through the Sun (b < R_sun, IAU 2015 B3)
        { ...MARS, impact_parameter: { value: 0.5, unit: 'solRad' } },
        // a black hole: b inside sqrt(27) GM/c^2
        { body: { mass: { value: 10, unit: 'solMass' } }, r_emitter: { value: 1e6, unit: 'rg' }, r_receiver: { value: 1e6, unit: 'rg' }, impact_parameter: { value: 5, unit: 'rg' } },
        // an end inside the Schwarzschild radius
        { body: { mass: { value: 10, unit: 'solMass' } }, r_emitter: { value: 1.5, unit: 'rg' }, r_receiver: { value: 1e6, unit: 'rg' }, impact_parameter: 0, geometry: 'outside' },
      ],
    });
    expect(status).toBe(200);
    expect(body.count).toBe(5);
    expect(Math.abs(body.items[0].round_trip.value * 1e6 - 250)).toBeLessThan(10);
    const [, e1, e2, e3, e4] = body.items.map((x: { error?: { status: number; detail: string; errors: Array<{ pointer: string }> } }) => x.error);
    expect(e1.status).toBe(422);
    expect(e1.errors[0].pointer).toBe('/items/1/impact_parameter');
    expect(e1.detail).toMatch(/allowed: 0 <= b <= min\(r_emitter, r_receiver\)/);
    expect(e2.errors[0].pointer).toBe('/items/2/impact_parameter');
    expect(e2.detail).toMatch(/>= 695700000 m/);
    expect(e3.errors[0].pointer).toBe('/items/3/impact_parameter');
    expect(e3.detail).toMatch(/sqrt\(27\) GM\/c\^2/);
    expect(e4.errors[0].pointer).toBe('/items/4/r_emitter');
  });

  it('linear uncertainty equals the closed-form propagation of Delta t = K ln[(S + R)/(S - R)] (partial derivatives written out)', async () => {
    const [gm, re, rr, b, g] = [GM_SUN, AU, 5.2 * AU, 3 * R_SUN, 1];
    const [sg, se, sr, sb, sgam] = [1e15, 1e8, 3e9, 2e7, 2e-5];
    const { body } = await delay({
      body: { gm: { value: gm, uncertainty: sg } },
      r_emitter: { value: re, uncertainty: se },
      r_receiver: { value: rr, uncertainty: sr },
      impact_parameter: { value: b, uncertainty: sb },
      ppn_gamma: { value: g, uncertainty: sgam },
    });
    const K = ((1 + g) * gm) / C ** 3;
    const pe = Math.sqrt(re * re - b * b);
    const pr = Math.sqrt(rr * rr - b * b);
    const S = re + rr;
    const R = pe + pr;
    const dt = K * Math.log((S + R) / (S - R));
    const dLdS = -2 * R / ((S + R) * (S - R));
    const dLdR = (2 * S) / ((S + R) * (S - R));
    const terms = [
      (dt / gm) * sg,
      K * (dLdS + dLdR * (re / pe)) * se,
      K * (dLdS + dLdR * (rr / pr)) * sr,
      K * dLdR * (-b / pe - b / pr) * sb,
      (dt / (1 + g)) * sgam,
    ];
    const sigma = Math.hypot(...terms);
    expect(rel(body.one_way.uncertainty, sigma)).toBeLessThan(1e-6);
    expect(rel(body.round_trip.uncertainty, 2 * sigma)).toBeLessThan(1e-6);
    expect(rel(body.ppn_factor.uncertainty, sgam / 2)).toBeLessThan(1e-8);
  });

  it('Monte Carlo: the same seed gives byte-identical replies; percentiles ordered; spread agrees with linear within 10 %', async () => {
    const base = { ...MARS, impact_parameter: { value: 2, unit: 'solRad', uncertainty: 0.1 }, ppn_gamma: { value: 1, uncertainty: 1e-3 } };
    const req = { ...base, uncertainty_method: { kind: 'monte-carlo', samples: 3000, seed: 5 } };
    const a = await delay(req);
    const b = await delay(req);
    expect(a.status).toBe(200);
    expect(a.raw).toBe(b.raw);
    const o = a.body.one_way;
    expect(o.p16).toBeLessThan(o.p50);
    expect(o.p50).toBeLessThan(o.p84);
    const lin = await delay(base);
    expect(rel(o.uncertainty, lin.body.one_way.uncertainty)).toBeLessThan(0.1);
    const other = await delay({ ...base, uncertainty_method: { kind: 'monte-carlo', samples: 3000, seed: 6 } });
    expect(other.raw).not.toBe(a.raw);
  });

  it('warns that a spinning body is treated as non-rotating', async () => {
    const { body } = await delay({ body: { mass: { value: 5, unit: 'solMass' }, spin: 0.7 }, r_emitter: 1e12, r_receiver: 1e12, impact_parameter: 1e9 });
    expect(codes(body)).toContain('spin-not-modelled');
    expect(codes(body)).not.toContain('weak-field-formula');
  });

  it('400s name the field', async () => {
    const cases: Array<[unknown, string, RegExp]> = [
      [{ ...MARS, r_emitter: { value: 1, unit: 'kg' } }, '/r_emitter/unit', /not a length/],
      [{ ...MARS, impact_parameter: -1 }, '/impact_parameter', /.+/],
      [{ ...MARS, ppn_gamma: 20 }, '/ppn_gamma', /.+/],
      [{ body: MARS.body, r_emitter: MARS.r_emitter, impact_parameter: MARS.impact_parameter }, '/r_receiver', /.+/],
      [{ ...MARS, geometry: 'sideways' }, '/geometry', /.+/],
      [{ ...MARS, r_receiver: 0 }, '/r_receiver', /.+/],
    ];
    await expectFieldErrors(delay, cases, { problemJson: true });
  });

  it('422 states the allowed domain', async () => {
    const { status, body } = await delay({ ...MARS, impact_parameter: { value: 0.99, unit: 'solRad' } });
    expect(status).toBe(422);
    expect(body.errors[0].pointer).toBe('/impact_parameter');
    expect(body.detail).toMatch(/allowed: a closest approach \(b\) >= 695700000 m/);
  });
});

// ---------------------------------------------------------------------------

describe('POST /v1/light/deflection', () => {
  const SUN = { body: { preset: 'sun' }, impact_parameter: { value: 1, unit: 'solRad' } };
  const qSun = GM_SUN / C / C / R_SUN;

  it('the solar limb: 1.75 arcsec (Dyson, Eddington & Davidson 1920 prediction; Will 2014, Living Rev. Relativ. 17, 4) within 0.01, weak and exact; second order about 11 uas (Epstein & Shapiro 1980)', async () => {
    const { status, body } = await deflection(SUN);
    expect(status).toBe(200);
    expect(body.model).toBe('schwarzschild');
    expect(body.references.join(' ')).toMatch(/Will 2014/);
    expect(Math.abs(body.weak_field.arcsec - 1.75)).toBeLessThan(0.01);
    expect(Math.abs(body.exact.arcsec - 1.75)).toBeLessThan(0.01);
    expect(body.weak_field.unit).toBe('rad');
    expect(Math.abs(body.weak_field.second_order * ARCSEC * 1e6 - 11)).toBeLessThan(0.5);
    expect(relErr(body.weak_field.first_order, d(GM_SUN).times(4).div(d(C).pow(2).times(d(R_SUN))))).toBeLessThan(1e-15);
    // exact - weak = (128/3) q^3 at third order (Keeton & Petters 2005, Phys. Rev. D 72, 104006; from memory)
    expect(Math.abs(body.exact.value - body.weak_field.value - (128 / 3) * qSun ** 3)).toBeLessThan(1e-19);
    expect(body.warnings).toBeUndefined();
    // closest approach: b minus about GM/c^2 (r0 = b - rg + O(rg^2/b); common practice)
    expect(Math.abs(body.closest_approach.value - (R_SUN - GM_SUN / C / C))).toBeLessThan(0.01);
  });

  it.each([0, 0.5, 0.99998, 1.5])('PPN gamma = %s: the first-order term scales as (1 + gamma)/2 (Will 2014); exact is GR and flagged', async (g) => {
    const { body } = await deflection({ ...SUN, ppn_gamma: g });
    const gr = await deflection(SUN);
    expect(Math.abs(body.weak_field.first_order / gr.body.weak_field.first_order - (1 + g) / 2)).toBeLessThan(1e-15);
    expect(body.weak_field.second_order).toBe(gr.body.weak_field.second_order);
    expect(body.exact.value).toBe(gr.body.exact.value);
    expect(codes(body)).toContain('exact-is-general-relativity');
  });

  it.each([8, 20, 300])('b = %s rg: exact matches Darwin\'s elliptic-integral form (Darwin 1959) at 40 digits to 1e-13; weak-field flagged', async (b) => {
    const { status, body } = await deflection({ body: { mass: { value: 4, unit: 'solMass' } }, impact_parameter: { value: b, unit: 'rg' } });
    expect(status).toBe(200);
    expect(relErr(body.exact.value, darwinDeflection(new D(b)))).toBeLessThan(1e-13);
    expect(relErr(body.closest_approach.rg, turningRef(new D(b)))).toBeLessThan(1e-14);
    expect(Math.abs(body.critical_impact_parameter.rg - Math.sqrt(27))).toBeLessThan(1e-14);
    expect(codes(body)).toContain('weak-field-formula');
  });

  it('a batch answers in order, with 422s for a ray into the Sun and a captured ray', async () => {
    const { status, body } = await deflection({
      items: [SUN, { ...SUN, impact_parameter: { value: 0.9, unit: 'solRad' } }, { body: { gm: 1e20 }, impact_parameter: { value: 5.19, unit: 'rg' } }, { body: { gm: 1e20 }, impact_parameter: { value: 5.2, unit: 'rg' } }],
    });
    expect(status).toBe(200);
    expect(body.count).toBe(4);
    expect(Math.abs(body.items[0].exact.arcsec - 1.75)).toBeLessThan(0.01);
    expect(body.items[1].error.status).toBe(422);
    expect(body.items[1].error.errors[0].pointer).toBe('/items/1/impact_parameter');
    expect(body.items[1].error.detail).toMatch(/allowed: b >= 695700000 m/);
    expect(body.items[2].error.status).toBe(422);
    expect(body.items[2].error.errors[0].pointer).toBe('/items/2/impact_parameter');
    expect(body.items[2].error.detail).toMatch(/allowed: b > sqrt\(27\) GM\/c\^2/);
    expect(body.items[3].exact.value).toBeGreaterThan(6); // strong deflection just outside b_c
  });

  it('linear uncertainty: weak field by its closed form; exact by a 40-digit derivative of Darwin\'s form (d Delta phi/dq)', async () => {
    const [gm, b, g] = [2e21, 3e7, 1];
    const [sg, sb, sgam] = [4e19, 9e5, 0.01];
    const { body } = await deflection({ body: { gm: { value: gm, uncertainty: sg } }, impact_parameter: { value: b, uncertainty: sb }, ppn_gamma: { value: g, uncertainty: sgam } });
    const q = gm / C / C / b;
    const first = 2 * (1 + g) * q;
    const second = ((15 * Math.PI) / 4) * q * q;
    // d/d ln q of first + second = first + 2 second; d/d gamma = 2q
    const sigmaWeak = Math.hypot((first + 2 * second) * (sg / gm), (first + 2 * second) * (sb / b), 2 * q * sgam);
    expect(rel(body.weak_field.uncertainty, sigmaWeak)).toBeLessThan(1e-7);
    const qd = d(gm).div(d(C).pow(2)).div(d(b));
    const h = qd.times('1e-12');
    const deriv = darwinDeflection(new D(1).div(qd.plus(h))).minus(darwinDeflection(new D(1).div(qd.minus(h)))).div(h.times(2)); // d Delta phi / dq
    const sigmaExact = deriv.times(qd).toNumber() * Math.hypot(sg / gm, sb / b);
    expect(rel(body.exact.uncertainty, sigmaExact)).toBeLessThan(1e-7);
  });

  it('Monte Carlo: the same seed gives byte-identical replies; percentiles ordered', async () => {
    const req = { body: { gm: { value: 2e21, uncertainty: 4e19 } }, impact_parameter: { value: 3e7, uncertainty: 9e5 }, uncertainty_method: { kind: 'monte-carlo', samples: 2000, seed: 9 } };
    const a = await deflection(req);
    const b = await deflection(req);
    expect(a.status).toBe(200);
    expect(a.raw).toBe(b.raw);
    expect(a.body.exact.p16).toBeLessThan(a.body.exact.p50);
    expect(a.body.exact.p50).toBeLessThan(a.body.exact.p84);
  });

  it('400s name the field', async () => {
    const cases: Array<[unknown, string, RegExp]> = [
      [{ ...SUN, impact_parameter: 0 }, '/impact_parameter', /.+/],
      [{ ...SUN, impact_parameter: { value: 1, unit: 's' } }, '/impact_parameter/unit', /not a length/],
      [{ ...SUN, ppn_gamma: 11 }, '/ppn_gamma', /.+/],
      [{ impact_parameter: 1e9 }, '/body', /.+/],
      [{ body: { preset: 'sun', gm: 1e20 }, impact_parameter: 1e9 }, '/body', /exactly one/],
    ];
    await expectFieldErrors(deflection, cases);
  });

  it('422 at the critical impact parameter states the allowed domain', async () => {
    const { status, body } = await deflection({ body: { mass: { value: 30, unit: 'solMass' } }, impact_parameter: { value: 5, unit: 'rg' } });
    expect(status).toBe(422);
    expect(body.errors[0].pointer).toBe('/impact_parameter');
    expect(body.detail).toMatch(/allowed: b > sqrt\(27\) GM\/c\^2 = \d/);
  });
});
