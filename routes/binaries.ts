/**
 * POST /v1/binaries/timing and POST /v1/binaries/masses: the post-Keplerian (PK) parameters of a
 * binary pulsar in general relativity from the two masses, and the two masses from the measured
 * periastron advance and Einstein delay, with the predicted orbital decay.
 *
 * All the physics is in ../physics/binaries.ts; this module reads the case, declares the uncertain
 * inputs with their physical domains, and shapes the reply. Masses travel as mass parameters in
 * units of time, G m / c^3 (s): a mass in solMass (or earthMass, jupiterMass) converts through the
 * nominal GM of its unit (IAU 2015 B3), a mass in kg through G (CODATA 2018).
 */
import type { FastifyInstance } from 'fastify';
import { Type, type Static } from '@sinclair/typebox';
import {
  type Binary,
  T_SUN,
  compactness,
  einsteinDelay,
  gwFrequency,
  gwPeakFrequency,
  massesFromPeriastronAndEinstein,
  mergerTime,
  mergerTimeCircular,
  orbitalDecay,
  periastronAdvanceRate,
  semiMajorAxisLightSeconds,
  shapiroRange,
  shapiroShape,
} from '../physics/binaries.js';
import { C, G, JULIAN_YEAR } from '../physics/constants.js';
import { PhysicsDomainError } from '../physics/errors.js';
import type { Outputs, Variable } from '../physics/uncertainty.js';
import { registerCaseRoute, type Prepared, type Warning } from '../server/cases.js';
import type { Config } from '../server/config.js';
import { fail, massAsGm, quantity, scalar, type Uncertain } from '../server/inputs.js';
import { dimensional, dimensionless } from '../server/outputs.js';
import { MASS_UNITS, Provenance, Quantity, QuantityOut, Scalar, ScalarOut, UncertaintyMethod, type QuantityInput } from '../server/schemas.js';

// ---------------------------------------------------------------------------
// Schemas

const TIME_UNITS = ['s', 'ms', 'us', 'min', 'h', 'd', 'yr'] as const;
const RATE_UNITS = ['rad.s-1', 'rad/s', 'deg/yr', 'deg.yr-1'] as const;
const DEG_PER_YR = (180 / Math.PI) * JULIAN_YEAR; // (deg/yr) per (rad/s)

const Pb = Quantity('Orbital period Pb (binary period).', 's', TIME_UNITS, { positive: true });
const Ecc = Scalar('Orbital eccentricity e, 0 <= e < 1 (dimensionless).', { minimum: 0, maximum: 1 });
const X = Quantity(
  'Projected semi-major axis of the pulsar orbit, x = a1 sin i / c, as a light travel time (light-seconds, i.e. seconds).',
  's',
  TIME_UNITS,
  { positive: true },
);

export const TimingCase = Type.Object(
  {
    pb: Pb,
    e: Ecc,
    m1: Quantity('Mass of the pulsar m1. In solMass it converts through the nominal solar GM (IAU 2015 B3), never through G.', 'kg', MASS_UNITS, { positive: true }),
    m2: Quantity('Mass of the companion m2. In solMass it converts through the nominal solar GM (IAU 2015 B3), never through G.', 'kg', MASS_UNITS, { positive: true }),
    x: Type.Optional(X),
    uncertainty_method: Type.Optional(UncertaintyMethod),
  },
  { additionalProperties: false, description: 'A binary: its Keplerian orbit (pb, e, optionally x) and the two masses.' },
);
type TimingCase = Static<typeof TimingCase>;

export const MassesCase = Type.Object(
  {
    pb: Pb,
    e: Scalar('Orbital eccentricity e, 0 < e < 1 (dimensionless; the Einstein delay vanishes on a circular orbit).', { minimum: 0, maximum: 1 }),
    omega_dot: Quantity('Measured rate of periastron advance omega_dot (often quoted in deg/yr).', 'rad.s-1', RATE_UNITS, { positive: true }),
    gamma: Quantity('Measured Einstein delay amplitude gamma (gravitational redshift and time dilation).', 's', TIME_UNITS, { positive: true }),
    pb_dot: Type.Optional(
      Scalar(
        'Measured orbital period derivative dPb/dt (dimensionless, s/s; negative for a shrinking orbit), corrected by the caller for kinematic terms (Shklovskii, Galactic acceleration) if wanted.',
        { minimum: -1, maximum: 1 },
      ),
    ),
    x: Type.Optional(X),
    uncertainty_method: Type.Optional(UncertaintyMethod),
  },
  { additionalProperties: false, description: 'A binary pulsar with two measured post-Keplerian parameters (omega_dot, gamma), and optionally the measured orbital decay.' },
);
type MassesCase = Static<typeof MassesCase>;

