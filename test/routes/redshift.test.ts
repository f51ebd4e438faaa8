/**
 * POST /v1/redshift and POST /v1/redshift/inversion against published values (Barstow et al. 2005
 * and Bond et al. 2017 for Sirius B), common practice (static emitter at 3 rs), and 45-digit
 * decimal.js references (Schwarzschild and Kerr metrics, MTW ch. 31 and 33; circular orbits,
 * BPT72), plus round trips through the HTTP API, uncertainties, batches and errors.
 */
import { Decimal } from 'decimal.js';
import { describe, expect, it } from 'vitest';
import { routeTestApp } from '../support/app.js';

const D = Decimal.clone({ precision: 45 });
type Dec = InstanceType<typeof D>;
const { post } = routeTestApp({ BATCH_MAX: 500 });
const forward = (payload: unknown) => post('/v1/redshift', payload);
const inversion = (payload: unknown) => post('/v1/redshift/inversion', payload);

const C = new D(299792458); // m/s, exact (SI)
const GM_SUN = new D('1.3271244e20'); // m^3 s^-2, IAU 2015 Resolution B3 (nominal)
const R_SUN = new D('6.957e8'); // m, IAU 2015 Resolution B3 (nominal)
const GM_EARTH = new D('3.986004418e14'); // m^3 s^-2, IERS Conventions 2010, Table 1.1
const R_EARTH = new D('6378136.6'); // m, IERS Conventions 2010, Table 1.1
const RG_SUN = GM_SUN.div(C.pow(2)); // m
const ONE = new D(1);

function rel(actual: number, expected: Dec | number): number {
  const e = new D(expected);
  return new D(actual).minus(e).div(e).abs().toNumber();
}

/** Static emitter in Kerr, Boyer-Lindquist r in rg: 1+z = 1/sqrt(1 - 2r/(r^2 + a^2 cos^2 theta)) (MTW ch. 33; a = 0: ch. 31). */
function staticOnePlusZ(r: Dec, a: Dec = new D(0), cosTheta: Dec = new D(0)): Dec {
  const sigma = r.pow(2).plus(a.pow(2).times(cosTheta.pow(2)));
  return ONE.div(ONE.minus(r.times(2).div(sigma)).sqrt());
}

/** Circular equatorial orbit, signed spin a: u^t = (r^{3/2} + a) / (r^{3/4} sqrt(r^{3/2} - 3 r^{1/2} + 2a)) (BPT72). */
function circularOnePlusZ(r: Dec, a: Dec): Dec {
  const r32 = r.pow(1.5);
  return r32.plus(a).div(r.pow(0.75).times(r32.minus(r.sqrt().times(3)).plus(a.times(2)).sqrt()));
}

const codes = (body: { warnings?: Array<{ code: string }> }) => (body.warnings ?? []).map((w) => w.code);

// ---------------------------------------------------------------------------

