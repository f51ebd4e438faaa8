/**
 * POST /v1/orbits/circular and POST /v1/orbits/circular/inversion through the HTTP API, against
 * published values (Bardeen, Press & Teukolsky 1972), common-practice numbers (the ~2.2 kHz
 * (M_sun/M) Schwarzschild ISCO frequency of kilohertz-QPO work; Kepler's third law, which the
 * Schwarzschild coordinate angular velocity obeys exactly), decimal.js references written from the
 * printed formulas (BPT72; Okazaki, Kato & Fukue 1987; Kato 1990; Stella & Vietri 1998) with the
 * nominal solar GM (IAU 2015 Resolution B3) and the IERS Conventions 2010 GM of the Earth, and
 * round trips forward -> inversion for every measured quantity.
 */
import { describe, expect, it } from 'vitest';
import { routeTestApp } from '../support/app.js';
import { reference } from '../support/reference.js';

const { D, exact, relErr } = reference(80);
type Dec = InstanceType<typeof D>;
const { post } = routeTestApp();
const forward = (p: unknown) => post('/v1/orbits/circular', p);
const inversion = (p: unknown) => post('/v1/orbits/circular/inversion', p);

type Num = number | { value: number; uncertainty?: number; p16?: number; p50?: number; p84?: number };
const val = (x: Num): number => (typeof x === 'number' ? x : x.value);
const sig = (x: Num): number => (typeof x === 'number' ? 0 : (x.uncertainty ?? 0));
const codes = (body: { warnings?: Array<{ code: string }> }) => (body.warnings ?? []).map((w) => w.code);

// Published constants (sources beside each).
const C = new D(299792458); // m/s, exact (SI)
const GM_SUN = new D('1.3271244e20'); // m^3 s^-2, IAU 2015 Resolution B3 (nominal)
const GM_EARTH = new D('3.986004418e14'); // m^3 s^-2, IERS Conventions 2010, Table 1.1
const G = new D('6.67430e-11'); // m^3 kg^-1 s^-2, CODATA 2018
const TWO_PI = D.acos(-1).times(2);

/** Decimal references in geometric units (r in rg, signed spin a), from the printed formulas. */
const ref = {
  /** Omega = 1/(r^(3/2) + a) (BPT72 eq. 2.16). */
  omega: (r: Dec, a: Dec) => new D(1).div(r.pow(1.5).plus(a)),
  /** Omega_r^2/Omega^2 (OKF87). */
  fr: (r: Dec, a: Dec) => new D(1).minus(new D(6).div(r)).plus(a.times(8).div(r.pow(1.5))).minus(a.pow(2).times(3).div(r.pow(2))),
  /** Omega_theta^2/Omega^2 (Kato 1990). */
  ft: (r: Dec, a: Dec) => new D(1).minus(a.times(4).div(r.pow(1.5))).plus(a.pow(2).times(3).div(r.pow(2))),
  /** Angular frequency of each measured kind (SV98 for the precessions), c^3/(GM). */
  kind(kind: string, r: Dec, a: Dec): Dec {
    const w = ref.omega(r, a);
    switch (kind) {
      case 'orbital':
        return w;
      case 'radial_epicyclic':
        return w.times(ref.fr(r, a).sqrt());
      case 'vertical_epicyclic':
        return w.times(ref.ft(r, a).sqrt());
      case 'periastron_precession':
        return w.minus(w.times(ref.fr(r, a).sqrt()));
      default:
        return w.minus(w.times(ref.ft(r, a).sqrt())).abs();
    }
  },
  /** Frequency in Hz of a kind: w c^3/(2 pi GM). */
  hz: (kind: string, r: Dec, a: Dec, gm: Dec) => ref.kind(kind, r, a).times(C.pow(3)).div(TWO_PI.times(gm)),
  /** E, L from BPT72 eqs. 2.12 and 2.13. */
  energy: (r: Dec, a: Dec) => r.pow(1.5).minus(r.sqrt().times(2)).plus(a).div(r.pow(0.75).times(r.pow(1.5).minus(r.sqrt().times(3)).plus(a.times(2)).sqrt())),
  angularMomentum: (r: Dec, a: Dec) => r.pow(2).minus(a.times(2).times(r.sqrt())).plus(a.pow(2)).div(r.pow(0.75).times(r.pow(1.5).minus(r.sqrt().times(3)).plus(a.times(2)).sqrt())),
  /** dtau/dt = r^(3/4) sqrt(r^(3/2) - 3 r^(1/2) + 2a)/(r^(3/2) + a) (BPT72 §II). */
  dtauDt: (r: Dec, a: Dec) => r.pow(0.75).times(r.pow(1.5).minus(r.sqrt().times(3)).plus(a.times(2)).sqrt()).div(r.pow(1.5).plus(a)),
  /** LNRF speed (Omega - omega) A/(r^2 sqrt Delta), omega = 2ar/A (Bardeen 1970; BPT72 §III), units of c. */
  speed(r: Dec, a: Dec): Dec {
    const delta = r.pow(2).minus(r.times(2)).plus(a.pow(2));
    const A = r.pow(2).plus(a.pow(2)).pow(2).minus(a.pow(2).times(delta));
    return ref.omega(r, a).minus(a.times(2).times(r).div(A)).times(A).div(r.pow(2).times(delta.sqrt()));
  },
};