const S = (what: string) => QuantityOut(what, 's');

const TimingResult = Type.Object({
  omega_dot: QuantityOut('Rate of periastron advance omega_dot = 3 (Pb/2pi)^(-5/3) (T_sun M)^(2/3) / (1 - e^2) (Lorimer & Kramer 2005, eq. 8.52).', 'rad.s-1'),
  omega_dot_deg_per_yr: QuantityOut('omega_dot in degrees per Julian year, as usually quoted.', 'deg/yr'),
  gamma: S('Einstein delay amplitude gamma = e (Pb/2pi)^(1/3) T_sun^(2/3) M^(-4/3) m2 (m1 + 2 m2) (Lorimer & Kramer 2005, eq. 8.53).'),
  pb_dot: ScalarOut(
    'Orbital period derivative from quadrupole gravitational radiation, -(192 pi/5) (Pb/2pi)^(-5/3) f(e) T_sun^(5/3) m1 m2 M^(-1/3), with the Peters & Mathews 1963 enhancement f(e) (dimensionless, s/s).',
  ),
  shapiro_r: S('Shapiro delay range r = T_sun m2 (Lorimer & Kramer 2005, eq. 8.55).'),
  shapiro_s: Type.Optional(
    ScalarOut('Only when x is given: Shapiro delay shape s = sin i = x (Pb/2pi)^(-2/3) (T_sun M)^(-1/3) M / m2 (eq. 8.56; dimensionless). Above 1 (with a warning) no inclination fits the masses and x.'),
  ),
  merger_time: S('Time to coalescence under gravitational radiation from the present orbit (Peters 1964 eq. 5.14, integrated numerically for the eccentric orbit).'),
  merger_time_circular: S('Coalescence time of a circular orbit of the same semi-major axis, a0^4/(4 beta) (Peters 1964 eq. 5.10), for comparison.'),
  gw_frequency: QuantityOut('Gravitational-wave frequency of the dominant quadrupole harmonic n = 2, 2/Pb (for an eccentric orbit the power is spread over the harmonics n/Pb; see gw_frequency_peak).', 'Hz'),
  gw_frequency_peak: QuantityOut('Harmonic of peak gravitational-wave power for an eccentric orbit, (2/Pb) (1 + e)^1.1954 / (1 - e^2)^1.5 (Wen 2003, ApJ 598, 419, fit to Peters & Mathews 1963); equals gw_frequency for e = 0.', 'Hz'),
  semi_major_axis: QuantityOut('Semi-major axis of the relative orbit, a = (GM)^(1/3) (Pb/2pi)^(2/3) (Kepler\'s third law).', 'm'),
  ...Provenance,
});

const MassOut = (what: string) => QuantityOut(`${what} (mass parameter / G, CODATA 2018 G).`, 'kg');
const SolarOut = (what: string) => ScalarOut(`${what} in nominal solar masses, G m / GM_sun^N (IAU 2015 B3; no G involved).`);

const MassesResult = Type.Object({
  m1: MassOut('Mass of the pulsar'),
  m1_solar: SolarOut('Mass of the pulsar'),
  m2: MassOut('Mass of the companion'),
  m2_solar: SolarOut('Mass of the companion'),
  total_mass: MassOut('Total mass M = m1 + m2, from omega_dot'),
  total_mass_solar: SolarOut('Total mass'),
  pb_dot_predicted: ScalarOut('Orbital period derivative predicted by quadrupole gravitational radiation for these masses (Peters & Mathews 1963; Lorimer & Kramer 2005 eq. 8.54; dimensionless, s/s).'),
  pb_dot_ratio: Type.Optional(ScalarOut('Only when pb_dot is given: observed / predicted orbital period derivative (dimensionless; 1 in general relativity), with the correlated uncertainty of both.')),
  shapiro_r: S('Predicted Shapiro delay range r = T_sun m2 (Lorimer & Kramer 2005, eq. 8.55).'),
  shapiro_s: Type.Optional(ScalarOut('Only when x is given: predicted Shapiro delay shape s = sin i (Lorimer & Kramer 2005, eq. 8.56; dimensionless).')),
  ...Provenance,
});

// ---------------------------------------------------------------------------
// Provenance