describe('outside-world checks', () => {
  it('Sirius B: v = 80.42 +- 4.83 km/s (Barstow et al. 2005, MNRAS 362, 1134), R = 0.0081 R_sun (from memory) -> M = 1.02 M_sun, consistent with 1.018 +- 0.011 (Bond et al. 2017, ApJ 840, 70)', async () => {
    const { status, body } = await inversion({
      emitter: { motion: 'static' },
      velocity: { value: 80.42, unit: 'km/s', uncertainty: 4.83 },
      r: { value: 0.0081, unit: 'solRad' },
      solve_for: 'mass',
    });
    expect(status).toBe(200);
    expect(body.model).toBe('schwarzschild');
    const m = body.mass_solar.value;
    const sigma = body.mass_solar.uncertainty;
    // Barstow et al. quote 1.02 M_sun; R has two significant figures: allow 0.01.
    expect(Math.abs(m - 1.02)).toBeLessThan(0.01);
    // Consistent with the astrometric mass within the combined 1 sigma.
    expect(Math.abs(m - 1.018)).toBeLessThan(Math.hypot(sigma, 0.011));
    // The propagated uncertainty is about 0.06 M_sun.
    expect(Math.abs(sigma - 0.06)).toBeLessThan(0.005);

    // Exact static Schwarzschild mass, 45 digits: GM = r c^2 z (2 + z) / (2 (1+z)^2), z = v/c.
    const z = new D('80420').div(C);
    const r = new D('0.0081').times(R_SUN);
    const omg2 = (zz: Dec) => zz.times(zz.plus(2)).div(zz.plus(1).pow(2));
    const mRef = r.times(C.pow(2)).times(omg2(z)).div(2).div(GM_SUN);
    expect(rel(m, mRef)).toBeLessThan(1e-13);
    expect(body.mass.unit).toBe('kg');
    expect(body.gm.unit).toBe('m3.s-2');

    // First-order closed form of the weak field: sigma_M / M = sigma_v / v. The exact relation
    // M ~ z (2+z)/(1+z)^2 gives sigma_M / M = k sigma_v / v with k = d ln M / d ln z
    // = 1 + z/(2+z) - 2z/(1+z) (algebra), here 1 - 4.0e-4: that is the tolerance.
    const k = ONE.plus(z.div(z.plus(2))).minus(z.times(2).div(z.plus(1)));
    const weak = 4.83 / 80.42;
    const correction = ONE.minus(k).abs().toNumber();
    expect(correction).toBeGreaterThan(3e-4);
    expect(correction).toBeLessThan(5e-4);
    expect(Math.abs(sigma / m / weak - 1)).toBeLessThanOrEqual(correction * 1.01);
    // ... and with the correction the propagated uncertainty is exact to the derivative tolerance.
    expect(rel(sigma / m / weak, k)).toBeLessThan(1e-8);
  });

  it('common practice: a static emitter at 3 rs has 1+z = 1/sqrt(1 - 1/3) = 1.2247; 0.2 nm comes back 0.2449 nm; inverting that shift gives r = 3 rs', async () => {
    const { status, body } = await forward({
      body: { mass: { value: 1, unit: 'solMass' } },
      emitter: { motion: 'static', r: { value: 3, unit: 'rs' } },
      rest: { value: 0.2, unit: 'nm' },
    });
    expect(status).toBe(200);
    expect(body.one_plus_z).toBeCloseTo(1.2247, 4);
    expect(body.observed.value).toBeCloseTo(0.2449, 4);
    expect(body.observed.unit).toBe('nm');
    const ref = ONE.div(ONE.minus(new D(1).div(3)).sqrt());
    expect(rel(body.one_plus_z, ref)).toBeLessThan(1e-15);
    expect(rel(body.z, ref.minus(1))).toBeLessThan(1e-15);
    expect(rel(body.g, ONE.div(ref))).toBeLessThan(1e-15);
    expect(rel(body.observed.value, ref.times('0.2'))).toBeLessThan(1e-15);
    expect(rel(body.shift.value, ref.minus(1).times('0.2'))).toBeLessThan(1e-15);
    expect(body.r.rg).toBeCloseTo(6, 12);
    expect(body.height_above_horizon.rg).toBeCloseTo(4, 12);
    expect(body.model).toBe('schwarzschild');

    // Inversion of the shift as the spectral pair, and as z.
    for (const shift of [{ observed: body.observed, rest: { value: 0.2, unit: 'nm' } }, { z: body.z }]) {
      const inv = await inversion({ body: { mass: { value: 1, unit: 'solMass' } }, emitter: { motion: 'static' }, ...shift, solve_for: 'r' });
      expect(inv.status).toBe(200);
      expect(Math.abs(inv.body.r.rg / 6 - 1)).toBeLessThan(1e-12);
      expect(rel(inv.body.r.value, RG_SUN.times(6))).toBeLessThan(1e-12);
    }
  });

  it('z = 1e6 (static, Schwarzschild, one solar mass) inverts to a height above the horizon with full relative precision: h/rs = 1/((1+z)^2 - 1)', async () => {
    const { status, body } = await inversion({ body: { mass: { value: 1, unit: 'solMass' } }, emitter: { motion: 'static' }, z: 1e6, solve_for: 'r' });
    expect(status).toBe(200);
    const z = new D(1e6);
    const rs = RG_SUN.times(2);
    const h = rs.div(z.plus(1).pow(2).minus(1));
    expect(body.height_above_horizon.value).toBeGreaterThan(2.9e-9);
    expect(rel(body.height_above_horizon.value, h)).toBeLessThan(4e-15);
    expect(rel(body.height_above_horizon.rg, h.div(RG_SUN))).toBeLessThan(4e-15);
    expect(rel(body.r.value, rs.plus(h))).toBeLessThan(4e-16);
  });
});

