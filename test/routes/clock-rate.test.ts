/**
 * POST /v1/clock-rate and POST /v1/clock-rate/inversion against published values (IS-GPS-200,
 * Pound & Rebka 1960, IERS Conventions 2010), common-practice numbers, closed forms evaluated
 * independently at 50 digits with decimal.js (MTW ch. 31/33, BPT72), and round trips through
 * the HTTP API.
 */
import { Decimal } from 'decimal.js';
import { describe, expect, it } from 'vitest';
import { routeTestApp } from '../support/app.js';
import { expectFieldErrors } from '../support/problems.js';

const D = Decimal.clone({ precision: 50 });
type Dec = InstanceType<typeof D>;
const { post } = routeTestApp();
const forward = (p: unknown) => post('/v1/clock-rate', p);
const inversion = (p: unknown) => post('/v1/clock-rate/inversion', p);

type Num = number | { value: number; uncertainty?: number; p16?: number; p50?: number; p84?: number };
const val = (x: Num): number => (typeof x === 'number' ? x : x.value);
const sig = (x: Num): number => (typeof x === 'number' ? 0 : (x.uncertainty ?? 0));
const rel = (x: number, ref: Dec | number): number => {
  const r = new D(ref);
  return new D(x).minus(r).div(r).abs().toNumber();
};
const codes = (body: { warnings?: Array<{ code: string }> }) => (body.warnings ?? []).map((w) => w.code);

// Published constants (sources beside each).
const C = new D(299792458); // m/s, exact (SI)
const C2 = C.pow(2);
const GM_EARTH = new D('3.986004418e14'); // m^3 s^-2, IERS Conventions 2010, Table 1.1 (TT-compatible)
const R_EARTH = new D('6378136.6'); // m, IERS Conventions 2010, Table 1.1 (equatorial radius)
const L_G = new D('6.969290134e-10'); // IAU 2000 Resolution B1.9 (defining); IERS Conventions 2010
const GM_SUN = new D('1.3271244e20'); // m^3 s^-2, IAU 2015 Resolution B3 (nominal)
const MU_GPS = 3.986005e14; // m^3 s^-2, IS-GPS-200 (WGS 84 value used in the interface specification)
const F_GPS = -4.442807633e-10; // s m^-1/2, IS-GPS-200 §20.3.3.3.3.1: F = -2 sqrt(mu)/c^2
const A_GPS = 26561750; // m, semi-major axis of the GPS nominal orbit (IS-GPS-200 / common practice)

/** 50-digit references, written independently of physics/ (textbook forms, MTW ch. 31/33, BPT72). */
const ref = {
  /** Static clock in Kerr, Boyer-Lindquist r (rg): sqrt(1 - 2r/(r^2 + a^2 cos^2 theta)) (MTW ch. 33). */
  staticKerr(r: Decimal.Value, a: Decimal.Value, theta: Decimal.Value): Dec {
    const R = new D(r);
    const cos = new D(theta).cos();
    const sigma = R.pow(2).plus(new D(a).pow(2).times(cos.pow(2)));
    return new D(1).minus(R.times(2).div(sigma)).sqrt();
  },
  /** Circular equatorial orbit: r^{3/4} sqrt(r^{3/2} - 3 r^{1/2} + 2a) / (r^{3/2} + a) (BPT72 §II). */
  circular(r: Decimal.Value, a: Decimal.Value): Dec {
    const R = new D(r);
    const A = new D(a);
    const r32 = R.pow(1.5);
    return R.pow(0.75).times(r32.minus(R.sqrt().times(3)).plus(A.times(2)).sqrt()).div(r32.plus(A));
  },
  /** Static clock at areal radius r (m) around gm: sqrt(1 - 2 GM/(r c^2)) (MTW ch. 31). */
  staticSI(gm: Dec, r: Decimal.Value): Dec {
    return new D(1).minus(gm.times(2).div(new D(r).times(C2))).sqrt();
  },
  /** Circular orbit around a spherical body: sqrt(1 - 3 GM/(r c^2)) (BPT72, a = 0). */
  circularSI(gm: Dec, r: Decimal.Value): Dec {
    return new D(1).minus(gm.times(3).div(new D(r).times(C2))).sqrt();
  },
};

// ---------------------------------------------------------------------------

