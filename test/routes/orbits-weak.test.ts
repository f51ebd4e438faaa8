/**
 * POST /v1/orbits/precession and POST /v1/orbits/gyroscope against published values (Mercury's
 * relativistic perihelion advance; Gravity Probe B's predicted drifts), closed forms evaluated
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
const precession = (p: unknown) => post('/v1/orbits/precession', p);
const gyroscope = (p: unknown) => post('/v1/orbits/gyroscope', p);

type Num = number | { value: number; uncertainty?: number; p16?: number; p50?: number; p84?: number };
const val = (x: Num): number => (typeof x === 'number' ? x : x.value);
const sig = (x: Num): number => (typeof x === 'number' ? 0 : (x.uncertainty ?? 0));
const codes = (body: { warnings?: Array<{ code: string }> }) => (body.warnings ?? []).map((w) => w.code);
const rel = (x: number, ref: number) => Math.abs(x / ref - 1);

// Published constants (sources beside each).
const C = 299792458; // m/s, exact (SI 2019)
const G = 6.6743e-11; // m^3 kg^-1 s^-2, CODATA 2018
const GM_SUN = 1.3271244e20; // m^3 s^-2, IAU 2015 Resolution B3 (nominal)
const R_SUN = 6.957e8; // m, IAU 2015 Resolution B3 (nominal)
const R_EARTH = 6378136.6; // m, IERS Conventions 2010, Table 1.1
const YEAR = 365.25 * 86400; // s, Julian year (IAU)
const MAS = (180 / Math.PI) * 3600e3; // mas per rad

const d = (x: number): Dec => exact(x);
const PI = D.acos(-1);
const c2 = d(C).pow(2);

/** 40-digit references, written independently of physics/ (textbook forms). */
const ref = {
  /** Kepler's third law: P = 2 pi sqrt(a^3/GM). */
  period: (gm: Dec, a: Dec) => PI.times(2).times(a.pow(3).div(gm).sqrt()),
  /** 6 pi GM/(c^2 a (1 - e^2)) (2 + 2 gamma - beta)/3 (Will 2014). */
  advance: (gm: Dec, a: Dec, e: Dec, g: Dec = new D(1), b: Dec = new D(1)) =>
    PI.times(6).times(gm).div(c2.times(a).times(new D(1).minus(e.pow(2)))).times(new D(2).plus(g.times(2)).minus(b).div(3)),
  /** (3/2)(GM)^{3/2}/(c^2 r^{5/2}) (1 + 2 gamma)/3 (de Sitter 1916). */
  geodetic: (gm: Dec, r: Dec, g: Dec = new D(1)) => new D(1.5).times(gm.pow(1.5)).div(c2.times(r.pow(2.5))).times(new D(1).plus(g.times(2)).div(3)),
  /** Orbit normal (sin i sin W, -sin i cos W, cos i) (Murray & Dermott 1999, ch. 2). */
  normal: (i: Dec, w: Dec) => [i.sin().times(w.sin()), i.sin().times(w.cos()).neg(), i.cos()],
  /** (1+gamma)/2 G J/(2 c^2 r^3) [z - 3 cos i L] (Schiff 1960, orbit-averaged). */
  fd: (gjc2: Dec, r: Dec, i: Dec, w: Dec, g: Dec = new D(1)) => {
    const k = new D(1).plus(g).div(2).times(gjc2).div(r.pow(3).times(2));
    const L = ref.normal(i, w);
    const ci = i.cos();
    return [k.times(ci.times(-3).times(L[0])), k.times(ci.times(-3).times(L[1])), k.times(new D(1).minus(ci.times(3).times(L[2])))];
  },
};

// Mercury: a = 0.38709893 AU, e = 0.20563 (J2000 mean elements; from memory).
const MERCURY = { body: { preset: 'sun' }, semi_major_axis: { value: 0.38709893, unit: 'AU' }, eccentricity: 0.20563 };

// Gravity Probe B (Everitt et al. 2011, PRL 106, 221101): a = 7027.4 km (from memory), i = 90.007 deg,
// guide star IM Pegasi at RA 22h 53m 2.27s = 343.2595 deg, Dec +16 deg 50' 28" = 16.8411 deg (from
// memory); the polar orbit's plane contains the guide star (node at the star's right ascension).
const GPB = {
  body: { preset: 'earth' },
  r: { value: 7027.4, unit: 'km' },
  inclination: { value: 90.007, unit: 'deg' },
  ascending_node: { value: 343.2595, unit: 'deg' },
  spin_direction: { right_ascension: { value: 343.2595, unit: 'deg' }, declination: { value: 16.8411, unit: 'deg' } },
};