const HZ_FIELDS: Array<[string, string]> = [
  ['frequency', 'orbital'],
  ['radial_epicyclic_frequency', 'radial_epicyclic'],
  ['vertical_epicyclic_frequency', 'vertical_epicyclic'],
  ['periastron_precession_frequency', 'periastron_precession'],
];

// ---------------------------------------------------------------------------

describe('POST /v1/orbits/circular: published and common-practice values', () => {
  it('common practice: the Schwarzschild ISCO orbital frequency is c^3/(2 pi 6^(3/2) GM_sun) = 2198.6 Hz x (M_sun/M), "about 2.2 kHz"', async () => {
    const { status, body } = await forward({ body: { mass: { value: 1, unit: 'solMass' } }, r: 'isco' });
    expect(status).toBe(200);
    expect(body.model).toBe('schwarzschild');
    const want = C.pow(3).div(TWO_PI.times(new D(6).pow(1.5)).times(GM_SUN)); // 2198.587... Hz (decimal, nominal GM_sun)
    expect(body.frequency.unit).toBe('Hz');
    expect(relErr(body.frequency.value, want)).toBeLessThan(1e-14);
    expect(Math.abs(body.frequency.value - 2198.6)).toBeLessThan(0.05); // the figure quoted to 0.1 Hz
    expect(Math.abs(body.frequency.value / 2200 - 1)).toBeLessThan(0.01); // "2.2 kHz", loosely
    expect(body.r.rg).toBe(6);
    // 1/M scaling: 10 solar masses -> 219.86 Hz.
    const ten = await forward({ body: { mass: { value: 10, unit: 'solMass' } }, r: 'isco' });
    expect(relErr(ten.body.frequency.value, want.div(10))).toBeLessThan(1e-14);
  });

  it('BPT72: at the Schwarzschild ISCO E = sqrt(8/9) (c^2) and L = 2 sqrt(3) (GM/c); radial epicyclic 0, vertical = orbital, no nodal precession', async () => {
    const { body } = await forward({ body: { gm: 1e20 }, r: { value: 6, unit: 'rg' } });
    expect(relErr(val(body.energy), new D(8).div(9).sqrt())).toBeLessThan(1e-15);
    expect(relErr(val(body.angular_momentum), new D(12).sqrt())).toBeLessThan(1e-15);
    expect(relErr(val(body.binding_energy), new D(1).minus(new D(8).div(9).sqrt()))).toBeLessThan(1e-14);
    // L in SI: L GM/c = 2 sqrt(3) x 1e20/c m^2/s.
    expect(relErr(body.angular_momentum_si.value, new D(12).sqrt().times(1e20).div(C))).toBeLessThan(1e-15);
    expect(body.radial_epicyclic_frequency.value).toBe(0);
    expect(body.vertical_epicyclic_frequency.value).toBe(body.frequency.value);
    expect(body.nodal_precession_frequency.value).toBe(0);
    expect(body.stable).toBe(true);
    expect(body.bound).toBe(true);
    // Schwarzschild: speed relative to static observers 1/sqrt(r - 2) = 1/2 (common practice).
    expect(relErr(val(body.beta_local), new D(0.5))).toBeLessThan(1e-15);
    expect(relErr(body.speed_local.value, C.div(2))).toBeLessThan(1e-15);
  });

  it.each([
    [0.5, 'prograde'],
    [0.9, 'prograde'],
    [0.99, 'prograde'],
    [0.7, 'retrograde'],
    [-0.3, 'prograde'],
  ])('the radial epicyclic frequency vanishes at the ISCO (BPT72 eq. 2.20; OKF87), spin %s %s; periastron = orbital there', async (spin, direction) => {
    const { status, body } = await forward({ body: { mass: { value: 10, unit: 'solMass' }, spin }, r: 'isco', direction });
    expect(status).toBe(200);
    expect(body.model).toBe('kerr');
    expect(body.radial_epicyclic_frequency.value).toBe(0);
    expect(Math.abs(body.periastron_precession_frequency.value / body.frequency.value - 1)).toBeLessThan(8e-16); // 4 ulp
    expect(body.r.rg).toBe(body.isco.rg);
    expect(body.stable).toBe(true);
  });

  it('Kepler (common practice): around the Earth (IERS 2010 GM) the coordinate period at r = 7000 km is 2 pi sqrt(r^3/GM) exactly (Schwarzschild Omega^2 = GM/r^3)', async () => {
    const { status, body } = await forward({ body: { preset: 'earth' }, r: { value: 7000, unit: 'km' } });
    expect(status).toBe(200);
    const kepler = TWO_PI.times(new D(7e6).pow(3).div(GM_EARTH).sqrt());
    expect(relErr(body.period_coordinate.value, kepler)).toBeLessThan(1e-14);
    // Proper period shorter by dtau/dt = sqrt(1 - 3GM/(r c^2)) (BPT72, a = 0): ~1e-9 fractionally.
    const rg = GM_EARTH.div(C.pow(2));
    const r = new D(7e6).div(rg);
    expect(relErr(body.period_proper.value, kepler.times(ref.dtauDt(r, new D(0))))).toBeLessThan(1e-14);
    expect(codes(body)).toContain('point-mass-exterior');
    expect(codes(body)).not.toContain('below-reference-surface');
    const inside = await forward({ body: { preset: 'earth' }, r: { value: 6000, unit: 'km' } });
    expect(codes(inside.body)).toContain('below-reference-surface');
  });

  it('decimal references (80 digits) for every field, both directions, spins up to +-0.9999', async () => {
    const gm = new D('1.9e21'); // an invented 14.3-solar-mass hole
    for (const [spin, direction, r] of [
      [0.9999, 'prograde', 1.2],
      [0.9999, 'retrograde', 9.5],
      [-0.9999, 'prograde', 12],
      [0.6, 'prograde', 4],
      [0.6, 'retrograde', 20],
      [0.3, 'prograde', 150],
    ] as Array<[number, string, number]>) {
      const { status, body } = await forward({ body: { gm: gm.toNumber(), spin }, r: { value: r, unit: 'rg' }, direction });
      expect(status).toBe(200);
      const a = exact((direction === 'prograde' ? 1 : -1) * spin);
      const R = exact(r);
      const tg = gm.div(C.pow(3)); // GM/c^3, s
      for (const [field, kind] of HZ_FIELDS) expect(relErr(body[field].value, ref.hz(kind, R, a, gm)), field).toBeLessThan(1e-13);
      // Nodal: signed (Omega - Omega_theta)/(2 pi), same sign as the signed spin.
      const nod = ref.omega(R, a).minus(ref.omega(R, a).times(ref.ft(R, a).sqrt())).div(TWO_PI.times(tg));
      expect(relErr(body.nodal_precession_frequency.value, nod)).toBeLessThan(1e-12);
      expect(relErr(body.angular_frequency.value, ref.omega(R, a).div(tg))).toBeLessThan(1e-14);
      expect(relErr(body.period_coordinate.value, TWO_PI.times(tg).div(ref.omega(R, a)))).toBeLessThan(1e-14);
      expect(relErr(body.period_proper.value, TWO_PI.times(tg).div(ref.omega(R, a)).times(ref.dtauDt(R, a)))).toBeLessThan(1e-13);
      expect(relErr(val(body.beta_local), ref.speed(R, a))).toBeLessThan(1e-13);
      expect(relErr(val(body.energy), ref.energy(R, a))).toBeLessThan(1e-13);
      expect(relErr(val(body.angular_momentum), ref.angularMomentum(R, a))).toBeLessThan(1e-13);
      expect(body.direction).toBe(direction);
      expect(body.references.join(' ')).toMatch(/Bardeen, Press & Teukolsky 1972.*Okazaki, Kato & Fukue 1987.*Kato 1990.*Stella & Vietri 1998/);
    }
  });

  it('radius units: metres, rg and rs give the same orbit', async () => {
    const gm = 1e20;
    const rgM = gm / 299792458 ** 2;
    const a = await forward({ body: { gm }, r: { value: 10, unit: 'rg' } });
    const b = await forward({ body: { gm }, r: { value: 5, unit: 'rs' } });
    const c = await forward({ body: { gm }, r: 10 * rgM });
    expect(b.body.frequency.value).toBe(a.body.frequency.value);
    expect(Math.abs(c.body.frequency.value / a.body.frequency.value - 1)).toBeLessThan(1e-15);
    expect(a.body.r.rg).toBe(10);
  });

  it('between the photon orbit and the ISCO: unstable, radial epicyclic and periastron omitted, growth rate sqrt(-Omega_r^2) given (decimal), warning', async () => {
    const { status, body } = await forward({ body: { mass: { value: 10, unit: 'solMass' } }, r: { value: 4.5, unit: 'rg' } });
    expect(status).toBe(200);
    expect(body.stable).toBe(false);
    expect(body.bound).toBe(true); // r_mb = 4 < 4.5
    expect(body.radial_epicyclic_frequency).toBeUndefined();
    expect(body.periastron_precession_frequency).toBeUndefined();
    const gm = GM_SUN.times(10);
    const R = new D(4.5);
    const growth = ref.omega(R, new D(0)).times(ref.fr(R, new D(0)).neg().sqrt()).times(C.pow(3)).div(gm);
    expect(body.radial_growth_rate.unit).toBe('s-1');
    expect(relErr(body.radial_growth_rate.value, growth)).toBeLessThan(1e-13);
    expect(codes(body)).toContain('inside-isco');
    expect(codes(body)).not.toContain('unbound');
    // Inside the marginally bound orbit (r_mb = 4): E > 1.
    const unbound = await forward({ body: { gm: 1e20 }, r: { value: 3.5, unit: 'rg' } });
    expect(unbound.body.bound).toBe(false);
    expect(val(unbound.body.energy)).toBeGreaterThan(1);
    expect(val(unbound.body.binding_energy)).toBeLessThan(0);
    expect(codes(unbound.body)).toEqual(expect.arrayContaining(['inside-isco', 'unbound']));
  });
});

