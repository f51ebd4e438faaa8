/**
 * POST /v1/tides and POST /v1/tides/disruption against common-practice and published values
 * (a person at a stellar and at a supermassive horizon, the free-air gravity gradient, Hills
 * 1975, r_t/r_g = 47 for 1e6 solar masses, the Earth-Moon Roche limits), closed forms evaluated
 * independently at 40 digits with decimal.js, closed-form uncertainty propagation, Monte Carlo
 * reproducibility, batches with per-item physics errors, and error documents.
 */
import { describe, expect, it } from 'vitest';
import { routeTestApp } from '../support/app.js';
import { reference } from '../support/reference.js';
import { expectFieldErrors } from '../support/problems.js';

const { D, exact, relErr } = reference(40);
type Dec = InstanceType<typeof D>;
const { post } = routeTestApp();
const tides = (p: unknown) => post('/v1/tides', p);
const disruption = (p: unknown) => post('/v1/tides/disruption', p);

type Num = number | { value: number; uncertainty?: number };
const val = (x: Num): number => (typeof x === 'number' ? x : x.value);
const sig = (x: Num): number => (typeof x === 'number' ? 0 : (x.uncertainty ?? 0));
const codes = (body: { warnings?: Array<{ code: string }> }) => (body.warnings ?? []).map((w) => w.code);
const rel = (x: number, ref: number) => Math.abs(x / ref - 1);

// Published constants (sources beside each).
const C = 299792458; // m/s, exact (SI 2019)
const G = 6.6743e-11; // m^3 kg^-1 s^-2, CODATA 2018
const GM_SUN = 1.3271244e20; // m^3 s^-2, IAU 2015 Resolution B3 (nominal)
const R_SUN = 6.957e8; // m, IAU 2015 Resolution B3 (nominal)
const GM_EARTH = 3.986004418e14; // m^3 s^-2, IERS Conventions 2010, Table 1.1
const R_EARTH = 6378136.6; // m, IERS Conventions 2010, Table 1.1
const G0 = 9.80665; // m/s^2, 3rd CGPM 1901

const d = (x: number): Dec => exact(x);
const c2 = d(C).pow(2);
const PI = D.acos(-1);
const two3 = new D(2).div(3);

/** 40-digit references, written independently of physics/ (textbook forms). */
const ref = {
  /** 2GM/r^3 (MTW eq. 31.4). */
  kr: (gm: Dec, r: Dec) => gm.times(2).div(r.pow(3)),
  /** (2/3) r^{3/2}/sqrt(2GM) (MTW §25.5). */
  tau: (gm: Dec, r: Dec) => two3.times(r.pow(1.5)).div(gm.times(2).sqrt()),
  /** eta R* (GM/GM*)^{1/3} (Rees 1988). */
  rt: (eta: Dec, R: Dec, gm: Dec, gms: Dec) => eta.times(R).times(gm.div(gms).cbrt()),
  /** (eta R* c^2/x)^{3/2}/sqrt(GM*) (Hills mass, from r_t = x GM/c^2). */
  hills: (eta: Dec, R: Dec, gms: Dec, x: Dec) => eta.times(R).times(c2).div(x).pow(1.5).div(gms.sqrt()),
  /** k (3M/(4 pi rho))^{1/3}, M = GM/G. */
  roche: (k: Dec, gm: Dec, rho: Dec) => k.times(gm.div(d(G)).times(3).div(PI.times(4).times(rho)).cbrt()),
};

// ---------------------------------------------------------------------------