describe('round trips through the API (forward, then inversion), 1e-10 relative', () => {
  const body = { mass: { value: 10, unit: 'solMass' } };
  const RG10 = RG_SUN.times(10);

  it.each([2.05, 2.3, 3, 10, 1e4])('static Kerr, a* = 0.9, polar angle 60 deg, r = %s rg', async (rRg) => {
    const kerr = { ...body, spin: 0.9 };
    const fwd = await forward({ body: kerr, emitter: { motion: 'static', r: { value: rRg, unit: 'rg' }, polar_angle: { value: 60, unit: 'deg' } } });
    expect(fwd.status).toBe(200);
    expect(fwd.body.model).toBe('kerr');
    const ref = staticOnePlusZ(new D(rRg), new D('0.9'), new D(Math.cos(Math.PI / 3)));
    expect(rel(fwd.body.one_plus_z, ref)).toBeLessThan(1e-14);
    const inv = await inversion({ body: kerr, emitter: { motion: 'static', polar_angle: { value: 60, unit: 'deg' } }, z: fwd.body.z, solve_for: 'r' });
    expect(inv.status).toBe(200);
    expect(Math.abs(inv.body.r.rg / rRg - 1)).toBeLessThan(1e-10);
    expect(rel(inv.body.r.value, RG10.times(rRg))).toBeLessThan(1e-10);
    // And back to the mass from r in metres and the same shift.
    const mass = await inversion({ body: { spin: 0.9 }, emitter: { motion: 'static', polar_angle: { value: 60, unit: 'deg' } }, z: fwd.body.z, r: fwd.body.r.value, solve_for: 'mass' });
    expect(Math.abs(mass.body.mass_solar / 10 - 1)).toBeLessThan(1e-10);
  });

  it('static Kerr on the spin axis hugging the horizon (r_E = r+ there): a height of 1e-9 rg keeps full relative precision (z ~ 5e4)', async () => {
    const kerr = { ...body, spin: 0.9 };
    const hM = RG10.times('1e-9').toNumber();
    const fwd = await forward({ body: kerr, emitter: { motion: 'static', height: hM, polar_angle: 0 } });
    expect(fwd.status).toBe(200);
    expect(fwd.body.z).toBeGreaterThan(1e4);
    expect(Math.abs(fwd.body.height_above_horizon.value / hM - 1)).toBeLessThan(4e-16);
    // Reference: r = r+ + h on the axis, r+ = 1 + sqrt(1 - a^2) (MTW ch. 33), 45 digits.
    const rPlus = ONE.plus(new D('0.19').sqrt());
    const hRg = new D(hM).div(RG10);
    expect(rel(fwd.body.one_plus_z, staticOnePlusZ(rPlus.plus(hRg), new D('0.9'), ONE))).toBeLessThan(1e-13);
    const inv = await inversion({ body: kerr, emitter: { motion: 'static', polar_angle: 0 }, z: fwd.body.z, solve_for: 'r' });
    expect(Math.abs(inv.body.height_above_horizon.value / hM - 1)).toBeLessThan(1e-10);
  });

  it('static Kerr off the axis: the height is above the horizon, and the emitter must be outside the static limit r_E(theta)', async () => {
    const kerr = { ...body, spin: 0.9 };
    const cos = new D(Math.cos(Math.PI / 3));
    const rE = ONE.plus(ONE.minus(new D('0.81').times(cos.pow(2))).sqrt());
    const rPlus = ONE.plus(new D('0.19').sqrt());
    // 1e-3 rg outside the static limit at 60 deg, given as a height above the horizon.
    const hRg = rE.minus(rPlus).plus('1e-3');
    const fwd = await forward({ body: kerr, emitter: { motion: 'static', height: hRg.times(RG10).toNumber(), polar_angle: { value: 60, unit: 'deg' } } });
    expect(fwd.status).toBe(200);
    expect(rel(fwd.body.one_plus_z, staticOnePlusZ(rPlus.plus(hRg), new D('0.9'), cos))).toBeLessThan(1e-10);
    expect(rel(fwd.body.height_above_static_limit.value, RG10.times('1e-3'))).toBeLessThan(1e-9);
    const inside = await forward({ body: kerr, emitter: { motion: 'static', height: rE.minus(rPlus).times(0.5).times(RG10).toNumber(), polar_angle: { value: 60, unit: 'deg' } } });
    expect(inside.status).toBe(422);
    expect(inside.body.detail).toMatch(/allowed: height above the horizon > r_E - r\+/);
  });

  it.each([
    ['prograde', 0.9, 1.6],
    ['prograde', 0.9, 2.5],
    ['prograde', 0.9, 40],
    ['retrograde', 0.9, 4.2],
    ['retrograde', 0.9, 9],
    ['retrograde', 0.9, 1e5],
    ['prograde', -0.5, 7.5],
    ['prograde', 0, 3.5],
  ] as const)('circular %s orbit, a* = %s, r = %s rg', async (direction, spin, rRg) => {
    const kerr = { ...body, spin };
    const fwd = await forward({ body: kerr, emitter: { motion: 'circular', direction, r: RG10.times(rRg).toNumber() } });
    expect(fwd.status).toBe(200);
    const signed = direction === 'prograde' ? spin : -spin;
    expect(rel(fwd.body.one_plus_z, circularOnePlusZ(new D(rRg), new D(signed)))).toBeLessThan(1e-13);
    const inv = await inversion({ body: kerr, emitter: { motion: 'circular', direction }, z: fwd.body.z, solve_for: 'r' });
    expect(inv.status).toBe(200);
    expect(Math.abs(inv.body.r.rg / rRg - 1)).toBeLessThan(1e-10);
    expect(inv.body.stable).toBe(fwd.body.stable);
    expect(inv.body.direction).toBe(direction);
    // Solving for the mass instead: GM = r c^2 / (r/rg).
    const mass = await inversion({ body: { spin }, emitter: { motion: 'circular', direction }, z: fwd.body.z, r: fwd.body.r.value, solve_for: 'mass' });
    expect(mass.status).toBe(200);
    expect(Math.abs(mass.body.mass_solar / 10 - 1)).toBeLessThan(1e-10);
    expect(mass.body.references).toContain('Bardeen, Press & Teukolsky 1972, ApJ 178, 347');
  });
});