describe('POST /v1/clock-rate: published values', () => {
  it('IS-GPS-200: GPS orbit (a = 26 561.75 km) against the geoid runs fast by 4.4647e-10 (oscillator set to 10.22999999543 MHz)', async () => {
    const { status, body } = await forward({ body: { preset: 'earth' }, clock: { motion: 'circular', r: { value: 26561.75, unit: 'km' } }, reference: 'geoid' });
    expect(status).toBe(200);
    expect(body.model).toBe('weak-field');
    expect(body.references.join(' ')).toMatch(/IERS Conventions 2010/);
    // IS-GPS-200 §3.3.1.1: Delta f/f = -4.4647e-10 (the satellite clock's fractional offset is +4.4647e-10).
    // Tolerance 6e-15: the published value has 5 significant digits (+-5e-15); the preset's GM
    // (IERS 2010, 3.986004418e14) differs from IS-GPS-200's 3.986005e14, which moves 3GM/(2 a c^2)
    // by 3.7e-16; the orbit's mean J2 term at this radius is ~1e-15 smaller still.
    const y = val(body.fractional_offset);
    expect(Math.abs(y - 4.4647e-10)).toBeLessThan(6e-15);
    // The factory setting: 10.23 MHz (1 - 4.4647e-10) = 10.22999999543 MHz (IS-GPS-200 §3.3.1.1),
    // published to 1e-5 Hz.
    expect(Math.abs(10.23e6 * (1 - y) - 10.22999999543e6)).toBeLessThan(1e-5);
    // Common practice: 38.6 us/day (rounded to 0.1 us).
    expect(body.offset_per_interval.unit).toBe('s');
    expect(body.interval.value).toBe(86400);
    expect(Math.abs(val(body.offset_per_interval) * 1e6 - 38.6)).toBeLessThan(0.05);
    // Full precision against a 50-digit evaluation of the same model: rate/(1 - L_G) - 1.
    const exact = ref.circularSI(GM_EARTH, A_GPS).div(new D(1).minus(L_G)).minus(1);
    expect(rel(y, exact)).toBeLessThan(1e-12);
    expect(rel(val(body.rate_minus_one), ref.circularSI(GM_EARTH, A_GPS).minus(1))).toBeLessThan(1e-13);
    expect(val(body.reference.rate_minus_one)).toBe(-6.969290134e-10);
    expect(body.clock.stable).toBe(true);
    expect(Math.abs(body.clock.altitude.value - (A_GPS - 6378136.6))).toBeLessThan(1e-6);
  });

  it('IS-GPS-200: eccentric orbit (e = 0.01): periodic amplitude 2 sqrt(GM a) e/c^2 = |F| e sqrt(A) = 22.9 ns', async () => {
    const { status, body } = await forward({
      body: { preset: 'earth' },
      clock: { motion: 'circular' },
      orbit: { semi_major_axis: { value: 26561.75, unit: 'km' }, eccentricity: 0.01 },
      reference: 'geoid',
    });
    expect(status).toBe(200);
    expect(body.periodic_amplitude.unit).toBe('s');
    const amp = val(body.periodic_amplitude);
    // Against the IS-GPS-200 constant F: relative tolerance 1e-7, since sqrt(GM) differs by 7.3e-8
    // between the IERS 2010 GM and IS-GPS-200's mu (F itself is quoted to 10 digits).
    const fromF = -F_GPS * 0.01 * Math.sqrt(A_GPS);
    expect(Math.abs(amp / fromF - 1)).toBeLessThan(1e-7);
    expect(Math.abs(amp / (Math.sqrt(MU_GPS) * 2 * 0.01 * Math.sqrt(A_GPS) / 299792458 ** 2) - 1)).toBeLessThan(1e-7);
    expect(Math.abs(amp * 1e9 - 22.9)).toBeLessThan(0.05); // 22.9 ns (common practice, rounded)
    // The mean rate is that of the circular orbit of radius a (first order): same offset as above.
    expect(Math.abs(val(body.fractional_offset) - 4.4647e-10)).toBeLessThan(6e-15);
    expect(body.references.join(' ')).toMatch(/IS-GPS-200/);
    expect(codes(body)).not.toContain('weak-field-formula');
  });

  it('Pound & Rebka 1960 (Pound 2000, Phys. Perspect. 2, 224): two static clocks 22.5 m apart differ by g h/c^2 = 2.45e-15', async () => {
    const { status, body } = await forward({
      body: { preset: 'earth' },
      clock: { motion: 'static', altitude: 22.5 },
      reference: { motion: 'static', altitude: 0 },
    });
    expect(status).toBe(200);
    const y = val(body.fractional_offset);
    expect(y).toBeGreaterThan(0); // the upper clock runs fast
    expect(Math.abs(y / 2.45e-15 - 1)).toBeLessThan(0.02);
    // First order g h/c^2 with g = GM/R^2: differs from the exact result by ~h/R = 3.5e-6 relative.
    const ghc2 = GM_EARTH.div(R_EARTH.pow(2)).times(22.5).div(C2);
    expect(rel(y, ghc2)).toBeLessThan(1e-5);
    // Exact (50 digits): rate(R + h)/rate(R) - 1; the reply keeps the tiny offset to ~1e-10.
    const exact = ref.staticSI(GM_EARTH, R_EARTH.plus(22.5)).div(ref.staticSI(GM_EARTH, R_EARTH)).minus(1);
    expect(rel(y, exact)).toBeLessThan(1e-9);
    expect(body.reference.kind).toBe('clock');
    expect(body.reference.altitude.value).toBe(0);
    // 86400 s x 2.45e-15 = 0.21 ns per day.
    expect(rel(val(body.offset_per_interval), new D(y).times(86400))).toBeLessThan(1e-14);
  });

  it('tiny offsets keep full precision: clocks 1 m apart at the surface (1.1e-16) to 1e-8 (50-digit reference)', async () => {
    const { body } = await forward({ body: { preset: 'earth' }, clock: { motion: 'static', altitude: 1 }, reference: { motion: 'static', altitude: 0 } });
    const exact = ref.staticSI(GM_EARTH, R_EARTH.plus(1)).div(ref.staticSI(GM_EARTH, R_EARTH)).minus(1);
    expect(rel(val(body.fractional_offset), exact)).toBeLessThan(1e-8);
  });

  it.each([
    ['height', { height: 29.8 }],
    ['r in metres', { r: new D(2).times(GM_SUN).div(C2).plus(29.8).toNumber() }],
  ])('common practice: a static clock 29.8 m above the horizon of a one-solar-mass hole has dilation 10 (within 1 percent) [%s]', async (_label, pos) => {
    const { status, body } = await forward({ body: { mass: { value: 1, unit: 'solMass' } }, clock: { motion: 'static', ...pos } });
    expect(status).toBe(200);
    expect(body.model).toBe('schwarzschild');
    expect(Math.abs(val(body.dilation) / 10 - 1)).toBeLessThan(0.01);
    expect(Math.abs(body.clock.height_above_horizon.value - 29.8)).toBeLessThan(1e-9);
    // Exact: sqrt((1 + x)/x), x = 29.8 m / r_s (MTW ch. 31), 50 digits.
    const x = new D(29.8).div(GM_SUN.times(2).div(C2));
    expect(rel(val(body.dilation), x.plus(1).div(x).sqrt())).toBeLessThan(1e-12);
  });

  it('decimal references: static Kerr clock (MTW ch. 33), circular orbits (BPT72), moving Schwarzschild clock', async () => {
    const cases: Array<[unknown, Dec]> = [
      [{ body: { gm: 1e20, spin: 0.7 }, clock: { motion: 'static', r: { value: 2.3, unit: 'rg' }, polar_angle: 1.1 } }, ref.staticKerr(2.3, 0.7, 1.1)],
      [{ body: { gm: 1e20, spin: -0.99 }, clock: { motion: 'static', r: { value: 1.2, unit: 'rs' }, polar_angle: { value: 10, unit: 'deg' } } }, ref.staticKerr(2.4, -0.99, new D(Math.PI).div(18))],
      [{ body: { gm: 1e20, spin: 0.9 }, clock: { motion: 'circular', r: { value: 5, unit: 'rg' } } }, ref.circular(5, 0.9)],
      [{ body: { gm: 1e20, spin: 0.9 }, clock: { motion: 'circular', direction: 'retrograde', r: { value: 5, unit: 'rg' } } }, ref.circular(5, -0.9)],
      // rate = sqrt(1 - 2/r) sqrt(1 - beta^2) (MTW ch. 31 and special relativity), beta = 0.6.
      [{ body: { gm: 1e20 }, clock: { motion: 'moving', r: { value: 7, unit: 'rg' }, speed: { value: 0.6 * 299792.458, unit: 'km/s' } } }, new D(1).minus(new D(2).div(7)).sqrt().times(0.8)],
    ];
    for (const [req, expected] of cases) {
      const { status, body } = await forward(req);
      expect(status).toBe(200);
      expect(rel(val(body.rate), expected)).toBeLessThan(1e-13);
      expect(rel(val(body.rate_minus_one), expected.minus(1))).toBeLessThan(1e-13);
      expect(rel(val(body.dilation), new D(1).div(expected))).toBeLessThan(1e-13);
      expect(rel(val(body.fractional_offset), expected.minus(1))).toBeLessThan(1e-13);
    }
  });

  it('a circular orbit between the photon orbit and the ISCO is computed with a warning (BPT72)', async () => {
    const { status, body } = await forward({ body: { gm: 1e20 }, clock: { motion: 'circular', r: { value: 4.5, unit: 'rg' } } });
    expect(status).toBe(200);
    expect(body.clock.stable).toBe(false);
    expect(codes(body)).toContain('inside-isco');
    expect(rel(val(body.rate), new D(1).minus(new D(3).div(4.5)).sqrt())).toBeLessThan(1e-13);
  });

  it('a static Kerr clock given by its height above the horizon keeps that height exactly; model kerr', async () => {
    const { body } = await forward({ body: { gm: 1e20, spin: 0.5 }, clock: { motion: 'static', height: { value: 1, unit: 'rg' }, polar_angle: 0.3 } });
    expect(body.model).toBe('kerr');
    expect(body.clock.height_above_horizon.rg).toBe(1);
    // r = r+ + 1 = 2 + sqrt(0.75)
    const r = new D(2).plus(new D(0.75).sqrt());
    expect(rel(body.clock.r.rg, r)).toBeLessThan(1e-15);
    expect(rel(val(body.rate), ref.staticKerr(r, 0.5, 0.3))).toBeLessThan(1e-13);
  });
});