describe('POST /v1/tides', () => {
  it('a person of 2 m at the horizon of a 10 solar-mass hole feels of order 1e8 m/s^2 (common practice); exactly L c^6/(4 GM^2) (40 digits)', async () => {
    const { status, body } = await tides({ body: { mass: { value: 10, unit: 'solMass' } }, r: { value: 1, unit: 'rs' }, length: 2 });
    expect(status).toBe(200);
    const gm = d(GM_SUN).times(10);
    const stretch = d(2).times(c2.pow(3)).div(gm.pow(2).times(4));
    expect(body.radial_stretch.value).toBeGreaterThan(1e8);
    expect(body.radial_stretch.value).toBeLessThan(1e9);
    expect(relErr(body.radial_stretch.value, stretch)).toBeLessThan(1e-14);
    expect(body.radial_stretch.unit).toBe('m.s-2');
    expect(relErr(body.radial_stretch.g0, stretch.div(G0))).toBeLessThan(1e-14);
    expect(relErr(body.lateral_compression.value, stretch.div(2))).toBeLessThan(1e-14);
    expect(body.r.rg).toBe(2);
    expect(body.model).toBe('schwarzschild');
    expect(body.references.join(' ')).toMatch(/Misner, Thorne & Wheeler/);
    expect(body.warnings).toBeUndefined();
  });

  it('at the horizon of a 4e6 solar-mass hole the same person feels below 1e-2 m/s^2 (common practice)', async () => {
    const { body } = await tides({ body: { mass: { value: 4e6, unit: 'solMass' } }, r: { value: 2, unit: 'rg' }, length: { value: 200, unit: 'cm' } });
    expect(body.radial_stretch.value).toBeLessThan(1e-2);
    expect(body.radial_stretch.value).toBeGreaterThan(1e-4);
    expect(relErr(body.radial_stretch.value, d(2).times(c2.pow(3)).div(d(GM_SUN).times(4e6).pow(2).times(4)))).toBeLessThan(1e-14);
  });

  it("1 m above the Earth's reference surface the radial rate is the free-air gradient 0.3086 mGal/m (common practice in gravimetry) within 1 %", async () => {
    const { status, body } = await tides({ body: { preset: 'earth' }, r: R_EARTH + 1, length: 1 });
    expect(status).toBe(200);
    expect(rel(body.tidal_rates.radial.value / 1e-5, 0.3086)).toBeLessThan(0.01);
    expect(body.tidal_rates.radial.unit).toBe('s-2');
    expect(body.horizon).toBeUndefined();
  });

  it('a single case with width, mass and an acceleration limit matches the closed forms at 40 digits (MTW eq. 31.4, §25.5)', async () => {
    const [gm, r, L, w, m, a] = [2.6e22, 4e7, 1.8, 0.45, 72, 200];
    const { status, body } = await tides({ body: { gm }, r: { value: r / 1e3, unit: 'km' }, length: L, width: w, mass: m, limit: { acceleration: { value: a / 100, unit: 'm.s-2' } } });
    expect(status).toBe(200);
    const kr = ref.kr(d(gm), d(r));
    expect(relErr(body.tidal_rates.radial.value, kr)).toBeLessThan(1e-14);
    expect(relErr(body.tidal_rates.transverse.value, kr.div(-2))).toBeLessThan(1e-14);
    expect(relErr(body.radial_stretch.value, kr.times(L))).toBeLessThan(1e-14);
    expect(relErr(body.lateral_compression.value, kr.div(2).times(w))).toBeLessThan(1e-14);
    expect(relErr(body.rod_tension.value, kr.times(m).times(L).div(8))).toBeLessThan(1e-14);
    expect(body.rod_tension.unit).toBe('N');
    const lim = d(a).div(100);
    const rl = d(gm).times(2).times(L).div(lim).cbrt();
    expect(relErr(body.survival_radius.value, rl)).toBeLessThan(1e-14);
    expect(relErr(body.survival_radius.rg, rl.div(d(gm).div(c2)))).toBeLessThan(1e-14);
    const rh = d(gm).times(2).div(c2);
    expect(relErr(body.horizon.value, rh)).toBeLessThan(1e-15);
    expect(body.outside_horizon).toBe(true);
    expect(relErr(body.proper_time_to_singularity.value, ref.tau(d(gm), rl))).toBeLessThan(1e-14);
    // mass-independent form (2/3) sqrt(L/a)
    expect(relErr(body.proper_time_to_singularity.value, two3.times(d(L).div(lim).sqrt()))).toBeLessThan(1e-14);
    expect(relErr(body.proper_time_to_horizon.value, ref.tau(d(gm), rl).minus(ref.tau(d(gm), rh)))).toBeLessThan(1e-13);
  });

  it('a tension limit (kN) gives r = (GM m L/(4 T))^{1/3}, where the rod tension equals T', async () => {
    const [gm, L, m, T] = [1e21, 2, 80, 3];
    const { body } = await tides({ body: { gm }, r: 1e6, length: L, mass: m, limit: { tension: { value: T, unit: 'kN' } } });
    const rl = d(gm).times(m).times(L).div(d(T).times(4000)).cbrt();
    expect(relErr(body.survival_radius.value, rl)).toBeLessThan(1e-14);
    const at = await tides({ body: { gm }, r: body.survival_radius.value, length: L, mass: m });
    expect(rel(at.body.rod_tension.value, T * 1000)).toBeLessThan(1e-13);
  });

  it('a limit reached only inside the horizon: outside_horizon false and a negative proper_time_to_horizon', async () => {
    // 4e6 solar masses: 2 m reach 1 m/s^2 only at (2GM L)^{1/3} = 1.6e9 m < r_s = 1.18e10 m
    const { body } = await tides({ body: { mass: { value: 4e6, unit: 'solMass' } }, r: { value: 10, unit: 'rs' }, length: 2, limit: { acceleration: 1 } });
    expect(body.outside_horizon).toBe(false);
    expect(body.proper_time_to_horizon.value).toBeLessThan(0);
    expect(body.proper_time_to_singularity.value).toBeGreaterThan(0);
  });

  it('a spinning hole: the Schwarzschild form is flagged, spin_axis holds -2 Re Psi_2 on the axis (Teukolsky 1973) at 40 digits, horizon r+ (BPT72), no proper times', async () => {
    const a = 0.9;
    const { status, body } = await tides({ body: { gm: 1e21, spin: a }, r: { value: 3, unit: 'rg' }, length: 2, limit: { acceleration: 1e3 } });
    expect(status).toBe(200);
    expect(body.model).toBe('kerr');
    expect(codes(body)).toContain('schwarzschild-form-for-spin');
    const rg = d(1e21).div(c2);
    const r = rg.times(3);
    const A = rg.times(a);
    const axis = d(1e21).times(2).times(r).times(r.pow(2).minus(A.pow(2).times(3))).div(r.pow(2).plus(A.pow(2)).pow(3));
    expect(relErr(body.spin_axis.radial_stretch.value, axis.times(2))).toBeLessThan(1e-13);
    expect(relErr(body.spin_axis.lateral_compression.value, axis)).toBeLessThan(1e-13);
    expect(relErr(body.radial_stretch.value, ref.kr(d(1e21), r).times(2))).toBeLessThan(1e-13);
    expect(relErr(body.horizon.rg, new D(1).plus(new D(1).minus(d(a).pow(2)).sqrt()))).toBeLessThan(1e-14);
    expect(body.proper_time_to_singularity).toBeUndefined();
    expect(body.outside_horizon).toBe(true);
  });

  it('warnings: inside the horizon, an object not small compared with r, a limit not reached above a preset surface', async () => {
    const inside = await tides({ body: { gm: 1e20 }, r: { value: 1, unit: 'rg' }, length: 1 });
    expect(inside.status).toBe(200);
    expect(codes(inside.body)).toContain('inside-horizon');
    const big = await tides({ body: { gm: 1e20 }, r: 100, length: 2 });
    expect(codes(big.body)).toContain('object-not-small');
    expect(codes(inside.body)).not.toContain('object-not-small');
    const sun = await tides({ body: { preset: 'sun' }, r: { value: 1, unit: 'AU' }, length: 2, limit: { acceleration: 1 } });
    expect(sun.body.above_surface).toBe(false);
    expect(codes(sun.body)).toContain('limit-not-reached-above-surface');
    expect(sun.body.outside_horizon).toBeUndefined();
  });

  it('a batch answers in order, with a 422 in the slot of a point inside the Earth', async () => {
    const { status, body } = await tides({
      items: [
        { body: { mass: { value: 10, unit: 'solMass' } }, r: { value: 1, unit: 'rs' }, length: 2 },
        { body: { preset: 'earth' }, r: { value: 6000, unit: 'km' }, length: 1 },
        { body: { preset: 'earth' }, r: { value: 7000, unit: 'km' }, length: 1 },
      ],
    });
    expect(status).toBe(200);
    expect(body.count).toBe(3);
    expect(body.items[0].radial_stretch.value).toBeGreaterThan(1e8);
    expect(body.items[1].error.status).toBe(422);
    expect(body.items[1].error.errors[0].pointer).toBe('/items/1/r');
    expect(body.items[1].error.detail).toMatch(new RegExp(`allowed: r > ${R_EARTH} m`)); // IERS 2010 equatorial radius
    expect(relErr(body.items[2].tidal_rates.radial.value, ref.kr(d(GM_EARTH), d(7e6)))).toBeLessThan(1e-14);
  });

  it('linear uncertainty equals the closed-form propagation (stretch ~ GM L r^-3, survival radius ~ (GM L/a)^{1/3}, tau ~ (L/a)^{1/2}, tau_h = tau - 4GM/(3c^3))', async () => {
    const [gm, r, L, m, a] = [1.3e21, 5e6, 2, 70, 98];
    const [sg, sr, sL, sm, sa] = [6.5e19, 5e4, 0.02, 3.5, 2];
    const { body } = await tides({
      body: { gm: { value: gm, uncertainty: sg } },
      r: { value: r, uncertainty: sr },
      length: { value: L, uncertainty: sL },
      mass: { value: m, uncertainty: sm },
      limit: { acceleration: { value: a, uncertainty: sa } },
    });
    const stretchRel = Math.hypot(sg / gm, 3 * (sr / r), sL / L);
    expect(rel(body.radial_stretch.uncertainty / body.radial_stretch.value, stretchRel)).toBeLessThan(1e-7);
    expect(rel(body.lateral_compression.uncertainty / body.lateral_compression.value, stretchRel)).toBeLessThan(1e-7);
    expect(rel(body.rod_tension.uncertainty / body.rod_tension.value, Math.hypot(stretchRel, sm / m))).toBeLessThan(1e-7);
    expect(rel(body.survival_radius.uncertainty / body.survival_radius.value, Math.hypot(sg / gm, sL / L, sa / a) / 3)).toBeLessThan(1e-7);
    const tauRel = Math.hypot(sL / L, sa / a) / 2;
    const sTau = body.proper_time_to_singularity.value * tauRel;
    expect(rel(body.proper_time_to_singularity.uncertainty, sTau)).toBeLessThan(1e-7);
    expect(rel(body.proper_time_to_horizon.uncertainty, Math.hypot(sTau, (4 * sg) / (3 * C ** 3)))).toBeLessThan(1e-7);
  });

  it('Monte Carlo: the same seed gives byte-identical replies, ordered percentiles, a spread within 10 % of the linear one', async () => {
    const base = { body: { gm: { value: 1.3e21, uncertainty: 1e19 } }, r: { value: 5e6, uncertainty: 1e5 }, length: 2, limit: { acceleration: { value: 98, uncertainty: 3 } } };
    const req = { ...base, uncertainty_method: { kind: 'monte-carlo', samples: 3000, seed: 7 } };
    const a = await tides(req);
    const b = await tides(req);
    expect(a.status).toBe(200);
    expect(a.raw).toBe(b.raw);
    const s = a.body.radial_stretch;
    expect(s.p16).toBeLessThan(s.p50);
    expect(s.p50).toBeLessThan(s.p84);
    const lin = await tides(base);
    expect(rel(s.uncertainty, lin.body.radial_stretch.uncertainty)).toBeLessThan(0.1);
    expect(rel(a.body.survival_radius.uncertainty, lin.body.survival_radius.uncertainty)).toBeLessThan(0.1);
    const other = await tides({ ...base, uncertainty_method: { kind: 'monte-carlo', samples: 3000, seed: 8 } });
    expect(other.raw).not.toBe(a.raw);
  });

  it('400s name the field', async () => {
    const ok = { body: { gm: 1e20 }, r: 1e6, length: 2 };
    const cases: Array<[unknown, string, RegExp]> = [
      [{ ...ok, limit: { tension: 5 } }, '/mass', /required with limit.tension/],
      [{ ...ok, limit: { acceleration: { value: 1, unit: 'N' } } }, '/limit/acceleration/unit', /not an acceleration unit/],
      [{ ...ok, mass: 1, limit: { tension: { value: 1, unit: 'm.s-2' } } }, '/limit/tension/unit', /not a force unit/],
      [{ ...ok, length: { value: 2, unit: 'rg' } }, '/length/unit', /body-relative/],
      [{ ...ok, r: { value: 1, unit: 's' } }, '/r/unit', /not a length/],
      [{ ...ok, body: { preset: 'sun', spin: 0.3 } }, '/body/spin', /preset/],
      [{ ...ok, limit: {} }, '/limit/acceleration', /required/],
      [{ ...ok, width: -1 }, '/width', /.+/],
      [{ body: { gm: 1e20 }, r: 1e6 }, '/length', /required/],
    ];
    await expectFieldErrors(tides, cases, { problemJson: true });
  });

  it('422 states the allowed domain: a point inside the Sun', async () => {
    const { status, body } = await tides({ body: { preset: 'sun' }, r: { value: 0.5, unit: 'solRad' }, length: 1 });
    expect(status).toBe(422);
    expect(body.errors[0].pointer).toBe('/r');
    expect(body.detail).toMatch(new RegExp(`allowed: r > ${R_SUN} m`)); // IAU 2015 B3 nominal radius
  });
});