describe('POST /v1/redshift', () => {
  it('weak field: the Sun (IAU 2015 B3) and the Earth (IERS 2010) keep full precision of z ~ 2e-6 and 7e-10', async () => {
    const sun = await forward({ body: { preset: 'sun' }, emitter: { motion: 'static', r: { value: 1, unit: 'solRad' } } });
    expect(sun.status).toBe(200);
    expect(sun.body.model).toBe('weak-field');
    const refSun = staticOnePlusZ(R_SUN.div(RG_SUN)).minus(1);
    expect(rel(sun.body.z, refSun)).toBeLessThan(1e-14);
    expect(sun.body.height_above_surface).toEqual({ value: 0, unit: 'm' });
    expect(sun.body.height_above_horizon).toBeUndefined();
    // c z ~ 636 m/s at infinity (first order GM/(R c)).
    expect(sun.body.velocity.value).toBeCloseTo(GM_SUN.div(R_SUN.times(C)).toNumber(), 2);

    const earth = await forward({ body: { preset: 'earth' }, emitter: { motion: 'static', r: 6378136.6 } });
    const refEarth = staticOnePlusZ(R_EARTH.div(GM_EARTH.div(C.pow(2)))).minus(1);
    expect(rel(earth.body.z.value, refEarth)).toBeLessThan(1e-14);
    // GM_earth carries its IERS uncertainty (8e5 m^3 s^-2): z does too, and so do 1+z and g
    // (their spread is that of z, far below an ulp of 1).
    const zSigma = earth.body.z.uncertainty;
    expect(rel(zSigma, refEarth.times(8e5).div(GM_EARTH))).toBeLessThan(1e-6);
    expect(earth.body.one_plus_z.uncertainty).toBe(zSigma);
    expect(rel(earth.body.g.uncertainty, zSigma)).toBeLessThan(1e-8);

    // Inverting the Sun's own surface shift gives back its radius.
    const inv = await inversion({ body: { preset: 'sun' }, emitter: { motion: 'static' }, z: sun.body.z, solve_for: 'r' });
    expect(rel(inv.body.r.value, R_SUN)).toBeLessThan(1e-12);
    expect(Math.abs(inv.body.height_above_surface.value)).toBeLessThan(1e-3);
  });

  it('a height hugging the horizon keeps full precision: 1e-6 m above a solar-mass horizon, 1+z = sqrt((1+x)/x), x = h/rs', async () => {
    const { status, body } = await forward({ body: { mass: { value: 1, unit: 'solMass' } }, emitter: { motion: 'static', height: 1e-6 } });
    expect(status).toBe(200);
    const x = new D('1e-6').div(RG_SUN.times(2));
    const ref = ONE.plus(x).div(x).sqrt();
    expect(rel(body.one_plus_z, ref)).toBeLessThan(1e-14);
    expect(rel(body.z, ref.minus(1))).toBeLessThan(1e-14);
    expect(body.height_above_horizon.value).toBe(1e-6);
    expect(body.height_above_static_limit.value).toBe(1e-6);
  });

  it('frequencies and photon energies shrink by 1+z, in the unit given', async () => {
    const base = { body: { gm: 1e20 }, emitter: { motion: 'static', r: { value: 10, unit: 'rg' } } };
    const ref = staticOnePlusZ(new D(10));
    const ghz = await forward({ ...base, rest: { value: 1.4204057517667, unit: 'GHz' } });
    expect(ghz.body.observed.unit).toBe('GHz');
    expect(rel(ghz.body.observed.value, new D('1.4204057517667').div(ref))).toBeLessThan(1e-15);
    expect(rel(ghz.body.shift.value, new D('1.4204057517667').div(ref).minus('1.4204057517667'))).toBeLessThan(1e-14);
    const kev = await forward({ ...base, rest: { value: 6.4, unit: 'keV' } });
    expect(kev.body.observed.unit).toBe('keV');
    expect(rel(kev.body.observed.value, new D('6.4').div(ref))).toBeLessThan(1e-15);
    const bare = await forward({ ...base, rest: 656.28e-9 });
    expect(bare.body.observed.unit).toBe('m');
    expect(rel(bare.body.observed.value, new D('656.28e-9').times(ref))).toBeLessThan(1e-15);
    expect(rel(bare.body.velocity.value, ref.minus(1).times(C))).toBeLessThan(1e-15);
  });

  it('circular orbits: 1+z = u^t (BPT72); r is monotone in z from the photon orbit out (checked on a batch of 200 radii, a* = 0.7 prograde)', async () => {
    // Photon orbit, BPT72 eq. (2.18): r_ph = 2 {1 + cos[(2/3) arccos(-a)]} = 2.01333... rg at a* = 0.7.
    const rPh = new D(2).times(ONE.plus(new D('-0.7').acos().times(2).div(3).cos())).toNumber();
    expect(rPh).toBeCloseTo(2.01333, 5);
    const radii = Array.from({ length: 200 }, (_, i) => rPh + 1e-6 * Math.pow(1e13, i / 199));
    const { status, body } = await forward({ items: radii.map((r) => ({ body: { gm: 1e20, spin: 0.7 }, emitter: { motion: 'circular', r: { value: r, unit: 'rg' } } })) });
    expect(status).toBe(200);
    const zs = body.items.map((it: { z: number }) => it.z);
    for (let i = 1; i < zs.length; i++) expect(zs[i]).toBeLessThan(zs[i - 1]);
    expect(zs[0]).toBeGreaterThan(100);
    expect(zs[199]).toBeLessThan(1e-6);
    expect(rel(zs[50], circularOnePlusZ(new D(radii[50]), new D('0.7')).minus(1))).toBeLessThan(1e-9);
  });

  it('an orbit between the photon orbit and the ISCO is computed and flagged unstable', async () => {
    const { status, body } = await forward({ body: { gm: 1e20 }, emitter: { motion: 'circular', r: { value: 4.5, unit: 'rg' } } });
    expect(status).toBe(200);
    expect(body.stable).toBe(false);
    expect(codes(body)).toContain('unstable-orbit');
    expect(rel(body.one_plus_z, circularOnePlusZ(new D('4.5'), new D(0)))).toBeLessThan(1e-14);
  });

  it('a batch answers in order, with a per-item 422 (static emitter inside the ergosphere) stating the allowed domain', async () => {
    const kerr = { gm: 1e20, spin: 0.9 };
    const { status, body } = await forward({
      items: [
        { body: kerr, emitter: { motion: 'static', r: { value: 3, unit: 'rg' } } },
        { body: kerr, emitter: { motion: 'static', r: { value: 1.9, unit: 'rg' } } },
        { body: kerr, emitter: { motion: 'circular', r: { value: 1.9, unit: 'rg' } } },
      ],
    });
    expect(status).toBe(200);
    expect(body.count).toBe(3);
    expect(rel(body.items[0].one_plus_z, staticOnePlusZ(new D(3)))).toBeLessThan(1e-15);
    const err = body.items[1].error;
    expect(err.status).toBe(422);
    expect(err.detail).toMatch(/static limit/);
    expect(err.detail).toMatch(/allowed: r > r_E = \S+ m = 2 GM\/c\^2/);
    expect(err.errors[0].pointer).toBe('/items/1/emitter/r');
    // Prograde circular orbits exist inside the ergosphere (r_ph = 1.56 rg at a* = 0.9): unstable there.
    expect(body.items[2].stable).toBe(false);
  });

  it('422 at or inside the photon orbit, with the allowed domain', async () => {
    const { status, body } = await forward({ body: { gm: 1e20 }, emitter: { motion: 'circular', direction: 'retrograde', r: { value: 3, unit: 'rg' } } });
    expect(status).toBe(422);
    expect(body.detail).toMatch(/allowed: r > r_ph = \S+ m = 3 GM\/c\^2/);
    expect(body.errors[0].pointer).toBe('/emitter/r');
    const h = await forward({ body: { gm: 1e20 }, emitter: { motion: 'static', height: -1 } });
    expect(h.status).toBe(422);
    expect(h.body.detail).toMatch(/allowed: height above the horizon > r_E - r\+ = 0 m/);
    expect(h.body.errors[0].pointer).toBe('/emitter/height');
  });
});