const REFS = {
  dd: 'Damour & Deruelle 1986, Ann. Inst. Henri Poincare Phys. Theor. 44, 263',
  tw: 'Taylor & Weisberg 1989, ApJ 345, 434',
  lk: 'Lorimer & Kramer 2005, Handbook of Pulsar Astronomy, §8.4 (eqs. 8.52-8.56)',
  pm: 'Peters & Mathews 1963, Phys. Rev. 131, 435',
  peters: 'Peters 1964, Phys. Rev. 136, B1224',
  wen: 'Wen 2003, ApJ 598, 419',
};

// ---------------------------------------------------------------------------
// Reading inputs

const C3 = C * C * C;

function finiteOrFail(u: Uncertain, pointer: string, what: string, input: QuantityInput | number): void {
  if (!Number.isFinite(u.value) || !(u.value > 0)) fail(pointer, `gives ${what} = ${u.value}, outside the representable range (a positive finite double)`);
  if (!Number.isFinite(u.sigma)) fail(typeof input === 'number' ? pointer : `${pointer}/uncertainty`, `gives an uncertainty of ${what} outside the representable range`);
}

/** A mass as its mass parameter in time units, G m / c^3 (s): nominal GM per unit for solMass & co., G for kg. */
function readMass(input: QuantityInput, pointer: string): Uncertain {
  const gm = massAsGm(input, pointer); // solMass etc. through the nominal GM, kg through G
  const t = { value: gm.value / C3, sigma: gm.sigma / C3 }; // G m / c^3, s
  finiteOrFail(t, pointer, 'G m / c^3', input);
  return t;
}

function readTime(input: QuantityInput, pointer: string, what: string): Uncertain {
  const t = quantity(input, pointer, 'time');
  finiteOrFail(t, pointer, what, input);
  return t;
}

function readRate(input: QuantityInput, pointer: string): Uncertain {
  const w = quantity(input, pointer, 'angular_frequency');
  finiteOrFail(w, pointer, 'omega_dot (rad/s)', input);
  return w;
}

/** Re-raises a physics domain error from ../physics/binaries.ts with the pointer of the input it names. */
function withPointers<T>(f: () => T): T {
  try {
    return f();
  } catch (err) {
    if (err instanceof PhysicsDomainError && err.parameter && !err.parameter.startsWith('/')) {
      throw new PhysicsDomainError(err.message, err.allowed, `/${err.parameter}`);
    }
    throw err;
  }
}

function strongFieldFlag(b: Binary): Warning[] {
  // GM/(c^2 a (1 - e)) at periastron: the 1PN PK formulas and the quadrupole decay carry relative
  // errors of this order (Damour & Deruelle 1986).
  const pc = compactness(b) / (1 - b.e);
  if (!(pc > 1e-2)) return [];
  return [
    {
      code: 'weak-field-formula',
      message: `GM/(c^2 r_periastron) = ${pc.toExponential(2)}: the post-Keplerian parameters are first post-Newtonian results and the decay is the leading (quadrupole) order, with relative errors of this order; near 0.1 and above the orbit is in the strong field and these numbers are only indicative`,
    },
  ];
}

function noInclinationFlag(s: number): Warning[] {
  if (!(s > 1)) return [];
  return [
    {
      code: 'no-inclination',
      message: `sin i = s = ${s.toPrecision(6)} > 1: no orbital inclination fits these masses and this projected semi-major axis x (the mass function needs more mass): check m1, m2 and x`,
    },
  ];
}

// ---------------------------------------------------------------------------
// POST /v1/binaries/timing