// ---------------------------------------------------------------------------

describe('POST /v1/tides/disruption', () => {
  const SUNLIKE = { mass: { value: 1, unit: 'solMass' }, radius: { value: 1, unit: 'solRad' } };

  it('a sun-like star and 1e6 solar masses: r_t = 47 GM/c^2 (common practice: r_t/r_g = 47 M6^{-2/3}) within 1 %, closed forms at 40 digits (Rees 1988)', async () => {
    const { status, body } = await disruption({ body: { mass: { value: 1e6, unit: 'solMass' } }, star: SUNLIKE });
    expect(status).toBe(200);
    const gm = d(GM_SUN).times(1e6);
    const rt = ref.rt(new D(1), d(R_SUN), gm, d(GM_SUN));
    expect(relErr(body.tidal_radius.value, rt)).toBeLessThan(1e-14);
    expect(rel(body.tidal_radius.rg, 47)).toBeLessThan(0.01);
    expect(relErr(val(body.tidal_radius_over_horizon), rt.div(gm.times(2).div(c2)))).toBeLessThan(1e-14);
    expect(body.disrupted_outside_horizon).toBe(true);
    expect(body.disrupted_outside_marginally_bound).toEqual({ prograde: true, retrograde: true });
    expect(body.marginally_bound.prograde.rg).toBe(4); // BPT72 eq. 2.19 at a = 0
    expect(relErr(val(body.mass_ratio), new D(1e6))).toBeLessThan(1e-14);
    // Sun's mean density 1408 kg/m^3 (NASA Sun fact sheet; from memory) within 0.2 %
    expect(rel(body.star_density.value, 1408)).toBeLessThan(2e-3);
    expect(body.model).toBe('schwarzschild');
    expect(body.references.join(' ')).toMatch(/Rees 1988/);
    expect(body.references.join(' ')).toMatch(/Hills 1975/);
    expect(codes(body)).toContain('newtonian-in-strong-field'); // 47 GM/c^2 < 100
  });

  it('Hills 1975: of order 1e8 solar masses for a solar-type star (within a factor 3: eta and the criterion vary by order unity between authors, M_H ~ eta^{3/2}); (R* c^2/2)^{3/2}/sqrt(GM*) at 40 digits', async () => {
    const { body } = await disruption({ body: { mass: { value: 1e6, unit: 'solMass' } }, star: SUNLIKE });
    const gmH = ref.hills(new D(1), d(R_SUN), d(GM_SUN), new D(2));
    expect(relErr(body.hills_mass.value, gmH.div(d(G)))).toBeLessThan(1e-14);
    expect(body.hills_mass.unit).toBe('kg');
    expect(relErr(body.hills_mass.solar_masses, gmH.div(d(GM_SUN)))).toBeLessThan(1e-14);
    expect(body.hills_mass.solar_masses / 1e8).toBeGreaterThan(1 / 3);
    expect(body.hills_mass.solar_masses / 1e8).toBeLessThan(3);
    // with the capture radius r_mb = 4 GM/c^2: (2/4)^{3/2} of it
    expect(rel(body.hills_mass_marginally_bound.prograde.solar_masses, body.hills_mass.solar_masses / Math.sqrt(8))).toBeLessThan(1e-14);
  });

  it('a hole above the Hills mass swallows the star whole: disrupted_outside_horizon false, flagged', async () => {
    const { body } = await disruption({ body: { mass: { value: 3e8, unit: 'solMass' } }, star: SUNLIKE });
    expect(body.disrupted_outside_horizon).toBe(false);
    expect(val(body.tidal_radius_over_horizon)).toBeLessThan(1);
    expect(codes(body)).toContain('swallowed-whole');
  });

  it('a spinning hole: horizon r+ and r_mb = 2 -+ a + 2 sqrt(1 -+ a) (BPT72 eqs. 2.19), Hills masses with x = r+ and x = r_mb at 40 digits; Kesden 2012 (~7e8 at maximal spin) within a factor 3', async () => {
    const a = 0.998;
    const { body } = await disruption({ body: { mass: { value: 2e8, unit: 'solMass' }, spin: a }, star: SUNLIKE, factor: 1 });
    expect(body.model).toBe('kerr');
    const one = new D(1);
    const xh = one.plus(one.minus(d(a).pow(2)).sqrt());
    const xPro = new D(2).minus(d(a)).plus(one.minus(d(a)).sqrt().times(2));
    const xRetro = new D(2).plus(d(a)).plus(one.plus(d(a)).sqrt().times(2));
    expect(relErr(body.horizon.rg, xh)).toBeLessThan(1e-13);
    expect(relErr(body.marginally_bound.prograde.rg, xPro)).toBeLessThan(1e-13);
    expect(relErr(body.marginally_bound.retrograde.rg, xRetro)).toBeLessThan(1e-13);
    expect(relErr(body.hills_mass.solar_masses, ref.hills(one, d(R_SUN), d(GM_SUN), xh).div(d(GM_SUN)))).toBeLessThan(1e-13);
    expect(relErr(body.hills_mass_marginally_bound.prograde.solar_masses, ref.hills(one, d(R_SUN), d(GM_SUN), xPro).div(d(GM_SUN)))).toBeLessThan(1e-13);
    expect(relErr(body.hills_mass_marginally_bound.retrograde.solar_masses, ref.hills(one, d(R_SUN), d(GM_SUN), xRetro).div(d(GM_SUN)))).toBeLessThan(1e-13);
    const kesden = body.hills_mass_marginally_bound.prograde.solar_masses / 7e8;
    expect(kesden).toBeGreaterThan(1 / 3);
    expect(kesden).toBeLessThan(3);
    // 2e8 solar masses: outside the prograde capture radius, inside the retrograde one
    expect(body.disrupted_outside_marginally_bound).toEqual({ prograde: true, retrograde: false });
  });

  it('Earth and a Moon-like satellite (3344 kg/m^3, from memory): Roche limits rigid 9,492 km and fluid 18,381 km (Wikipedia "Roche limit" table, coefficient 2.44; from memory) within 1 %; 40-digit closed forms', async () => {
    const { status, body } = await disruption({ body: { preset: 'earth' }, star: SUNLIKE, satellite: { density: { value: 3.344, unit: 'g/cm3' } } });
    expect(status).toBe(200);
    const rl = body.roche_limit;
    expect(rel(rl.rigid.value, 9.492e6)).toBeLessThan(0.01);
    expect(rel(rl.fluid.value, 1.8381e7)).toBeLessThan(0.01);
    expect(relErr(rl.rigid.value, ref.roche(new D(2).cbrt(), d(GM_EARTH), new D(3344)))).toBeLessThan(1e-14);
    expect(relErr(rl.fluid.value, ref.roche(new D('2.455'), d(GM_EARTH), new D(3344)))).toBeLessThan(1e-14);
    expect(rl.fluid_coefficient).toBe(2.455); // Darwin 1906; Chandrasekhar 1969
    expect(Math.abs(rl.rigid_coefficient - 1.26)).toBeLessThan(1e-3);
    expect(rl.above_surface).toEqual({ rigid: true, fluid: true });
    // the Earth's mean density with its IERS equatorial radius: 3GM/(4 pi G R^3)
    expect(relErr(body.primary.density.value, d(GM_EARTH).div(d(G)).times(3).div(PI.times(4).times(d(R_EARTH).pow(3))))).toBeLessThan(1e-14);
    expect(body.primary.radius.value).toBe(R_EARTH);
    expect(body.model).toBe('weak-field');
    expect(codes(body)).toContain('not-a-black-hole');
    expect(body.references.join(' ')).toMatch(/Darwin 1906/);
  });

  it('primary_radius gives the density of a body given by gm, and whether r_t and the Roche limits lie above its surface', async () => {
    const { body } = await disruption({ body: { gm: 1.2668653e17 }, primary_radius: { value: 71492, unit: 'km' }, star: { mass: { value: 0.08, unit: 'solMass' }, radius: { value: 0.1, unit: 'solRad' } }, satellite: { density: 500 } });
    expect(relErr(body.primary.density.value, d(1.2668653e17).div(d(G)).times(3).div(PI.times(4).times(d(7.1492e7).pow(3))))).toBeLessThan(1e-14);
    expect(typeof body.primary.disrupted_above_surface).toBe('boolean');
    expect(body.roche_limit.above_surface.fluid).toBe(true); // 2.455 (rho_J/500)^{1/3} R_J > R_J
    expect(body.roche_limit.outside_horizon).toBeUndefined();
  });

  it('a batch answers in order, with a 422 in the slot of a star inside its own Schwarzschild radius', async () => {
    const { status, body } = await disruption({
      items: [
        { body: { mass: { value: 1e6, unit: 'solMass' } }, star: SUNLIKE },
        { body: { mass: { value: 1e6, unit: 'solMass' } }, star: { mass: { value: 1, unit: 'solMass' }, radius: { value: 2, unit: 'km' } } },
        { body: { gm: 1e20 }, primary_radius: 10, star: SUNLIKE },
      ],
    });
    expect(status).toBe(200);
    expect(body.count).toBe(3);
    expect(rel(body.items[0].tidal_radius.rg, 47)).toBeLessThan(0.01);
    expect(body.items[1].error.status).toBe(422);
    expect(body.items[1].error.errors[0].pointer).toBe('/items/1/star/radius');
    expect(body.items[1].error.detail).toMatch(/allowed: star radius > 2GM\*\/c\^2 = 2953\.\d+ m/); // 2 GM_sun/c^2 = 2953.25 m
    expect(body.items[2].error.status).toBe(422);
    expect(body.items[2].error.errors[0].pointer).toBe('/items/2/primary_radius');
  });

  it('linear uncertainty equals the closed-form propagation: r_t ~ eta R* GM^{1/3} GM*^{-1/3}, M_H ~ (eta R*)^{3/2} GM*^{-1/2}, d ~ (GM/rho)^{1/3}', async () => {
    const [gm, gms, R, eta, rho] = [4e6 * GM_SUN, GM_SUN, R_SUN, 1, 2000];
    const [sg, sgs, sR, sEta, sRho] = [0.05 * gm, 0.1, 0.03 * R_SUN, 0.2, 100];
    const { body } = await disruption({
      body: { gm: { value: gm, uncertainty: sg } },
      star: { mass: { value: 1, unit: 'solMass', uncertainty: sgs }, radius: { value: R, uncertainty: sR } },
      factor: { value: eta, uncertainty: sEta },
      satellite: { density: { value: rho, uncertainty: sRho } },
    });
    const rtRel = Math.hypot(sEta / eta, sR / R, sg / gm / 3, sgs / 3);
    expect(rel(body.tidal_radius.uncertainty / body.tidal_radius.value, rtRel)).toBeLessThan(1e-7);
    const hRel = Math.hypot(1.5 * (sEta / eta), 1.5 * (sR / R), 0.5 * sgs);
    expect(rel(body.hills_mass.uncertainty / body.hills_mass.value, hRel)).toBeLessThan(1e-7);
    expect(rel(body.roche_limit.fluid.uncertainty / body.roche_limit.fluid.value, Math.hypot(sg / gm, sRho / rho) / 3)).toBeLessThan(1e-7);
    // r_t/r_h ~ GM^{-2/3}
    expect(rel(sig(body.tidal_radius_over_horizon) / val(body.tidal_radius_over_horizon), Math.hypot(sEta / eta, sR / R, (2 * sg) / gm / 3, sgs / 3))).toBeLessThan(1e-7);
    void gms;
  });

  it('Monte Carlo: the same seed gives byte-identical replies with ordered percentiles', async () => {
    const req = {
      body: { mass: { value: 5e6, unit: 'solMass', uncertainty: 5e5 }, spin: { value: 0.5, uncertainty: 0.1 } },
      star: { mass: { value: 1, unit: 'solMass', uncertainty: 0.1 }, radius: { value: 1, unit: 'solRad', uncertainty: 0.05 } },
      uncertainty_method: { kind: 'monte-carlo', samples: 2000, seed: 4 },
    };
    const a = await disruption(req);
    const b = await disruption(req);
    expect(a.status).toBe(200);
    expect(a.raw).toBe(b.raw);
    const h = a.body.hills_mass;
    expect(h.p16).toBeLessThan(h.p50);
    expect(h.p50).toBeLessThan(h.p84);
  });

  it('400s name the field', async () => {
    const ok = { body: { gm: 1e26 }, star: SUNLIKE };
    const cases: Array<[unknown, string, RegExp]> = [
      [{ ...ok, star: { mass: 2e30, radius: { value: 1, unit: 'rg' } } }, '/star/radius/unit', /body-relative/],
      [{ ...ok, star: { mass: { value: 1, unit: 'm' }, radius: 7e8 } }, '/star/mass/unit', /not a mass/],
      [{ ...ok, satellite: { density: { value: 1, unit: 'kg' } } }, '/satellite/density/unit', /not a density unit/],
      [{ ...ok, factor: 0 }, '/factor', /.+/],
      [{ ...ok, body: { preset: 'earth' }, primary_radius: 1e6 }, '/primary_radius', /preset/],
      [{ ...ok, body: { preset: 'sun', spin: 0.1 } }, '/body/spin', /preset/],
      [{ body: { gm: 1e26 } }, '/star', /required/],
    ];
    await expectFieldErrors(disruption, cases);
  });

  it('422 states the allowed domain: a primary smaller than its own horizon', async () => {
    const { status, body } = await disruption({ body: { mass: { value: 1, unit: 'solMass' } }, primary_radius: { value: 1, unit: 'km' }, star: SUNLIKE });
    expect(status).toBe(422);
    expect(body.errors[0].pointer).toBe('/primary_radius');
    expect(body.detail).toMatch(/allowed: primary_radius > r\+ = 2953\.\d+ m/);
  });
});