describe('POST /v1/orbits/circular: uncertainties', () => {
  it('linear: uncertain GM, spin and r; sigma(nu_phi) from the closed-form derivatives of c^3/(2 pi GM (r^(3/2) + a))', async () => {
    const [gm, sGm, a, sA, r, sR] = [2e20, 4e18, 0.5, 0.02, 7, 0.1];
    const { status, body } = await forward({ body: { gm: { value: gm, uncertainty: sGm }, spin: { value: a, uncertainty: sA } }, r: { value: r, unit: 'rg', uncertainty: sR } });
    expect(status).toBe(200);
    const nu = ref.hz('orbital', new D(r), new D(a), new D(gm));
    const den = new D(r).pow(1.5).plus(a);
    const dGm = nu.div(gm).times(sGm);
    const dA = nu.div(den).times(sA);
    const dR = nu.times(new D(r).sqrt().times(1.5)).div(den).times(sR);
    const expected = dGm.pow(2).plus(dA.pow(2)).plus(dR.pow(2)).sqrt();
    expect(relErr(sig(body.frequency), expected)).toBeLessThan(1e-7);
    // r in metres carries the rg uncertainty times rg and the GM uncertainty: sqrt((r sGm/gm)^2 + (sR rg)^2) rg-units.
    const rgM = new D(gm).div(C.pow(2));
    expect(relErr(body.r.uncertainty, rgM.times(new D(r).times(sGm / gm).pow(2).plus(new D(sR).pow(2)).sqrt()))).toBeLessThan(1e-7);
  });

  it('linear: sigma of the radial epicyclic frequency against a decimal central-difference derivative of the OKF87 formula', async () => {
    const [gm, a, sA, r, sR] = [1e20, 0.3, 0.01, 9, 0.05];
    const { body } = await forward({ body: { gm, spin: { value: a, uncertainty: sA } }, r: { value: r, unit: 'rg', uncertainty: sR } });
    const h = new D('1e-30');
    const f = (rr: Dec, aa: Dec) => ref.hz('radial_epicyclic', rr, aa, new D(gm));
    const dR = f(new D(r).plus(h), new D(a)).minus(f(new D(r).minus(h), new D(a))).div(h.times(2));
    const dA = f(new D(r), new D(a).plus(h)).minus(f(new D(r), new D(a).minus(h))).div(h.times(2));
    const expected = dR.times(sR).pow(2).plus(dA.times(sA).pow(2)).sqrt();
    expect(relErr(sig(body.radial_epicyclic_frequency), expected)).toBeLessThan(1e-7);
    expect(codes(body)).not.toContain('isco-within-uncertainty');
  });

  it('an r uncertainty that reaches across the ISCO is flagged', async () => {
    const { body } = await forward({ body: { gm: 1e20 }, r: { value: 6.05, unit: 'rg', uncertainty: 0.1 } });
    expect(codes(body)).toContain('isco-within-uncertainty');
  });

  it('Monte Carlo: same seed, byte-identical reply; percentiles ordered; SD within 3 % of linear for a small sigma', async () => {
    const req = {
      body: { mass: { value: 8, unit: 'solMass', uncertainty: 0.08 }, spin: { value: 0.4, uncertainty: 0.01 } },
      r: { value: 10, unit: 'rg' },
      uncertainty_method: { kind: 'monte-carlo', samples: 20000, seed: 5 },
    };
    const a = await forward(req);
    const b = await forward(req);
    expect(a.status).toBe(200);
    expect(a.raw).toBe(b.raw);
    for (const k of ['frequency', 'radial_epicyclic_frequency', 'vertical_epicyclic_frequency', 'nodal_precession_frequency']) {
      const m = a.body[k];
      expect(m.p16).toBeLessThan(m.p50);
      expect(m.p50).toBeLessThan(m.p84);
    }
    const lin = await forward({ ...req, uncertainty_method: { kind: 'linear' } });
    // Monte Carlo SE of an SD with n = 20000 is ~0.5 %: allow 3 %.
    expect(Math.abs(sig(a.body.frequency) / sig(lin.body.frequency) - 1)).toBeLessThan(0.03);
    const other = await forward({ ...req, uncertainty_method: { kind: 'monte-carlo', samples: 20000, seed: 6 } });
    expect(other.raw).not.toBe(a.raw);
  });
});