function prepareTiming(input: TimingCase): Prepared {
  const pb = readTime(input.pb, '/pb', 'Pb (s)');
  const e = scalar(input.e, 0);
  if (!(e.value < 1)) fail('/e', `must be < 1 (a bound orbit: 0 <= e < 1); got ${e.value}`);
  const t1 = readMass(input.m1, '/m1');
  const t2 = readMass(input.m2, '/m2');
  const vars: Variable[] = [
    { name: '/pb', value: pb.value, sigma: pb.sigma, lo: 0, hi: Infinity },
    { name: '/e', value: e.value, sigma: e.sigma, lo: 0, hi: 1, loClosed: true },
    { name: '/m1', value: t1.value, sigma: t1.sigma, lo: 0, hi: Infinity },
    { name: '/m2', value: t2.value, sigma: t2.sigma, lo: 0, hi: Infinity },
  ];
  const hasX = input.x !== undefined;
  if (hasX) {
    const x = readTime(input.x!, '/x', 'x (s)');
    vars.push({ name: '/x', value: x.value, sigma: x.sigma, lo: 0, hi: Infinity });
  }

  const compute = (v: readonly number[]): Outputs =>
    withPointers(() => {
      const b: Binary = { pb: v[0], e: v[1], t1: v[2], t2: v[3] };
      const wdot = periastronAdvanceRate(b); // rad/s
      const out: Outputs = {
        omega_dot: wdot,
        omega_dot_deg: wdot * DEG_PER_YR, // deg per Julian year
        gamma: einsteinDelay(b),
        pb_dot: orbitalDecay(b),
        shapiro_r: shapiroRange(b),
        merger_time: mergerTime(b),
        merger_time_circular: mergerTimeCircular(b),
        gw_frequency: gwFrequency(b),
        gw_frequency_peak: gwPeakFrequency(b),
        semi_major_axis: semiMajorAxisLightSeconds(b) * C, // m
      };
      if (hasX) out.shapiro_s = shapiroShape(b, v[4]);
      return out;
    });

  return {
    vars,
    method: input.uncertainty_method,
    compute,
    shape: (get) => {
      const reply: Record<string, unknown> = {
        omega_dot: dimensional(get('omega_dot'), 'rad.s-1'),
        omega_dot_deg_per_yr: dimensional(get('omega_dot_deg'), 'deg/yr'),
        gamma: dimensional(get('gamma'), 's'),
        pb_dot: dimensionless(get('pb_dot')),
        shapiro_r: dimensional(get('shapiro_r'), 's'),
      };
      if (hasX) reply.shapiro_s = dimensionless(get('shapiro_s'));
      reply.merger_time = dimensional(get('merger_time'), 's');
      reply.merger_time_circular = dimensional(get('merger_time_circular'), 's');
      reply.gw_frequency = dimensional(get('gw_frequency'), 'Hz');
      reply.gw_frequency_peak = dimensional(get('gw_frequency_peak'), 'Hz');
      reply.semi_major_axis = dimensional(get('semi_major_axis'), 'm');
      return reply;
    },
    warnings: (nominal) => [
      ...strongFieldFlag({ pb: pb.value, e: e.value, t1: t1.value, t2: t2.value }),
      ...(hasX ? noInclinationFlag(nominal.shapiro_s) : []),
      ...(e.sigma > e.value && input.uncertainty_method?.kind !== 'monte-carlo'
        ? [
            {
              code: 'eccentricity-near-zero',
              message: `e = ${e.value} is within its uncertainty of 0, where omega_dot, pb_dot and the merger time depend on e only through e^2: first-order propagation gives them (almost) no uncertainty from e; use uncertainty_method monte-carlo`,
            },
          ]
        : []),
    ],
    model: 'weak-field',
    references: [REFS.dd, REFS.tw, REFS.lk, REFS.pm, REFS.peters, REFS.wen],
  };
}

// ---------------------------------------------------------------------------
// POST /v1/binaries/masses