describe('uncertainties', () => {
  it('an uncertain r: sigma_z = |dz/dr| sigma_r (45-digit reference derivative)', async () => {
    const { body } = await forward({ body: { gm: 1e20 }, emitter: { motion: 'static', r: { value: 2.5, unit: 'rg', uncertainty: 1e-4 } }, rest: { value: 500, unit: 'nm' } });
    const h = new D('1e-20');
    const d = staticOnePlusZ(new D('2.5').plus(h)).minus(staticOnePlusZ(new D('2.5').minus(h))).div(h.times(2));
    expect(rel(body.z.uncertainty, d.abs().times('1e-4'))).toBeLessThan(1e-8);
    expect(rel(body.one_plus_z.uncertainty, d.abs().times('1e-4'))).toBeLessThan(1e-8);
    // g = 1/(1+z): sigma_g = sigma_z / (1+z)^2.
    expect(rel(body.g.uncertainty, d.abs().times('1e-4').div(staticOnePlusZ(new D('2.5')).pow(2)))).toBeLessThan(1e-8);
    expect(rel(body.observed.uncertainty, d.abs().times('1e-4').times(500))).toBeLessThan(1e-8);
    expect(body.observed.unit).toBe('nm');
  });

  it('an uncertain shift for a circular orbit: sigma_r = sigma_z / |dz/dr| through Brent (45-digit reference)', async () => {
    const rRg = new D(8);
    const z = circularOnePlusZ(rRg, new D('0.5')).minus(1);
    const { status, body } = await inversion({ body: { gm: 1e20, spin: 0.5 }, emitter: { motion: 'circular' }, z: { value: z.toNumber(), uncertainty: 1e-5 }, solve_for: 'r' });
    expect(status).toBe(200);
    const h = new D('1e-20');
    const dzdr = circularOnePlusZ(rRg.plus(h), new D('0.5')).minus(circularOnePlusZ(rRg.minus(h), new D('0.5'))).div(h.times(2));
    const rgM = new D(1e20).div(C.pow(2));
    expect(rel(body.r.uncertainty, new D('1e-5').div(dzdr.abs()).times(rgM))).toBeLessThan(1e-7);
    expect(body.z).toEqual({ value: z.toNumber(), uncertainty: 1e-5 });
  });

  it('near the horizon, a height uncertain by more than 10 % flags the linear result (forward and inversion); Monte Carlo does not', async () => {
    const solar = { mass: { value: 1, unit: 'solMass' } };
    const fwd = await forward({ body: solar, emitter: { motion: 'static', height: { value: 1e-3, uncertainty: 2e-4 } } });
    expect(codes(fwd.body)).toContain('linear-propagation-unreliable');
    const ok = await forward({ body: solar, emitter: { motion: 'static', height: { value: 1e-3, uncertainty: 5e-5 } } });
    expect(codes(ok.body)).not.toContain('linear-propagation-unreliable');
    // h ~ rs / z^2: z uncertain by 10 % puts 20 % on the height.
    const inv = await inversion({ body: solar, emitter: { motion: 'static' }, z: { value: 1e6, uncertainty: 1e5 }, solve_for: 'r' });
    expect(codes(inv.body)).toContain('linear-propagation-unreliable');
    expect(Math.abs(inv.body.height_above_horizon.uncertainty / inv.body.height_above_horizon.value - 0.2)).toBeLessThan(1e-6);
    const mc = await inversion({ body: solar, emitter: { motion: 'static' }, z: { value: 1e6, uncertainty: 1e5 }, solve_for: 'r', uncertainty_method: { kind: 'monte-carlo', samples: 2000, seed: 4 } });
    expect(codes(mc.body)).not.toContain('linear-propagation-unreliable');
    // The distribution of h ~ z^-2 is skewed: the median is below the nominal value's mirror.
    const hh = mc.body.height_above_horizon;
    expect(hh.p84 - hh.p50).toBeGreaterThan(hh.p50 - hh.p16);
  });

  it('derivatives stay outside the horizon for an uncertain r just outside it (no failed steps, no inaccurate-derivative note)', async () => {
    const { status, body } = await forward({ body: { gm: { value: 1e20, uncertainty: 1e15 } }, emitter: { motion: 'static', r: { value: 2.000001, unit: 'rg', uncertainty: 1e-8 } } });
    expect(status).toBe(200);
    expect(codes(body)).not.toContain('derivative-inaccurate');
    // z = 1/sqrt(x (1+x)) - ..., x = (r - 2)/2: dz/dr ~ -(1/4) x^{-3/2} near the horizon.
    const r = new D('2.000001');
    const h = new D('1e-20');
    const d = staticOnePlusZ(r.plus(h)).minus(staticOnePlusZ(r.minus(h))).div(h.times(2));
    expect(rel(body.z.uncertainty, d.abs().times('1e-8'))).toBeLessThan(1e-6);

    // r in metres: GM may then grow only until its horizon reaches r (GM < r c^2 / 2).
    const gm = new D(1e20);
    const rM = new D('2.000001').times(gm).div(C.pow(2)).toNumber();
    const zOf = (g: Dec, r: Dec) => staticOnePlusZ(r.times(C.pow(2)).div(g));
    const m = await forward({ body: { gm: { value: 1e20, uncertainty: 1e10 } }, emitter: { motion: 'static', r: { value: rM, uncertainty: 1e-9 } } });
    expect(m.status).toBe(200);
    expect(codes(m.body)).not.toContain('derivative-inaccurate');
    const hg = new D('1e-12');
    const dG = zOf(gm.plus(hg), new D(rM)).minus(zOf(gm.minus(hg), new D(rM))).div(hg.times(2));
    const hr = new D('1e-25');
    const dR = zOf(gm, new D(rM).plus(hr)).minus(zOf(gm, new D(rM).minus(hr))).div(hr.times(2));
    const sigmaRef = dG.times('1e10').pow(2).plus(dR.times('1e-9').pow(2)).sqrt();
    expect(rel(m.body.z.uncertainty, sigmaRef)).toBeLessThan(1e-6);
  });

  it('Monte Carlo: same seed, byte-identical reply; percentiles ordered', async () => {
    const req = {
      body: { mass: { value: 10, unit: 'solMass', uncertainty: 0.5 }, spin: { value: 0.8, uncertainty: 0.02 } },
      emitter: { motion: 'circular', r: { value: 300, unit: 'km', uncertainty: 5 } },
      rest: { value: 6.4, unit: 'keV', uncertainty: 0.01 },
      uncertainty_method: { kind: 'monte-carlo', samples: 5000, seed: 11 },
    };
    const a = await forward(req);
    const b = await forward(req);
    expect(a.status).toBe(200);
    expect(a.raw).toBe(b.raw);
    for (const k of ['z', 'one_plus_z', 'g']) {
      const m = a.body[k];
      expect(m.p16).toBeLessThan(m.p50);
      expect(m.p50).toBeLessThan(m.p84);
    }
    expect(a.body.observed.p16).toBeLessThan(a.body.observed.p84);
    const other = await forward({ ...req, uncertainty_method: { kind: 'monte-carlo', samples: 5000, seed: 12 } });
    expect(other.raw).not.toBe(a.raw);
  });

  it('the spectral pair carries its uncertainties into z and r', async () => {
    const { status, body } = await inversion({
      body: { gm: 1e20 },
      emitter: { motion: 'static' },
      observed: { value: 700, unit: 'nm', uncertainty: 0.1 },
      rest: { value: 656.28, unit: 'nm' },
      solve_for: 'r',
    });
    expect(status).toBe(200);
    expect(rel(body.z.value, new D(700).minus('656.28').div('656.28'))).toBeLessThan(1e-13);
    expect(rel(body.z.uncertainty, new D('0.1').div('656.28'))).toBeLessThan(1e-8);
  });
});