// ---------------------------------------------------------------------------

describe('POST /v1/orbits/precession', () => {
  it('Mercury: 42.98 arcsec per century (Will 2014, Living Rev. Relativ. 17, 4; Nobili & Will 1986) within 0.05, with the IAU 2015 nominal solar GM', async () => {
    const { status, body } = await precession(MERCURY);
    expect(status).toBe(200);
    expect(body.model).toBe('weak-field');
    expect(body.references.join(' ')).toMatch(/Will 2014/);
    expect(Math.abs(body.periastron_advance_rate.arcsec_per_century - 42.98)).toBeLessThan(0.05);
    // The sidereal period of Mercury, 87.969 d (Explanatory Supplement 1992; from memory), within 0.001 d.
    expect(Math.abs(body.period.value / 86400 - 87.969)).toBeLessThan(0.001);
    expect(body.warnings).toBeUndefined();
    // 0.1035 arcsec per orbit (42.98 / 415.2 orbits per century; common practice), within 0.0002.
    expect(Math.abs(body.periastron_advance_per_orbit.arcsec - 0.1035)).toBeLessThan(2e-4);
  });

  it('a single case matches the closed forms at 40 digits (Kepler III; Will 2014), a in metres and GM in km3.s-2', async () => {
    const a = 2.2e11;
    const e = 0.37;
    const { status, body } = await precession({ body: { gm: { value: 3.9e10, unit: 'km3.s-2' } }, semi_major_axis: a, eccentricity: e });
    expect(status).toBe(200);
    const gm = d(3.9e10).times(1e9);
    const P = ref.period(gm, d(a));
    const adv = ref.advance(gm, d(a), d(e));
    expect(relErr(body.period.value, P)).toBeLessThan(1e-14);
    expect(body.period.unit).toBe('s');
    expect(relErr(body.periastron_advance_per_orbit.value, adv)).toBeLessThan(1e-14);
    expect(body.periastron_advance_per_orbit.unit).toBe('rad');
    expect(relErr(body.periastron_advance_per_orbit.arcsec, adv.times(648000).div(PI))).toBeLessThan(1e-14);
    const rate = adv.div(P);
    expect(relErr(body.periastron_advance_rate.value, rate)).toBeLessThan(1e-14);
    expect(body.periastron_advance_rate.unit).toBe('rad.s-1');
    expect(relErr(body.periastron_advance_rate.arcsec_per_century, rate.times(36525 * 86400).times(648000).div(PI))).toBeLessThan(1e-14);
    expect(relErr(body.periastron_advance_rate.deg_per_yr, rate.times(YEAR).times(180).div(PI))).toBeLessThan(1e-14);
    const p = d(a).times(new D(1).minus(d(e).pow(2)));
    expect(relErr(body.semi_latus_rectum.value, p)).toBeLessThan(1e-15);
    expect(relErr(body.periastron_distance.value, d(a).times(new D(1).minus(d(e))))).toBeLessThan(1e-15);
    expect(relErr(val(body.weak_field_parameter), gm.div(c2.times(p)))).toBeLessThan(1e-14);
    expect(body.ppn_factor).toBe(1);
  });

  it('a in rg: p = a (1 - e^2) in rg comes back unchanged, and the advance is 6 pi/p (Will 2014) independently of GM', async () => {
    const { body } = await precession({ body: { mass: { value: 10, unit: 'solMass' } }, semi_major_axis: { value: 2000, unit: 'rg' }, eccentricity: 0.6 });
    expect(relErr(body.semi_latus_rectum.rg, new D(2000).times(0.64))).toBeLessThan(1e-14);
    expect(relErr(body.periastron_advance_per_orbit.value, PI.times(6).div(1280))).toBeLessThan(1e-14);
    const rs = await precession({ body: { mass: { value: 10, unit: 'solMass' } }, semi_major_axis: { value: 1000, unit: 'rs' }, eccentricity: 0.6 });
    expect(rs.raw).toBe((await precession({ body: { mass: { value: 10, unit: 'solMass' } }, semi_major_axis: { value: 2000, unit: 'rg' }, eccentricity: 0.6 })).raw);
  });

  it.each([
    [0.5, 1],
    [1, 2],
    [0.9999787, 1.0000021],
    [0, 1],
    [3, -1],
  ])('PPN gamma = %s, beta = %s: the advance scales as (2 + 2 gamma - beta)/3 (Will 2014), 40 digits', async (g, b) => {
    const { body } = await precession({ ...MERCURY, ppn_gamma: g, ppn_beta: b });
    const a = d(0.38709893 * 149597870700);
    expect(relErr(body.periastron_advance_per_orbit.value, ref.advance(d(GM_SUN), a, d(0.20563), d(g), d(b)))).toBeLessThan(1e-14);
    expect(Math.abs(val(body.ppn_factor) - (2 + 2 * g - b) / 3)).toBeLessThan(1e-15);
  });

  it('a batch answers in order, with a 422 in the slot of an orbit that runs into the Sun and of one inside the separatrix', async () => {
    const { status, body } = await precession({
      items: [
        MERCURY,
        // periastron 0.75 R_sun < R_sun (IAU 2015 B3)
        { body: { preset: 'sun' }, semi_major_axis: { value: 1.5, unit: 'solRad' }, eccentricity: 0.5 },
        // p = 6.5 x 0.96 = 6.24 GM/c^2 < 6 + 2e = 6.4 (Cutler, Kennefick & Poisson 1994)
        { body: { gm: 1e20 }, semi_major_axis: { value: 6.5, unit: 'rg' }, eccentricity: 0.2 },
        // p = 7 x 0.96 = 6.72 > 6.4: bound, computed, flagged
        { body: { gm: 1e20 }, semi_major_axis: { value: 7, unit: 'rg' }, eccentricity: 0.2 },
      ],
    });
    expect(status).toBe(200);
    expect(body.count).toBe(4);
    expect(Math.abs(body.items[0].periastron_advance_rate.arcsec_per_century - 42.98)).toBeLessThan(0.05);
    expect(body.items[1].error.status).toBe(422);
    expect(body.items[1].error.errors[0].pointer).toBe('/items/1/semi_major_axis');
    expect(body.items[1].error.detail).toMatch(new RegExp(`allowed: a \\(1 - e\\) > ${R_SUN} m`));
    expect(body.items[2].error.status).toBe(422);
    expect(body.items[2].error.errors[0].pointer).toBe('/items/2/semi_major_axis');
    expect(body.items[2].error.detail).toMatch(/\(6 \+ 2e\) GM\/c\^2/);
    expect(body.items[3].error).toBeUndefined();
    expect(codes(body.items[3])).toContain('weak-field-formula');
  });

  it('linear uncertainty equals the closed-form propagation: sigma_rel^2 = (k_GM sigma_GM/GM)^2 + (k_a sigma_a/a)^2 + (2e sigma_e/(1 - e^2))^2', async () => {
    const gm = 4e20;
    const a = 3e12;
    const e = 0.3;
    const [sg, sa, se, sgam] = [4e17, 6e9, 0.004, 0.01];
    const { body } = await precession({
      body: { gm: { value: gm, uncertainty: sg } },
      semi_major_axis: { value: a, uncertainty: sa },
      eccentricity: { value: e, uncertainty: se },
      ppn_gamma: { value: 1, uncertainty: sgam },
    });
    const eTerm = (2 * e * se) / (1 - e * e);
    const ppnTerm = (2 * sgam) / 3; // d/dgamma of (2 + 2 gamma - beta)/3 at 1
    // Delta omega ~ GM a^-1 (1-e^2)^-1 x ppn; P ~ GM^-1/2 a^3/2; rate ~ GM^3/2 a^-5/2 (1-e^2)^-1 x ppn
    const advRel = Math.hypot(sg / gm, sa / a, eTerm, ppnTerm);
    const pRel = Math.hypot(0.5 * (sg / gm), 1.5 * (sa / a));
    const rateRel = Math.hypot(1.5 * (sg / gm), 2.5 * (sa / a), eTerm, ppnTerm);
    expect(rel(body.periastron_advance_per_orbit.uncertainty / body.periastron_advance_per_orbit.value, advRel)).toBeLessThan(1e-7);
    expect(rel(body.period.uncertainty / body.period.value, pRel)).toBeLessThan(1e-7);
    expect(rel(body.periastron_advance_rate.uncertainty / body.periastron_advance_rate.value, rateRel)).toBeLessThan(1e-7);
    expect(rel(sig(body.ppn_factor), ppnTerm)).toBeLessThan(1e-8);
  });

  it('Monte Carlo: the same seed gives byte-identical replies, percentiles are ordered, the spread agrees with linear propagation within 10 %', async () => {
    const base = { body: { gm: 4e20 }, semi_major_axis: { value: 3e12, uncertainty: 3e10 }, eccentricity: { value: 0.3, uncertainty: 0.01 } };
    const req = { ...base, uncertainty_method: { kind: 'monte-carlo', samples: 4000, seed: 11 } };
    const a = await precession(req);
    const b = await precession(req);
    expect(a.status).toBe(200);
    expect(a.raw).toBe(b.raw);
    const r = a.body.periastron_advance_rate;
    expect(r.p16).toBeLessThan(r.p50);
    expect(r.p50).toBeLessThan(r.p84);
    const lin = await precession(base);
    expect(rel(r.uncertainty, lin.body.periastron_advance_rate.uncertainty)).toBeLessThan(0.1);
    const other = await precession({ ...base, uncertainty_method: { kind: 'monte-carlo', samples: 4000, seed: 12 } });
    expect(other.raw).not.toBe(a.raw);
  });

  it('warnings: not a weak field (S2-like orbit near the separatrix), the Earth\'s J2, a black hole\'s spin', async () => {
    const strong = await precession({ body: { gm: 1e20 }, semi_major_axis: { value: 500, unit: 'rg' }, eccentricity: 0 });
    expect(codes(strong.body)).toContain('weak-field-formula');
    const weak = await precession({ body: { gm: 1e20 }, semi_major_axis: { value: 5000, unit: 'rg' }, eccentricity: 0.8 });
    expect(codes(weak.body)).not.toContain('weak-field-formula'); // p = 1800 rg: 5.6e-4 < 1e-3
    const earth = await precession({ body: { preset: 'earth' }, semi_major_axis: { value: 7000, unit: 'km' }, eccentricity: 0.01 });
    expect(earth.status).toBe(200);
    expect(codes(earth.body)).toContain('oblateness-not-modelled');
    const spin = await precession({ body: { gm: 1e20, spin: 0.5 }, semi_major_axis: { value: 1e4, unit: 'rg' }, eccentricity: 0.1 });
    expect(codes(spin.body)).toContain('spin-not-modelled');
  });

  it('400s name the field', async () => {
    const cases: Array<[unknown, string, RegExp]> = [
      [{ body: { preset: 'sun' }, semi_major_axis: 1e11, eccentricity: 1 }, '/eccentricity', /< 1/],
      [{ body: { preset: 'sun' }, semi_major_axis: { value: 1, unit: 'kg' }, eccentricity: 0.1 }, '/semi_major_axis/unit', /not a length/],
      [{ body: { preset: 'sun', spin: 0.2 }, semi_major_axis: 1e11, eccentricity: 0.1 }, '/body/spin', /preset/],
      [{ body: { preset: 'sun' }, semi_major_axis: -1e11, eccentricity: 0.1 }, '/semi_major_axis', /.+/],
      [{ body: { preset: 'sun' }, semi_major_axis: 1e11, eccentricity: 0.1, ppn_gamma: 20 }, '/ppn_gamma', /.+/],
      [{ body: { preset: 'sun' }, eccentricity: 0.1 }, '/semi_major_axis', /.+/],
    ];
    await expectFieldErrors(precession, cases, { problemJson: true });
  });

  it('422 states the allowed domain', async () => {
    const { status, body } = await precession({ body: { preset: 'sun' }, semi_major_axis: { value: 0.9, unit: 'solRad' }, eccentricity: 0 });
    expect(status).toBe(422);
    expect(body.errors[0].pointer).toBe('/semi_major_axis');
    expect(body.detail).toMatch(/allowed: a \(1 - e\) > 695700000 m/);
  });
});