describe('POST /v1/clock-rate: uncertainties', () => {
  it('linear: uncertain r of a static Schwarzschild clock, sigma(rate) = sigma_r/(r^2 sqrt(1 - 2/r)) (closed form, 50 digits)', async () => {
    const { body } = await forward({ body: { gm: 1e20 }, clock: { motion: 'static', r: { value: 10, unit: 'rg', uncertainty: 0.01 } } });
    const expected = new D(0.01).div(new D(100).times(new D(0.8).sqrt()));
    expect(rel(sig(body.rate), expected)).toBeLessThan(1e-8);
    expect(rel(sig(body.rate_minus_one), expected)).toBeLessThan(1e-8);
    // dilation = (1 - 2/r)^(-1/2): d/dr = -(1 - 2/r)^(-3/2)/r^2.
    expect(rel(sig(body.dilation), new D(0.01).div(100).div(new D(0.8).pow(1.5)))).toBeLessThan(1e-8);
    // r was given in rg: the uncertainty of r in metres is sigma_r rg.
    expect(rel(body.clock.r.uncertainty, new D(0.01).times(new D(1e20).div(C2)))).toBeLessThan(1e-8);
    expect(codes(body)).not.toContain('linear-uncertainty-unreliable');
  });

  it('linear: uncertain spin of a static Kerr clock against a 50-digit reference derivative', async () => {
    const [r, a, th, s] = [2.5, 0.6, 0.7, 0.01];
    const { body } = await forward({ body: { gm: 1e20, spin: { value: a, uncertainty: s } }, clock: { motion: 'static', r: { value: r, unit: 'rg' }, polar_angle: th } });
    const h = new D('1e-20');
    const deriv = ref.staticKerr(r, new D(a).plus(h), th).minus(ref.staticKerr(r, new D(a).minus(h), th)).div(h.times(2));
    expect(rel(sig(body.rate), deriv.abs().times(s))).toBeLessThan(1e-8);
  });

  it('linear: GPS orbit with uncertain semi-major axis and the IERS GM uncertainty (8e5 m^3 s^-2): quadrature sum of closed-form terms', async () => {
    const { body } = await forward({ body: { preset: 'earth' }, clock: { motion: 'circular', r: { value: A_GPS, uncertainty: 100 } }, reference: 'geoid' });
    // y = sqrt(1 - 3 GM/(r c^2))/(1 - L_G) - 1; dy/dr = (3GM/(2 r^2 c^2))/(rate (1 - L_G)), dy/dGM = -(3/(2 r c^2))/(rate (1 - L_G)).
    const rate = ref.circularSI(GM_EARTH, A_GPS);
    const k = rate.times(new D(1).minus(L_G));
    const dr = GM_EARTH.times(3).div(new D(A_GPS).pow(2).times(C2).times(2)).div(k);
    const dgm = new D(3).div(new D(A_GPS).times(C2).times(2)).div(k);
    const expected = dr.times(100).pow(2).plus(dgm.times(8e5).pow(2)).sqrt();
    expect(rel(sig(body.fractional_offset), expected)).toBeLessThan(1e-8);
    expect(rel(body.offset_per_interval.uncertainty, expected.times(86400))).toBeLessThan(1e-8);
  });

  it('linear: an uncertain interval scales the offset per interval exactly', async () => {
    const { body } = await forward({ body: { gm: 1e20 }, clock: { motion: 'static', r: { value: 10, unit: 'rg' } }, interval: { value: 2, unit: 'h', uncertainty: 0.1 } });
    expect(body.interval.value).toBe(7200);
    const expected = Math.abs(val(body.fractional_offset)) * 360;
    expect(Math.abs(body.offset_per_interval.uncertainty / expected - 1)).toBeLessThan(1e-10);
  });

  it('linear: uncertain speed of a moving clock, d rate/dv = -sqrt(1 - 2/r) beta/(c sqrt(1 - beta^2))', async () => {
    const v = 0.3 * 299792458;
    const { body } = await forward({ body: { gm: 1e20 }, clock: { motion: 'moving', r: { value: 20, unit: 'rg' }, speed: { value: v, uncertainty: 1000 } } });
    const expected = new D(0.9).sqrt().times(0.3).div(new D(1).minus(0.09).sqrt()).div(C).times(1000);
    expect(rel(sig(body.rate), expected)).toBeLessThan(1e-8);
  });

  it('near the horizon: a height uncertain by more than 10 % flags the linear result; 3 % does not; Monte Carlo is not flagged', async () => {
    const req = (sigma: number, method?: unknown) => ({
      body: { mass: { value: 1, unit: 'solMass' } },
      clock: { motion: 'static', height: { value: 29.8, uncertainty: sigma } },
      ...(method ? { uncertainty_method: method } : {}),
    });
    const wide = await forward(req(5));
    expect(wide.status).toBe(200);
    expect(codes(wide.body)).toContain('linear-uncertainty-unreliable');
    expect(wide.body.warnings.find((w: { code: string }) => w.code === 'linear-uncertainty-unreliable').message).toMatch(/17 %/);
    expect(codes((await forward(req(1))).body)).not.toContain('linear-uncertainty-unreliable');
    const mc = await forward(req(5, { kind: 'monte-carlo', samples: 2000, seed: 3 }));
    expect(codes(mc.body)).not.toContain('linear-uncertainty-unreliable');
    // The same holds for an uncertain mass at fixed r (the height in metres then moves with r_s).
    const viaMass = await forward({ body: { mass: { value: 1, unit: 'solMass', uncertainty: 0.005 } }, clock: { motion: 'static', r: 2983.05 } });
    expect(codes(viaMass.body)).toContain('linear-uncertainty-unreliable');
  });

  it('Monte Carlo: same seed, byte-identical reply; percentiles ordered; SD close to linear for a small sigma', async () => {
    const req = {
      body: { gm: 1e20 },
      clock: { motion: 'static', r: { value: 10, unit: 'rg', uncertainty: 0.01 } },
      reference: { motion: 'circular', r: { value: 30, unit: 'rg' } },
      uncertainty_method: { kind: 'monte-carlo', samples: 20000, seed: 11 },
    };
    const a = await forward(req);
    const b = await forward(req);
    expect(a.status).toBe(200);
    expect(a.raw).toBe(b.raw);
    for (const k of ['rate', 'rate_minus_one', 'dilation', 'fractional_offset'] as const) {
      const m = a.body[k];
      expect(m.p16).toBeLessThan(m.p50);
      expect(m.p50).toBeLessThan(m.p84);
    }
    // Linear: sigma_y = |dy/dr| sigma_r; Monte Carlo SE of an SD with n = 20000 is ~0.5 %: allow 3 %.
    const lin = await forward({ ...req, uncertainty_method: { kind: 'linear' } });
    expect(Math.abs(sig(a.body.fractional_offset) / sig(lin.body.fractional_offset) - 1)).toBeLessThan(0.03);
    const other = await forward({ ...req, uncertainty_method: { kind: 'monte-carlo', samples: 20000, seed: 12 } });
    expect(other.raw).not.toBe(a.raw);
  });
});