describe('POST /v1/redshift/inversion: errors', () => {
  it('a blueshift or z = 0 is a 422 that states the achievable range', async () => {
    const solar = { mass: { value: 1, unit: 'solMass' } };
    for (const [emitter, shift, pointer] of [
      [{ motion: 'static' }, { z: -0.01 }, '/z'],
      [{ motion: 'circular' }, { z: 0 }, '/z'],
      [{ motion: 'static' }, { velocity: { value: -10, unit: 'km/s' } }, '/velocity'],
      [{ motion: 'circular', direction: 'retrograde' }, { observed: { value: 600, unit: 'nm' }, rest: { value: 656.28, unit: 'nm' } }, '/observed'],
    ] as const) {
      const { status, body } = await inversion({ body: solar, emitter, ...shift, solve_for: 'r' });
      expect(status).toBe(422);
      expect(body.detail).toMatch(/achievable range 0 < z < infinity/);
      expect(body.errors[0].pointer).toBe(pointer);
    }
  });

  it.each([
    [{ emitter: { motion: 'static' }, solve_for: 'r', body: { gm: 1e20 } }, '/z', /exactly one of z, velocity/],
    [{ emitter: { motion: 'static' }, solve_for: 'r', body: { gm: 1e20 }, z: 1, velocity: 1 }, '/velocity', /exactly once/],
    [{ emitter: { motion: 'static' }, solve_for: 'r', body: { gm: 1e20 }, observed: 1e-6 }, '/rest', /needed with observed/],
    [{ emitter: { motion: 'static' }, solve_for: 'r', z: 1 }, '/body', /central body/],
    [{ emitter: { motion: 'static' }, solve_for: 'r', body: { gm: 1e20 }, z: 1, r: 5 }, '/r', /only read when solve_for is "mass"/],
    [{ emitter: { motion: 'static' }, solve_for: 'mass', z: 1 }, '/r', /needs the emitter radius/],
    [{ emitter: { motion: 'static' }, solve_for: 'mass', z: 1, r: { value: 5, unit: 'rg' } }, '/r/unit', /fixes no mass scale/],
    [{ emitter: { motion: 'static' }, solve_for: 'mass', z: 1, r: 5, body: { gm: 1e20 } }, '/body/gm', /may only carry spin/],
    [{ emitter: { motion: 'static', direction: 'prograde' }, solve_for: 'r', body: { gm: 1e20 }, z: 1 }, '/emitter/direction', /circular orbits only/],
    [{ emitter: { motion: 'circular', polar_angle: 0.3 }, solve_for: 'r', body: { gm: 1e20 }, z: 1 }, '/emitter/polar_angle', /equatorial/],
    [{ emitter: { motion: 'static' }, solve_for: 'r', body: { preset: 'sun', spin: 0.1 }, z: 1 }, '/body/spin', /preset body/],
    [{ emitter: { motion: 'static' }, solve_for: 'r', body: { gm: 1e20 }, velocity: { value: 1, unit: 'kg' } }, '/velocity/unit', /not a velocity/],
  ])('400 with a pointer: %j', async (payload, pointer, message) => {
    const { status, body } = await inversion(payload);
    expect(status).toBe(400);
    expect(body.errors[0].pointer).toBe(pointer);
    expect(body.errors[0].message).toMatch(message);
  });
});