describe('POST /v1/orbits/circular: batches and errors', () => {
  it('a batch answers in order with count; an orbit inside the photon orbit holds a 422 in its slot', async () => {
    const { status, body } = await forward({
      items: [
        { body: { gm: 1e20 }, r: { value: 6, unit: 'rg' } },
        { body: { gm: 1e20, spin: 0.5 }, r: { value: 2, unit: 'rg' } },
        { body: { gm: 1e20, spin: 0.5 }, r: 'isco', direction: 'retrograde' },
      ],
    });
    expect(status).toBe(200);
    expect(body.count).toBe(3);
    expect(relErr(val(body.items[0].energy), new D(8).div(9).sqrt())).toBeLessThan(1e-15);
    expect(body.items[1].error.status).toBe(422);
    expect(body.items[1].error.errors[0].pointer).toBe('/items/1/r');
    expect(body.items[1].error.detail).toMatch(/allowed: r > r_ph = 2\.347\d* GM\/c\^2/);
    expect(body.items[2].radial_epicyclic_frequency.value).toBe(0);
  });

  it('422: at or inside the photon orbit, and the extremal prograde ISCO (which coincides with it)', async () => {
    const inside = await forward({ body: { gm: 1e20 }, r: { value: 3, unit: 'rg' } });
    expect(inside.status).toBe(422);
    expect(inside.headers['content-type']).toMatch(/application\/problem\+json/);
    expect(inside.body.errors[0].pointer).toBe('/r');
    expect(inside.body.detail).toMatch(/allowed: r > r_ph = 3 GM\/c\^2/);
    const extremal = await forward({ body: { gm: 1e20, spin: 1 }, r: 'isco' });
    expect(extremal.status).toBe(422);
    expect(extremal.body.detail).toMatch(/allowed: r > r_ph = 1 GM\/c\^2/);
  });

  it('400s name the field', async () => {
    const cases: Array<[unknown, string]> = [
      [{ body: { gm: 1e20 }, r: { value: 6, unit: 'kg' } }, '/r/unit'],
      [{ body: { gm: 1e20 }, r: -5 }, '/r'],
      [{ body: { gm: 1e20 }, r: 'photon' }, '/r'],
      [{ body: { gm: 1e20, spin: 2 }, r: 'isco' }, '/body/spin'],
      [{ body: { preset: 'sun', spin: 0.1 }, r: 'isco' }, '/body/spin'],
      [{ body: { gm: 1e20 }, r: 'isco', direction: 'sideways' }, '/direction'],
      [{ body: { gm: 1e20 } }, '/r'],
      [{ body: { gm: 1e20, mass: 1e30 }, r: 'isco' }, '/body'],
    ];
    for (const [req, pointer] of cases) {
      const { status, body } = await forward(req);
      expect(status, JSON.stringify(req)).toBe(400);
      expect(body.errors.map((e: { pointer: string }) => e.pointer), JSON.stringify(req)).toContain(pointer);
    }
  });
});