// ---------------------------------------------------------------------------

describe('POST /v1/orbits/gyroscope', () => {
  it('Gravity Probe B (Everitt et al. 2011): geodetic 6606.1 mas/yr within 0.1 %; frame dragging of the spin toward IM Pegasi 39.2 mas/yr within 1 %; orbit-averaged 40.8 mas/yr within 1 %', async () => {
    const { status, body } = await gyroscope(GPB);
    expect(status).toBe(200);
    expect(body.model).toBe('weak-field');
    expect(body.references.join(' ')).toMatch(/Schiff 1960/);
    expect(body.references.join(' ')).toMatch(/Yoder 1995/);
    expect(rel(body.geodetic_rate.mas_per_yr, 6606.1)).toBeLessThan(1e-3);
    expect(rel(body.frame_dragging_rate.mas_per_yr, 40.8)).toBeLessThan(0.01);
    expect(rel(body.spin_drift.geodetic.rate.mas_per_yr, 6606.1)).toBeLessThan(1e-3);
    expect(rel(body.spin_drift.frame_dragging.rate.mas_per_yr, 39.2)).toBeLessThan(0.01);
    // GP-B's two drifts are at right angles: geodetic north-south in the orbit plane, frame dragging east-west (Everitt et al. 2011, Fig. 1).
    expect(Math.abs(body.spin_drift.geodetic.north.mas_per_yr / 6606.1)).toBeGreaterThan(0.999);
    expect(Math.abs(body.spin_drift.frame_dragging.east.mas_per_yr / 39.2)).toBeGreaterThan(0.99);
    expect(Math.abs(body.spin_drift.frame_dragging.north.mas_per_yr)).toBeLessThan(0.05);
    // The Earth's J used by GP-B, 5.86e33 kg m^2/s (from memory), within 0.1 %.
    expect(rel(body.angular_momentum.value, 5.86e33)).toBeLessThan(1e-3);
    expect(body.angular_momentum.unit).toBe('kg.m2.s-1');
  });

  it('an exactly polar orbit with the spin in its plane (the Earth preset\'s GM is uncertain, so linear propagation always runs) has exact zeros and no spurious warnings', async () => {
    const { status, body } = await gyroscope({
      body: { preset: 'earth' },
      r: { value: 7278, unit: 'km' },
      inclination: { value: 90, unit: 'deg' },
      ascending_node: { value: 120, unit: 'deg' },
      spin_direction: { right_ascension: { value: 120, unit: 'deg' }, declination: { value: -30, unit: 'deg' } },
    });
    expect(status).toBe(200);
    expect(body.warnings, JSON.stringify(body.warnings)).toBeUndefined();
    expect(val(body.orbit_normal.z)).toBe(0);
    expect(val(body.geodetic_vector.z)).toBe(0);
    expect(body.spin_drift.geodetic.east.value).toBe(0);
    // frame dragging of a polar orbit is along the spin axis: the drift is eastward, |Omega| cos(dec) (Schiff 1960)
    expect(rel(body.spin_drift.frame_dragging.east.value, body.frame_dragging_rate.value * Math.cos(Math.PI / 6))).toBeLessThan(1e-14);
  });

  it('a single case with a given J matches the closed forms at 40 digits: magnitudes, vectors, orbit normal, spin drift = Omega x s (de Sitter 1916; Schiff 1960)', async () => {
    const gm = 2.7e17;
    const J = 4.1e38;
    const r = 9.5e8;
    const i = 0.61;
    const w = 2.3;
    const [ra, dec] = [5.1, -0.42];
    const { status, body } = await gyroscope({
      body: { gm, angular_momentum: J },
      r,
      inclination: i,
      ascending_node: w,
      spin_direction: { right_ascension: ra, declination: dec },
    });
    expect(status).toBe(200);
    const geo = ref.geodetic(d(gm), d(r));
    const gjc2 = d(G).times(d(J)).div(c2);
    const fdMag = gjc2.div(d(r).pow(3).times(2)).times(new D(1).plus(d(i).cos().pow(2).times(3)).sqrt());
    expect(relErr(body.geodetic_rate.value, geo)).toBeLessThan(1e-14);
    expect(body.geodetic_rate.unit).toBe('rad.s-1');
    expect(relErr(body.geodetic_rate.mas_per_yr, geo.times(YEAR).times(648000000).div(PI))).toBeLessThan(1e-14);
    expect(relErr(body.frame_dragging_rate.value, fdMag)).toBeLessThan(1e-14);
    expect(relErr(body.angular_momentum.value, d(J))).toBeLessThan(1e-15);
    const L = ref.normal(d(i), d(w));
    const fd = ref.fd(gjc2, d(r), d(i), d(w));
    const tot = [0, 1, 2].map((k) => geo.times(L[k]).plus(fd[k]));
    const scaleGeo = geo.toNumber();
    const scaleFd = fdMag.toNumber();
    (['x', 'y', 'z'] as const).forEach((k, n) => {
      expect(Math.abs(body.orbit_normal[k] - L[n].toNumber())).toBeLessThan(1e-15);
      expect(Math.abs(body.geodetic_vector[k] - geo.times(L[n]).toNumber()) / scaleGeo).toBeLessThan(1e-14);
      expect(Math.abs(body.frame_dragging_vector[k] - fd[n].toNumber()) / scaleFd).toBeLessThan(1e-14);
      expect(Math.abs(body.total_vector[k] - tot[n].toNumber()) / scaleGeo).toBeLessThan(1e-14);
    });
    expect(body.total_vector.unit).toBe('rad.s-1');
    expect(relErr(body.total_rate.value, tot[0].pow(2).plus(tot[1].pow(2)).plus(tot[2].pow(2)).sqrt())).toBeLessThan(1e-14);
    // Drift: (Omega x s) . e_N and . e_E with s = (cos d cos a, cos d sin a, sin d).
    const s = [d(dec).cos().times(d(ra).cos()), d(dec).cos().times(d(ra).sin()), d(dec).sin()];
    const eN = [d(dec).sin().neg().times(d(ra).cos()), d(dec).sin().neg().times(d(ra).sin()), d(dec).cos()];
    const eE = [d(ra).sin().neg(), d(ra).cos(), new D(0)];
    const crossDot = (o: Dec[], e: Dec[]) => {
      const c = [o[1].times(s[2]).minus(o[2].times(s[1])), o[2].times(s[0]).minus(o[0].times(s[2])), o[0].times(s[1]).minus(o[1].times(s[0]))];
      return c[0].times(e[0]).plus(c[1].times(e[1])).plus(c[2].times(e[2]));
    };
    for (const [key, vec, scale] of [
      ['geodetic', L.map((x) => x.times(geo)), scaleGeo],
      ['frame_dragging', fd, scaleFd],
      ['total', tot, scaleGeo],
    ] as const) {
      const n = crossDot(vec as Dec[], eN);
      const e = crossDot(vec as Dec[], eE);
      const drift = body.spin_drift[key];
      expect(Math.abs(drift.north.value - n.toNumber()) / scale, key).toBeLessThan(1e-13);
      expect(Math.abs(drift.east.value - e.toNumber()) / scale, key).toBeLessThan(1e-13);
      expect(Math.abs(drift.rate.value - n.pow(2).plus(e.pow(2)).sqrt().toNumber()) / scale, key).toBeLessThan(1e-13);
    }
    expect(body.warnings).toBeUndefined();
  });

  it('a black hole\'s spin gives G J/c^2 = a* (GM/c^2)^2 c (a* = cJ/(GM^2)): frame dragging a* c rg^2/(2 r^3) for a polar orbit', async () => {
    const { body } = await gyroscope({ body: { mass: { value: 4.3e6, unit: 'solMass' }, spin: 0.7 }, r: { value: 1e4, unit: 'rg' }, inclination: { value: 90, unit: 'deg' } });
    const gm = d(GM_SUN).times(4.3e6);
    const rg = gm.div(c2);
    const r = rg.times(1e4);
    const cos = d(Math.PI / 2).cos(); // the double nearest pi/2 is not exactly polar
    const expected = d(0.7).times(rg.pow(2)).times(C).div(r.pow(3).times(2)).times(new D(1).plus(cos.pow(2).times(3)).sqrt());
    expect(relErr(body.frame_dragging_rate.value, expected)).toBeLessThan(1e-13);
    expect(relErr(body.angular_momentum.value, d(0.7).times(gm.pow(2)).div(d(C).times(d(G))))).toBeLessThan(1e-13);
    // a* = 0 given: no frame dragging and no warning; nothing given: zero and a warning
    const zero = await gyroscope({ body: { gm: 1e20, spin: 0 }, r: 1e9, inclination: 1 });
    expect(zero.body.frame_dragging_rate.value).toBe(0);
    expect(codes(zero.body)).not.toContain('no-angular-momentum');
    const none = await gyroscope({ body: { gm: 1e20 }, r: 1e9, inclination: 1 });
    expect(none.body.frame_dragging_rate.value).toBe(0);
    expect(codes(none.body)).toContain('no-angular-momentum');
  });

  it('PPN gamma: geodetic x (1 + 2 gamma)/3, frame dragging x (1 + gamma)/2 (Will 2014), 40 digits', async () => {
    const base = { body: { gm: 3e14, angular_momentum: 6e33 }, r: 8e6, inclination: 1.2 };
    const gr = await gyroscope(base);
    for (const g of [0, 0.5, 2]) {
      const { body } = await gyroscope({ ...base, ppn_gamma: g });
      expect(relErr(body.geodetic_rate.value, ref.geodetic(d(3e14), d(8e6), d(g)))).toBeLessThan(1e-14);
      expect(Math.abs(body.frame_dragging_rate.value / gr.body.frame_dragging_rate.value - (1 + g) / 2)).toBeLessThan(1e-14);
    }
  });

  it('a batch answers in order, with a 422 in the slot of an orbit inside the Earth and one inside the photon orbit', async () => {
    const { status, body } = await gyroscope({
      items: [
        GPB,
        { body: { preset: 'earth' }, r: { value: 6000, unit: 'km' }, inclination: 0.5 },
        { body: { gm: 1e20, spin: 0.9 }, r: { value: 1.2, unit: 'rg' }, inclination: 0 },
        { body: { gm: 1e20, spin: 0.9 }, r: { value: 1.8, unit: 'rg' }, inclination: 0 },
      ],
    });
    expect(status).toBe(200);
    expect(body.count).toBe(4);
    expect(rel(body.items[0].geodetic_rate.mas_per_yr, 6606.1)).toBeLessThan(1e-3);
    expect(body.items[1].error.status).toBe(422);
    expect(body.items[1].error.errors[0].pointer).toBe('/items/1/r');
    expect(body.items[1].error.detail).toMatch(new RegExp(`allowed: r > ${R_EARTH} m`)); // IERS 2010 equatorial radius
    // prograde photon orbit of a* = 0.9: 1.5578 GM/c^2 (BPT72 eq. 2.18, from the closed form 2(1 + cos(2/3 arccos(-a))))
    const rph = 2 * (1 + Math.cos((2 / 3) * Math.acos(-0.9)));
    expect(body.items[2].error.status).toBe(422);
    expect(body.items[2].error.errors[0].pointer).toBe('/items/2/r');
    expect(body.items[2].error.detail).toMatch(new RegExp(`allowed: r > ${String(rph).slice(0, 8)}`));
    expect(codes(body.items[3])).toContain('weak-field-formula');
  });

  it('linear uncertainty equals the closed-form propagation: geodetic ~ r^-5/2, frame dragging ~ J r^-3 sqrt(1 + 3 cos^2 i)', async () => {
    const [gm, J, r, i] = [3e14, 6e33, 8e6, 1.1];
    const [sJ, sr, si] = [6e31, 2e3, 0.01];
    const { body } = await gyroscope({
      body: { gm, angular_momentum: { value: J, uncertainty: sJ } },
      r: { value: r, uncertainty: sr },
      inclination: { value: i, uncertainty: si },
    });
    expect(rel(body.geodetic_rate.uncertainty / body.geodetic_rate.value, 2.5 * (sr / r))).toBeLessThan(1e-7);
    // d ln sqrt(1 + 3 cos^2 i)/di = -3 cos i sin i/(1 + 3 cos^2 i)
    const iTerm = ((3 * Math.cos(i) * Math.sin(i)) / (1 + 3 * Math.cos(i) ** 2)) * si;
    expect(rel(body.frame_dragging_rate.uncertainty / body.frame_dragging_rate.value, Math.hypot(sJ / J, 3 * (sr / r), iTerm))).toBeLessThan(1e-7);
    expect(rel(body.angular_momentum.uncertainty, sJ)).toBeLessThan(1e-8);
  });

  it('Monte Carlo: the same seed gives byte-identical replies with ordered percentiles', async () => {
    const req = {
      ...GPB,
      r: { value: 7027.4, unit: 'km', uncertainty: 1 },
      spin_direction: { right_ascension: { value: 343.2595, unit: 'deg' }, declination: { value: 16.8411, unit: 'deg', uncertainty: 0.5 } },
      uncertainty_method: { kind: 'monte-carlo', samples: 2000, seed: 3 },
    };
    const a = await gyroscope(req);
    const b = await gyroscope(req);
    expect(a.status).toBe(200);
    expect(a.raw).toBe(b.raw);
    const f = a.body.spin_drift.frame_dragging.rate;
    expect(f.p16).toBeLessThan(f.p50);
    expect(f.p50).toBeLessThan(f.p84);
    // the frame-dragging drift ~ cos(dec) r^-3: relative sigma = hypot(tan(dec) sigma_dec, 3 sigma_r/r) (first order), within 10 %
    const dec = (16.8411 * Math.PI) / 180;
    const expected = f.value * Math.hypot(Math.tan(dec) * ((0.5 * Math.PI) / 180), 3 / 7027.4);
    expect(rel(f.uncertainty, expected)).toBeLessThan(0.1);
  });

  it('a drift magnitude near zero with an uncertain direction is flagged under linear propagation, not under Monte Carlo', async () => {
    // polar orbit: the averaged frame dragging is along the spin axis, so a spin near the pole barely drifts (Omega x s ~ 0)
    const req = {
      body: { gm: 3e14, angular_momentum: 6e33 },
      r: 8e6,
      inclination: { value: 90, unit: 'deg' },
      spin_direction: { right_ascension: 0, declination: { value: 89.9, unit: 'deg', uncertainty: 0.5 } },
    };
    const lin = await gyroscope(req);
    expect(lin.status).toBe(200);
    expect(codes(lin.body)).toContain('linear-uncertainty-unreliable');
    const mc = await gyroscope({ ...req, uncertainty_method: { kind: 'monte-carlo', samples: 1000, seed: 2 } });
    expect(codes(mc.body)).not.toContain('linear-uncertainty-unreliable');
    const sure = await gyroscope({ ...req, spin_direction: { right_ascension: 0, declination: { value: 20, unit: 'deg', uncertainty: 0.5 } } });
    expect(codes(sure.body)).not.toContain('linear-uncertainty-unreliable');
  });

  it('400s name the field', async () => {
    const cases: Array<[unknown, string, RegExp]> = [
      [{ body: { preset: 'earth' }, r: 7e6, inclination: { value: 200, unit: 'deg' } }, '/inclination', /between 0 and pi/],
      [{ body: { preset: 'earth' }, r: 7e6, inclination: 1, spin_direction: { right_ascension: 0, declination: { value: 100, unit: 'deg' } } }, '/spin_direction/declination', /-pi\/2 and pi\/2/],
      [{ body: { preset: 'sun' }, r: 1e10, inclination: 1 }, '/body/angular_momentum', /required/],
      [{ body: { preset: 'earth', spin: 0.1 }, r: 7e6, inclination: 1 }, '/body/spin', /angular_momentum/],
      [{ body: { gm: 1e20, spin: 0.1, angular_momentum: 1e40 }, r: 1e9, inclination: 1 }, '/body/angular_momentum', /not both/],
      [{ body: { preset: 'earth' }, r: { value: 7000, unit: 's' }, inclination: 1 }, '/r/unit', /not a length/],
      [{ body: { preset: 'earth' }, r: 7e6, inclination: { value: 1, unit: 'm' } }, '/inclination/unit', /not an angle unit/],
      [{ body: { preset: 'earth', angular_momentum: { value: 1, unit: 'kg' } }, r: 7e6, inclination: 1 }, '/body/angular_momentum/unit', /not an angular momentum unit/],
      [{ body: { preset: 'earth' }, r: 7e6 }, '/inclination', /.+/],
    ];
    await expectFieldErrors(gyroscope, cases);
  });

  it('422 states the allowed domain: an orbit inside the Sun (with a given J), and r inside the Schwarzschild photon orbit', async () => {
    const sun = await gyroscope({ body: { preset: 'sun', angular_momentum: 1.9e41 }, r: { value: 0.5, unit: 'solRad' }, inclination: 0 });
    expect(sun.status).toBe(422);
    expect(sun.body.errors[0].pointer).toBe('/r');
    expect(sun.body.detail).toMatch(new RegExp(`allowed: r > ${R_SUN} m`));
    const hole = await gyroscope({ body: { gm: 1e20 }, r: { value: 3, unit: 'rg' }, inclination: 0 });
    expect(hole.status).toBe(422);
    expect(hole.body.detail).toMatch(/allowed: r > 3 GM\/c\^2/);
  });

  it('identical requests give byte-identical replies; mas/yr conveniences are the rad/s values x Julian year x mas/rad', async () => {
    const a = await gyroscope(GPB);
    const b = await gyroscope(GPB);
    expect(a.raw).toBe(b.raw);
    expect(rel(a.body.frame_dragging_rate.mas_per_yr, a.body.frame_dragging_rate.value * YEAR * MAS)).toBeLessThan(1e-14);
  });
});