describe('POST /v1/redshift: errors', () => {
  const gm = { gm: 1e20 };
  it.each([
    [{ body: gm, emitter: { motion: 'static' } }, '/emitter/r', /needs the emitter position/],
    [{ body: gm, emitter: { motion: 'static', r: 1e6, height: 1e3 } }, '/emitter/height', /exactly one of r and height/],
    [{ body: { preset: 'earth' }, emitter: { motion: 'static', height: 1e3 } }, '/emitter/height', /no horizon/],
    [{ body: gm, emitter: { motion: 'static', r: 1e6, polar_angle: { value: 200, unit: 'deg' } } }, '/emitter/polar_angle', /\[0, pi\]/],
    [{ body: gm, emitter: { motion: 'static', r: 1e6 }, rest: { value: 1, unit: 'kg' } }, '/rest/unit', /wavelength, frequency or photon energy/],
    [{ items: [{ body: gm, emitter: { motion: 'static', r: 1e6 } }, { body: gm, emitter: { motion: 'circular', r: 1e6, polar_angle: 1 } }] }, '/items/1/emitter/polar_angle', /equatorial/],
  ])('400 with a pointer: %j', async (payload, pointer, message) => {
    const { status, body } = await forward(payload);
    expect(status).toBe(400);
    expect(body.errors[0].pointer).toBe(pointer);
    expect(body.errors[0].message).toMatch(message);
  });

  it('an emitter below a preset body\'s reference radius is computed with a warning (the exterior field does not hold there)', async () => {
    const { status, body } = await forward({ body: { preset: 'earth' }, emitter: { motion: 'static', r: 6356752 } });
    expect(status).toBe(200);
    expect(codes(body)).toContain('below-surface');
    expect(body.height_above_surface.value).toBeCloseTo(6356752 - 6378136.6, 6);
  });
});