// ---------------------------------------------------------------------------

describe('POST /v1/orbits/circular/inversion: round trips forward -> inversion for every quantity', () => {
  const GM = 2.6e21; // an invented ~19.6-solar-mass hole
  it.each([
    ['orbital', 0.7, 'prograde', 5],
    ['orbital', 0.7, 'retrograde', 3.95],
    ['radial_epicyclic', 0.3, 'prograde', 12],
    ['radial_epicyclic', -0.5, 'prograde', 8],
    ['vertical_epicyclic', 0.5, 'prograde', 6],
    ['vertical_epicyclic', 0.98, 'prograde', 4],
    ['periastron_precession', 0.9, 'prograde', 3],
    ['periastron_precession', 0.2, 'retrograde', 15],
    ['nodal_precession', 0.9, 'prograde', 3],
    ['nodal_precession', 0.6, 'retrograde', 11],
  ] as Array<[string, number, string, number]>)('%s, spin %s %s, r = %s rg', async (kind, spin, direction, r) => {
    const fwd = await forward({ body: { gm: GM, spin }, r: { value: r, unit: 'rg' }, direction });
    expect(fwd.status).toBe(200);
    const field = kind === 'orbital' ? 'frequency' : `${kind}_frequency`;
    const nu = Math.abs(fwd.body[field].value);
    const inv = await inversion({ body: { gm: GM, spin }, frequency: nu, quantity: kind, direction });
    expect(inv.status).toBe(200);
    expect(inv.body.quantity).toBe(kind);
    const rs = inv.body.roots.map((x: { r: { rg: number } }) => x.r.rg);
    expect(rs.some((x: number) => Math.abs(x / r - 1) < 1e-11), `${rs} vs ${r}`).toBe(true);
    expect([...rs].sort((x: number, y: number) => x - y)).toEqual(rs);
    expect(inv.body.references.join(' ')).toMatch(kind === 'orbital' ? /Bardeen/ : /Brent 1973/);
    // Solving for the mass at that radius gives the mass back (closed form GM = c^3 w/(2 pi nu)).
    const mass = await inversion({ body: { spin }, r: { value: r, unit: 'rg' }, frequency: nu, quantity: kind, direction });
    expect(mass.status).toBe(200);
    expect(Math.abs(mass.body.gm.value / GM - 1)).toBeLessThan(1e-13);
    expect(Math.abs(mass.body.r.rg / r - 1)).toBeLessThan(1e-13);
  });

  it('radial epicyclic: two radii (rising and falling sides); branch picks one, roots lists both; decimal check of both', async () => {
    const gm = new D(GM);
    const nu = ref.hz('radial_epicyclic', new D(12), new D(0.3), gm); // on the falling side (peak near r = 6.7)
    const outer = await inversion({ body: { gm: GM, spin: 0.3 }, frequency: nu.toNumber(), quantity: 'radial_epicyclic' });
    expect(outer.status).toBe(200);
    expect(outer.body.roots.length).toBe(2);
    expect(outer.body.branch).toBe('outer');
    expect(outer.body.r.rg).toBe(outer.body.roots[1].r.rg);
    expect(codes(outer.body)).toContain('two-radii');
    for (const root of outer.body.roots) expect(relErr(nu.toNumber(), ref.hz('radial_epicyclic', exact(root.r.rg), new D(0.3), gm))).toBeLessThan(1e-12);
    const inner = await inversion({ body: { gm: GM, spin: 0.3 }, frequency: nu.toNumber(), quantity: 'radial_epicyclic', branch: 'inner' });
    expect(inner.body.branch).toBe('inner');
    expect(inner.body.r.rg).toBe(outer.body.roots[0].r.rg);
    expect(inner.body.r.rg).toBeLessThan(6.7);
    expect(inner.body.r.rg).toBeGreaterThan(4.97); // r_isco(0.3) = 4.9786
    // frequency_max: the peak, found independently here by golden-section search on the printed
    // formula (OKF87) in double precision; at a flat maximum the value is accurate to ~1e-15.
    const f = (r: number) => (1 / (r ** 1.5 + 0.3)) * Math.sqrt(1 - 6 / r + (8 * 0.3) / r ** 1.5 - (3 * 0.09) / r ** 2);
    let [lo, hi] = [5, 9];
    const k = (Math.sqrt(5) - 1) / 2;
    for (let i = 0; i < 80; i++) {
      const x1 = hi - k * (hi - lo);
      const x2 = lo + k * (hi - lo);
      if (f(x1) < f(x2)) lo = x1;
      else hi = x2;
    }
    const best = ref.hz('radial_epicyclic', exact((lo + hi) / 2), new D(0.3), gm);
    expect(relErr(outer.body.frequency_max.value, best)).toBeLessThan(1e-12);
  });

  it('a vertical epicyclic frequency below its value at the photon orbit has one radius; branch then draws a note', async () => {
    const { body } = await inversion({ body: { gm: GM, spin: 0.98 }, frequency: 100, quantity: 'vertical_epicyclic', branch: 'inner' });
    expect(body.roots.length).toBe(1);
    expect(body.branch).toBe('single');
    expect(codes(body)).toContain('single-radius');
  });
});