function prepareMasses(input: MassesCase): Prepared {
  const pb = readTime(input.pb, '/pb', 'Pb (s)');
  const e = scalar(input.e, 0);
  if (!(e.value < 1)) fail('/e', `must be < 1 (a bound orbit: 0 < e < 1); got ${e.value}`);
  const wdot = readRate(input.omega_dot, '/omega_dot');
  const gamma = readTime(input.gamma, '/gamma', 'gamma (s)');
  const vars: Variable[] = [
    { name: '/pb', value: pb.value, sigma: pb.sigma, lo: 0, hi: Infinity },
    { name: '/e', value: e.value, sigma: e.sigma, lo: 0, hi: 1 },
    { name: '/omega_dot', value: wdot.value, sigma: wdot.sigma, lo: 0, hi: Infinity },
    { name: '/gamma', value: gamma.value, sigma: gamma.sigma, lo: 0, hi: Infinity },
  ];
  let iPbDot = -1;
  if (input.pb_dot !== undefined) {
    const p = scalar(input.pb_dot, 0);
    iPbDot = vars.push({ name: '/pb_dot', value: p.value, sigma: p.sigma, lo: -Infinity, hi: Infinity }) - 1;
  }
  let iX = -1;
  if (input.x !== undefined) {
    const x = readTime(input.x, '/x', 'x (s)');
    iX = vars.push({ name: '/x', value: x.value, sigma: x.sigma, lo: 0, hi: Infinity }) - 1;
  }

  const compute = (v: readonly number[]): Outputs =>
    withPointers(() => {
      const sol = massesFromPeriastronAndEinstein(v[0], v[1], v[2], v[3]);
      const b: Binary = { pb: v[0], e: v[1], t1: sol.t1, t2: sol.t2 };
      const predicted = orbitalDecay(b);
      const out: Outputs = {
        m1: (sol.t1 * C3) / G, // kg
        m1_solar: sol.t1 / T_SUN,
        m2: (sol.t2 * C3) / G,
        m2_solar: sol.t2 / T_SUN,
        total_mass: (sol.t * C3) / G,
        total_mass_solar: sol.t / T_SUN,
        pb_dot_predicted: predicted,
        shapiro_r: shapiroRange(b),
      };
      if (iPbDot >= 0) out.pb_dot_ratio = v[iPbDot] / predicted;
      if (iX >= 0) out.shapiro_s = shapiroShape(b, v[iX]);
      return out;
    });

  return {
    vars,
    method: input.uncertainty_method,
    compute,
    shape: (get) => {
      const reply: Record<string, unknown> = {
        m1: dimensional(get('m1'), 'kg'),
        m1_solar: dimensionless(get('m1_solar')),
        m2: dimensional(get('m2'), 'kg'),
        m2_solar: dimensionless(get('m2_solar')),
        total_mass: dimensional(get('total_mass'), 'kg'),
        total_mass_solar: dimensionless(get('total_mass_solar')),
        pb_dot_predicted: dimensionless(get('pb_dot_predicted')),
      };
      if (iPbDot >= 0) reply.pb_dot_ratio = dimensionless(get('pb_dot_ratio'));
      reply.shapiro_r = dimensional(get('shapiro_r'), 's');
      if (iX >= 0) reply.shapiro_s = dimensionless(get('shapiro_s'));
      return reply;
    },
    warnings: (nominal) => [
      // The total mass parameter G M / c^3 (s) at the nominal inputs; m1 and m2 do not enter the flag.
      ...strongFieldFlag({ pb: pb.value, e: e.value, t1: nominal.total_mass_solar * T_SUN, t2: 0 }),
      ...(iX >= 0 ? noInclinationFlag(nominal.shapiro_s) : []),
    ],
    model: 'weak-field',
    references: [REFS.dd, REFS.tw, REFS.lk, REFS.pm],
  };
}

// ---------------------------------------------------------------------------

export async function binariesRoutes(app: FastifyInstance, opts: { config: Config }): Promise<void> {
  registerCaseRoute<TimingCase>(app, opts.config, {
    url: '/v1/binaries/timing',
    summary: 'Post-Keplerian parameters of a binary pulsar in general relativity',
    description:
      'From the orbital period, eccentricity and the two masses: the periastron advance omega_dot (rad/s and deg/yr), the Einstein delay gamma, the orbital decay ' +
      'pb_dot from quadrupole gravitational radiation, the Shapiro range r and, when the projected semi-major axis x is given, the Shapiro shape s = sin i ' +
      '(first post-Newtonian order; Damour & Deruelle 1986, Taylor & Weisberg 1989, Lorimer & Kramer 2005 eqs. 8.52-8.56). Also the time to coalescence ' +
      '(Peters 1964 eq. 5.14, the eccentric-orbit integral evaluated numerically to ~1e-13), the gravitational-wave frequency of the n = 2 harmonic (2/Pb) and ' +
      'of peak power (Wen 2003), and the relative semi-major axis. Masses in solMass convert through the nominal solar GM (T_sun = GM_sun/c^3 = 4.925490947 us). ' +
      'When s > 1 no inclination fits the masses and x: the reply flags it (warning "no-inclination").',
    tags: ['binaries'],
    caseSchema: TimingCase,
    resultSchema: TimingResult,
    prepare: (input) => prepareTiming(input),
  });

  registerCaseRoute<MassesCase>(app, opts.config, {
    url: '/v1/binaries/masses',
    summary: 'Masses of a binary pulsar from its periastron advance and Einstein delay',
    description:
      'The inverse of /v1/binaries/timing: omega_dot gives the total mass, gamma then the companion mass (the positive root of a quadratic, solved without ' +
      'cancellation), in kg and in nominal solar masses; with the orbital decay predicted by general relativity for these masses and, when the measured ' +
      'pb_dot is given, the ratio observed/predicted with its (correlated) uncertainty. A gamma larger than a massless pulsar allows, or e = 0, has no ' +
      'positive solution: 422 stating the allowed range.',
    tags: ['binaries'],
    caseSchema: MassesCase,
    resultSchema: MassesResult,
    prepare: (input) => prepareMasses(input),
  });
}