describe('POST /v1/clock-rate: batches and errors', () => {
  it('a batch answers in order with count; an item inside the ergosphere holds a 422 in its slot', async () => {
    const { status, body } = await forward({
      items: [
        { body: { gm: 1e20 }, clock: { motion: 'static', r: { value: 3, unit: 'rg' } } },
        { body: { gm: 1e20, spin: 0.9 }, clock: { motion: 'static', r: { value: 1.95, unit: 'rg' } } },
        { body: { preset: 'earth' }, clock: { motion: 'circular', altitude: { value: 20183.61, unit: 'km' } }, reference: 'geoid' },
      ],
    });
    expect(status).toBe(200);
    expect(body.count).toBe(3);
    expect(rel(val(body.items[0].rate), new D(1).div(3).sqrt())).toBeLessThan(1e-13);
    expect(body.items[1].error.status).toBe(422);
    expect(body.items[1].error.errors[0].pointer).toBe('/items/1/clock/r');
    expect(body.items[1].error.detail).toMatch(/allowed: r > 2 GM\/c\^2/);
    expect(Math.abs(val(body.items[2].fractional_offset) - 4.4647e-10)).toBeLessThan(1e-14);
  });

  it('422: inside the ergosphere, inside the photon orbit, inside the horizon; detail states the allowed domain', async () => {
    const ergo = await forward({ body: { gm: 1e20, spin: 0.9 }, clock: { motion: 'static', height: { value: 0.1, unit: 'rg' } } });
    expect(ergo.status).toBe(422);
    expect(ergo.headers['content-type']).toMatch(/application\/problem\+json/);
    expect(ergo.body.errors[0].pointer).toBe('/clock/height');
    expect(ergo.body.detail).toMatch(/allowed: height > /);
    const photon = await forward({ body: { gm: 1e20 }, clock: { motion: 'circular', r: { value: 2.9, unit: 'rg' } } });
    expect(photon.status).toBe(422);
    expect(photon.body.errors[0].pointer).toBe('/clock/r');
    expect(photon.body.detail).toMatch(/allowed: r > 3 GM\/c\^2/);
    const moving = await forward({ body: { gm: 1e20 }, clock: { motion: 'moving', r: { value: 1.5, unit: 'rg' }, speed: 0 } });
    expect(moving.status).toBe(422);
    expect(moving.body.detail).toMatch(/allowed: r > 2 GM\/c\^2/);
  });

  it('400s name the field: position alternatives, units, speed, reference "geoid", preset spin, orbit', async () => {
    const cases: Array<[unknown, string, RegExp]> = [
      [{ body: { gm: 1e20 }, clock: { motion: 'static', altitude: 100 } }, '/clock/altitude', /preset/],
      [{ body: { preset: 'sun' }, clock: { motion: 'static', height: 100 } }, '/clock/height', /no horizon/],
      [{ body: { preset: 'earth' }, clock: { motion: 'static', r: 7e6, altitude: 100 } }, '/clock', /exactly one of r, altitude or height/],
      [{ body: { preset: 'earth' }, clock: { motion: 'static' } }, '/clock', /needs one of r, altitude or height/],
      [{ body: { gm: 1e20 }, clock: { motion: 'static', r: { value: 10, unit: 'kg' } } }, '/clock/r/unit', /rg/],
      [{ body: { gm: 1e20 }, clock: { motion: 'moving', r: { value: 10, unit: 'rg' }, speed: { value: 300000, unit: 'km/s' } } }, '/clock/speed', /must be < c = 299792458 m\/s/],
      [{ body: { gm: 1e20 }, clock: { motion: 'moving', r: { value: 10, unit: 'rg' } } }, '/clock/speed', /required/],
      [{ body: { gm: 1e20, spin: 0.5 }, clock: { motion: 'moving', r: { value: 10, unit: 'rg' }, speed: 1 } }, '/body/spin', /Schwarzschild/],
      [{ body: { gm: 1e20 }, clock: { motion: 'circular', r: { value: 10, unit: 'rg' }, polar_angle: 1 } }, '/clock/polar_angle', /equatorial/],
      [{ body: { gm: 1e20 }, clock: { motion: 'static', r: { value: 10, unit: 'rg' }, polar_angle: { value: 200, unit: 'deg' } } }, '/clock/polar_angle', /between 0 and pi/],
      [{ body: { preset: 'sun' }, clock: { motion: 'static', altitude: 0 }, reference: 'geoid' }, '/reference', /"earth"/],
      [{ body: { preset: 'earth', spin: 0.1 }, clock: { motion: 'static', altitude: 0 } }, '/body/spin', /preset/],
      [{ body: { preset: 'earth' }, clock: { motion: 'static' }, orbit: { semi_major_axis: 7e6, eccentricity: 0.1 } }, '/clock/motion', /circular/],
      [{ body: { preset: 'earth' }, clock: { motion: 'circular', r: 7e6 }, orbit: { semi_major_axis: 7e6, eccentricity: 0.1 } }, '/clock/r', /semi_major_axis/],
      [{ body: { preset: 'earth' }, clock: { motion: 'circular' }, orbit: { semi_major_axis: 7e6, eccentricity: 1 } }, '/orbit/eccentricity', /< 1/],
      [{ body: { gm: 1e20 }, clock: { motion: 'static', r: { value: 10, unit: 'rg' } }, reference: { motion: 'static', altitude: 5 } }, '/reference/altitude', /preset/],
      [{ body: { gm: 1e20 }, clock: { motion: 'static', r: -5 } }, '/clock/r', /> 0/],
    ];
    await expectFieldErrors(forward, cases);
  });

  it('a clock below the reference surface of a preset is computed with a warning', async () => {
    const { status, body } = await forward({ body: { preset: 'earth' }, clock: { motion: 'static', altitude: { value: -30, unit: 'km' } } });
    expect(status).toBe(200);
    expect(codes(body)).toContain('below-reference-surface');
  });

  it('identical requests give byte-identical replies with the same ETag', async () => {
    const req = { body: { gm: 4e20, spin: 0.3 }, clock: { motion: 'circular', r: { value: 12, unit: 'rg', uncertainty: 0.1 } } };
    const a = await forward(req);
    const b = await forward(req);
    expect(a.raw).toBe(b.raw);
    expect(a.headers.etag).toBe(b.headers.etag);
  });
});