describe('POST /v1/orbits/circular/inversion: the kHz-QPO mass bound (invented source "Kestrel X-1")', () => {
  it('a 1.2 kHz orbital QPO from a stable orbit around a non-rotating star implies M <= c^3/(2 pi 6^(3/2) G nu) = 1.832 M_sun (common practice)', async () => {
    const { status, body } = await inversion({ r: 'isco', frequency: { value: 1.2, unit: 'kHz', uncertainty: 0.005 } });
    expect(status).toBe(200);
    expect(body.upper_bound).toBe(true);
    expect(body.model).toBe('schwarzschild');
    const want = C.pow(3).div(TWO_PI.times(new D(6).pow(1.5)).times(1200)); // GM, m^3 s^-2
    expect(relErr(body.gm.value, want)).toBeLessThan(1e-14);
    expect(relErr(val(body.mass_solar), want.div(GM_SUN))).toBeLessThan(1e-14);
    expect(Math.abs(val(body.mass_solar) - 1.832)).toBeLessThan(5e-4);
    expect(relErr(body.mass.value, want.div(G))).toBeLessThan(1e-14);
    // sigma_M/M = sigma_nu/nu exactly (GM proportional to 1/nu).
    expect(Math.abs(sig(body.mass_solar) / val(body.mass_solar) - 0.005 / 1.2)).toBeLessThan(1e-9);
    expect(body.r.rg).toBeCloseTo(6, 12);
    // With spin the ISCO moves in and the bound grows (BPT72): a = 0.3 prograde.
    const spun = await inversion({ body: { spin: 0.3 }, r: 'isco', frequency: { value: 1.2, unit: 'kHz' } });
    expect(val(spun.body.mass_solar)).toBeGreaterThan(val(body.mass_solar));
    // The radial epicyclic frequency vanishes at the ISCO: no mass there (422 on /r).
    const radial = await inversion({ r: 'isco', frequency: 500, quantity: 'radial_epicyclic' });
    expect(radial.status).toBe(422);
    expect(radial.body.errors[0].pointer).toBe('/r');
  });

  it('linear uncertainty of r solved from the orbital frequency against closed-form derivatives of r = (c^3/(2 pi nu GM) - a)^(2/3)', async () => {
    const [gm, sGm, nu, sNu, a] = [3e20, 6e18, 400, 4, 0.2];
    const { body } = await inversion({ body: { gm: { value: gm, uncertainty: sGm }, spin: a }, frequency: { value: nu, uncertainty: sNu } });
    // r_m = rg x^(2/3), x = c^3/(2 pi nu GM) - a, rg = GM/c^2.
    const g = new D(gm);
    const x = C.pow(3).div(TWO_PI.times(nu).times(g)).minus(a);
    const rg = g.div(C.pow(2));
    const dxdnu = C.pow(3).div(TWO_PI.times(g)).div(new D(nu).pow(2)).neg();
    const dxdgm = C.pow(3).div(TWO_PI.times(nu)).div(g.pow(2)).neg();
    const drdnu = rg.times(x.pow(-1 / 3)).times(2).div(3).times(dxdnu);
    const drdgm = x.pow(2 / 3).div(C.pow(2)).plus(rg.times(x.pow(-1 / 3)).times(2).div(3).times(dxdgm));
    const expected = drdnu.times(sNu).pow(2).plus(drdgm.times(sGm).pow(2)).sqrt();
    expect(relErr(body.r.value, rg.times(x.pow(2 / 3)))).toBeLessThan(1e-14);
    expect(relErr(body.r.uncertainty, expected)).toBeLessThan(1e-7);
  });

  it('Monte Carlo: same seed, byte-identical reply', async () => {
    const req = { body: { mass: { value: 12, unit: 'solMass' }, spin: 0.3 }, frequency: { value: 60, uncertainty: 2 }, quantity: 'radial_epicyclic', uncertainty_method: { kind: 'monte-carlo', samples: 5000, seed: 9 } };
    const a = await inversion(req);
    const b = await inversion(req);
    expect(a.status).toBe(200);
    expect(a.raw).toBe(b.raw);
    expect(a.body.r.p16).toBeLessThan(a.body.r.p84);
  });
});