// ---------------------------------------------------------------------------

describe('POST /v1/clock-rate/inversion', () => {
  it('common practice: dilation 10 around a one-solar-mass hole is 29.8 m above the horizon (closed form x = g^2/(1 - g^2), MTW ch. 31)', async () => {
    const { status, body } = await inversion({ body: { mass: { value: 1, unit: 'solMass' } }, clock: { motion: 'static' }, target: { dilation: 10 } });
    expect(status).toBe(200);
    expect(body.model).toBe('schwarzschild');
    expect(Math.abs(body.height_above_horizon.value / 29.8 - 1)).toBeLessThan(0.01);
    // Exact: height = r_s / 99 (50 digits).
    expect(rel(body.height_above_horizon.value, GM_SUN.times(2).div(C2).div(99))).toBeLessThan(1e-13);
    expect(rel(body.r.rg, new D(200).div(99))).toBeLessThan(1e-14);
    expect(val(body.dilation)).toBe(10);
  });

  it.each([
    [0.7, 1.1, 2.3],
    [0.998, 0.2, 1.5],
    [-0.5, 2.8, 6],
    [0, 1.5707963267948966, 40],
    [0.99, 1.5707963267948966, 2.05],
  ])('round trip through the API, static Kerr clock (a = %s, theta = %s, r = %s rg): forward dilation, inversion r to 1e-10', async (a, th, r) => {
    const body = { gm: 1e20, spin: a };
    const f = await forward({ body, clock: { motion: 'static', r: { value: r, unit: 'rg' }, polar_angle: th } });
    expect(f.status).toBe(200);
    const inv = await inversion({ body, clock: { motion: 'static', polar_angle: th }, target: { dilation: val(f.body.dilation) } });
    expect(inv.status).toBe(200);
    expect(Math.abs(inv.body.r.value / f.body.clock.r.value - 1)).toBeLessThan(1e-10);
    expect(Math.abs(inv.body.height_above_horizon.value / f.body.clock.height_above_horizon.value - 1)).toBeLessThan(1e-10);
  });

  it.each([
    [0.9, 'prograde', 1.8],
    [0.9, 'prograde', 9],
    [0.9, 'retrograde', 4.2],
    [0.9, 'retrograde', 25],
    [-0.3, 'prograde', 7],
    [0, 'prograde', 3.5],
  ])('round trip through the API, circular orbit (a = %s, %s, r = %s rg): forward rate, inversion (Brent) r to 1e-10', async (a, direction, r) => {
    const body = { gm: 1e20, spin: a };
    const f = await forward({ body, clock: { motion: 'circular', direction, r: { value: r, unit: 'rg' } } });
    expect(f.status).toBe(200);
    const inv = await inversion({ body, clock: { motion: 'circular', direction }, target: { rate: val(f.body.rate) } });
    expect(inv.status).toBe(200);
    expect(Math.abs(inv.body.r.rg / r - 1)).toBeLessThan(1e-10);
    expect(inv.body.stable).toBe(f.body.clock.stable);
    expect(inv.body.references.join(' ')).toMatch(/Brent/);
  });

  it('weak-field round trip: the GPS offset against the geoid gives back a = 26 561.75 km (closed form r = 3GM/(c^2 (1 - rate^2)))', async () => {
    const f = await forward({ body: { preset: 'earth' }, clock: { motion: 'circular', r: A_GPS }, reference: 'geoid' });
    const inv = await inversion({ body: { preset: 'earth' }, clock: { motion: 'circular' }, target: { fractional_offset: val(f.body.fractional_offset), reference: 'geoid' } });
    expect(inv.status).toBe(200);
    expect(inv.body.model).toBe('weak-field');
    expect(Math.abs(inv.body.r.value / A_GPS - 1)).toBeLessThan(1e-10);
    expect(Math.abs(inv.body.altitude.value / (A_GPS - 6378136.6) - 1)).toBeLessThan(1e-10);
    // And the published offset itself: IS-GPS-200 4.4647e-10 -> a within 0.4 km (5-digit value).
    const pub = await inversion({ body: { preset: 'earth' }, clock: { motion: 'circular' }, target: { fractional_offset: 4.4647e-10, reference: 'geoid' } });
    expect(Math.abs(pub.body.r.value - A_GPS)).toBeLessThan(400);
  });

  it('weak-field round trip against a reference clock: 22.5 m above a ground clock (Pound & Rebka geometry)', async () => {
    const reference = { motion: 'static', altitude: 0 };
    const f = await forward({ body: { preset: 'earth' }, clock: { motion: 'static', altitude: 22.5 }, reference });
    const inv = await inversion({ body: { preset: 'earth' }, clock: { motion: 'static' }, target: { fractional_offset: val(f.body.fractional_offset), reference } });
    expect(inv.status).toBe(200);
    // The offset of 2.45e-15 carries ~1e-10 relative precision: the altitude comes back to ~1e-3 m.
    expect(Math.abs(inv.body.altitude.value - 22.5)).toBeLessThan(1e-3);
    expect(inv.body.reference.kind).toBe('clock');
  });

  it('linear uncertainty of the target: static Schwarzschild r = r_s/(1 - D^-2), dr/dD = -2 r_s/(D^3 (1 - D^-2)^2) (closed form)', async () => {
    const { body } = await inversion({ body: { gm: 1e20 }, clock: { motion: 'static' }, target: { dilation: { value: 1.5, uncertainty: 0.001 } } });
    const rs = new D(2e20).div(C2);
    const Dd = new D(1.5);
    const q = new D(1).minus(new D(1).div(Dd.pow(2)));
    const expected = rs.times(2).div(Dd.pow(3).times(q.pow(2))).times(0.001);
    expect(rel(body.r.uncertainty, expected)).toBeLessThan(1e-8);
    expect(rel(body.height_above_horizon.uncertainty, expected)).toBeLessThan(1e-8);
  });

  it('linear uncertainty of the mass: r scales with GM at fixed target (relative sigma carries over exactly)', async () => {
    const { body } = await inversion({ body: { gm: { value: 1e20, uncertainty: 1e18 }, spin: 0.6 }, clock: { motion: 'circular' }, target: { rate: 0.7 } });
    expect(Math.abs(body.r.uncertainty / body.r.value - 0.01)).toBeLessThan(1e-8);
  });

  it('near the horizon the inversion flags an unreliable linear height; Monte Carlo is reproducible with ordered percentiles', async () => {
    const base = { body: { gm: 1e20 }, clock: { motion: 'static' }, target: { dilation: { value: 30, uncertainty: 5 } } };
    const lin = await inversion(base);
    expect(codes(lin.body)).toContain('linear-uncertainty-unreliable');
    const req = { ...base, uncertainty_method: { kind: 'monte-carlo', samples: 5000, seed: 5 } };
    const a = await inversion(req);
    const b = await inversion(req);
    expect(a.status).toBe(200);
    expect(a.raw).toBe(b.raw);
    const h = a.body.height_above_horizon;
    expect(h.p16).toBeLessThan(h.p50);
    expect(h.p50).toBeLessThan(h.p84);
    expect(codes(a.body)).not.toContain('linear-uncertainty-unreliable');
  });

  it('422 for unreachable targets, stating the achievable range', async () => {
    const cases: Array<[unknown, string, RegExp]> = [
      [{ body: { gm: 1e20 }, clock: { motion: 'static' }, target: { dilation: 0.5 } }, '/target/dilation', /dilation > 1/],
      [{ body: { gm: 1e20 }, clock: { motion: 'circular' }, target: { rate: 1.2 } }, '/target/rate', /0 < rate < 1/],
      [{ body: { gm: 1e20 }, clock: { motion: 'static' }, target: { fractional_offset: 1e-9, reference: 'infinity' } }, '/target/fractional_offset', /achievable range -1 < offset < 0/],
      [{ body: { preset: 'earth' }, clock: { motion: 'circular' }, target: { fractional_offset: 1e-9, reference: 'geoid' } }, '/target/fractional_offset', /achievable range .*6\.96929/],
    ];
    for (const [req, pointer, detail] of cases) {
      const { status, body } = await inversion(req);
      expect(status, JSON.stringify(req)).toBe(422);
      expect(body.errors[0].pointer).toBe(pointer);
      expect(body.detail).toMatch(detail);
    }
  });

  it('400s: exactly one target, reference with fractional_offset only, "geoid" only for the Earth', async () => {
    const cases: Array<[unknown, string]> = [
      [{ body: { gm: 1e20 }, clock: { motion: 'static' }, target: { dilation: 2, rate: 0.5 } }, '/target'],
      [{ body: { gm: 1e20 }, clock: { motion: 'static' }, target: {} }, '/target'],
      [{ body: { gm: 1e20 }, clock: { motion: 'static' }, target: { fractional_offset: -0.1 } }, '/target/reference'],
      [{ body: { gm: 1e20 }, clock: { motion: 'static' }, target: { rate: 0.5, reference: 'infinity' } }, '/target/reference'],
      [{ body: { gm: 1e20 }, clock: { motion: 'static' }, target: { fractional_offset: -0.1, reference: 'geoid' } }, '/target/reference'],
      [{ body: { gm: 1e20 }, clock: { motion: 'moving' }, target: { rate: 0.5 } }, '/clock/motion'],
      [{ body: { gm: 1e20 }, clock: { motion: 'circular', polar_angle: 1 }, target: { rate: 0.5 } }, '/clock/polar_angle'],
    ];
    await expectFieldErrors(inversion, cases);
  });

  it('a batch answers in order with a per-item 422 in its slot', async () => {
    const { status, body } = await inversion({
      items: [
        { body: { gm: 1e20 }, clock: { motion: 'static' }, target: { rate: 0.5 } },
        { body: { gm: 1e20 }, clock: { motion: 'static' }, target: { rate: 1.5 } },
        { body: { gm: 1e20, spin: 0.9 }, clock: { motion: 'circular' }, target: { dilation: 2 } },
      ],
    });
    expect(status).toBe(200);
    expect(body.count).toBe(3);
    // r/r_s = 1/(1 - rate^2) = 4/3 -> r = 8/3 rg (MTW ch. 31).
    expect(rel(body.items[0].r.rg, new D(8).div(3))).toBeLessThan(1e-14);
    expect(body.items[1].error.status).toBe(422);
    expect(body.items[1].error.errors[0].pointer).toBe('/items/1/target/rate');
    expect(rel(val(body.items[2].dilation), 2)).toBe(0);
    // The orbit found has 1/u^t = 1/2 (BPT72 §II, 50 digits).
    expect(rel(0.5, ref.circular(body.items[2].r.rg, 0.9))).toBeLessThan(1e-12);
  });
});