describe('POST /v1/orbits/circular/inversion: batches and errors', () => {
  it('a batch with a per-item 422 stating the achievable range (the radial epicyclic peak, decimal)', async () => {
    const { status, body } = await inversion({
      items: [
        { body: { mass: { value: 10, unit: 'solMass' } }, frequency: 100 },
        { body: { mass: { value: 10, unit: 'solMass' } }, frequency: 500, quantity: 'radial_epicyclic' },
        { r: { value: 3, unit: 'rs' }, frequency: 220 },
      ],
    });
    expect(status).toBe(200);
    expect(body.count).toBe(3);
    expect(body.items[0].r.rg).toBeGreaterThan(6);
    const err = body.items[1].error;
    expect(err.status).toBe(422);
    expect(err.errors[0].pointer).toBe('/items/1/frequency');
    // Peak of nu_r for a = 0 at r = 8: 8^(-3/2)/2 c^3/(2 pi GM) = 71.4 Hz for 10 M_sun.
    const peak = new D(8).pow(-1.5).div(2).times(C.pow(3)).div(TWO_PI.times(GM_SUN.times(10)));
    const m = /0 < frequency <= ([0-9.e+-]+) Hz/.exec(err.detail);
    expect(m, err.detail).not.toBeNull();
    expect(relErr(Number(m![1]), peak)).toBeLessThan(1e-5); // printed to 6 significant digits
    expect(err.detail).toMatch(/at its peak, at r = 8 GM\/c\^2/);
    expect(body.items[2].r.rg).toBe(6);
  });

  it('422: an orbital frequency above that of the photon orbit; nodal precession around a non-rotating body', async () => {
    const fast = await inversion({ body: { mass: { value: 1, unit: 'solMass' } }, frequency: { value: 7, unit: 'kHz' } });
    expect(fast.status).toBe(422);
    expect(fast.body.errors[0].pointer).toBe('/frequency');
    // Omega(r_ph = 3) = 3^(-3/2) c^3/GM: nu < 3^(-3/2) c^3/(2 pi GM_sun) = 6.22 kHz, not reached.
    const m = /0 < frequency < ([0-9.e+-]+) Hz/.exec(fast.body.detail);
    expect(relErr(Number(m![1]), new D(3).pow(-1.5).times(C.pow(3)).div(TWO_PI.times(GM_SUN)))).toBeLessThan(1e-5);
    expect(fast.body.detail).toMatch(/photon orbit/);
    const nodal = await inversion({ body: { gm: 1e20 }, frequency: 10, quantity: 'nodal_precession' });
    expect(nodal.status).toBe(422);
    expect(nodal.body.errors[0].pointer).toBe('/body/spin');
  });

  it('400s name the field', async () => {
    const cases: Array<[unknown, string]> = [
      [{ body: { gm: 1e20 }, frequency: 100, branch: 'inner' }, '/branch'],
      [{ r: 'isco', frequency: 100, quantity: 'radial_epicyclic', branch: 'outer' }, '/branch'],
      [{ r: { value: 3e4, unit: 'm' }, frequency: 100 }, '/r/unit'],
      [{ r: 30000, frequency: 100 }, '/r'],
      [{ body: { gm: 1e20 }, r: 'isco', frequency: 100 }, '/body/gm'],
      [{ frequency: 100 }, '/body'],
      [{ body: { gm: 1e20 }, frequency: { value: 100, unit: 'km' } }, '/frequency/unit'],
      [{ body: { gm: 1e20 }, frequency: -1 }, '/frequency'],
      [{ body: { gm: 1e20 }, frequency: 100, quantity: 'azimuthal' }, '/quantity'],
      [{ body: { gm: 1e20 } }, '/frequency'],
    ];
    for (const [req, pointer] of cases) {
      const { status, body } = await inversion(req);
      expect(status, JSON.stringify(req)).toBe(400);
      expect(body.errors.map((e: { pointer: string }) => e.pointer), JSON.stringify(req)).toContain(pointer);
    }
  });
});
