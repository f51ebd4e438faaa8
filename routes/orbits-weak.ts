/**
 * POST /v1/orbits/precession and POST /v1/orbits/gyroscope: first post-Newtonian (weak-field)
 * orbit effects around any body: the periastron advance of a bound orbit (PPN gamma, beta), and
 * the geodetic and frame-dragging precession of a gyroscope on a circular orbit, with the drift
 * of a chosen spin direction on the sky.
 *
 * All the physics is in ../physics/weakfield.ts; this module reads the case, declares the
 * uncertain inputs with their physical domains, and shapes the reply.
 */
import type { FastifyInstance } from 'fastify';
import { Type, type Static } from '@sinclair/typebox';
import { C, G, JULIAN_YEAR } from '../physics/constants.js';
import { PhysicsDomainError } from '../physics/errors.js';
import * as kerr from '../physics/kerr.js';
import type { Measured, Outputs } from '../physics/uncertainty.js';
import {
  ARCSEC_PER_RAD,
  EARTH_GJ,
  JULIAN_CENTURY,
  MAS_PER_RAD,
  type Vec3,
  frameDraggingAveraged,
  frameDraggingMagnitude,
  geodeticRate,
  keplerPeriod,
  lenseThirringScale,
  lenseThirringScaleKerr,
  norm,
  orbitNormal,
  periastronAdvancePerOrbit,
  ppnPeriastronFactor,
  separatrixSemiLatusRectum,
  spinDrift,
} from '../physics/weakfield.js';
import { registerCaseRoute, type Prepared, type Warning } from '../server/cases.js';
import type { Config } from '../server/config.js';
import { VarList, fail, body as readBody, length, quantity, scalar, type BodyInfo } from '../server/inputs.js';
import { dimensional, dimensionless, radius } from '../server/outputs.js';
import { Body, LENGTH_UNITS, Provenance, Quantity, QuantityOut, RotatingBody, Scalar, ScalarOut, UncertaintyMethod, type QuantityInput } from '../server/schemas.js';

// ---------------------------------------------------------------------------
// Schemas

const ANGLE_UNITS = ['rad', 'deg', 'arcmin', 'arcsec', 'mas'] as const;

/** Threshold of the weak-field flag on GM/(c^2 r) (dimensionless). */
const WEAK_FIELD_LIMIT = 1e-3;

const PpnGamma = Scalar(
  'PPN parameter gamma (space curvature produced by unit rest mass), dimensionless, in [-10, 10]; default 1 (general relativity). May carry an uncertainty.',
  { minimum: -10, maximum: 10 },
);
const PpnBeta = Scalar(
  'PPN parameter beta (non-linearity in the superposition of gravity), dimensionless, in [-10, 10]; default 1 (general relativity). May carry an uncertainty.',
  { minimum: -10, maximum: 10 },
);

export const PrecessionCase = Type.Object(
  {
    body: Body,
    semi_major_axis: Quantity('Semi-major axis a of the bound orbit, measured from the centre of the body (or in rg = GM/c^2, rs = 2GM/c^2).', 'm', LENGTH_UNITS, { positive: true }),
    eccentricity: Scalar('Orbital eccentricity e, 0 <= e < 1 (dimensionless).', { minimum: 0, maximum: 1 }),
    ppn_gamma: Type.Optional(PpnGamma),
    ppn_beta: Type.Optional(PpnBeta),
    uncertainty_method: Type.Optional(UncertaintyMethod),
  },
  { additionalProperties: false, description: 'A test body on a bound orbit around one body (first post-Newtonian order).' },
);
type PrecessionCase = Static<typeof PrecessionCase>;

const Angle = (description: string) => Quantity(description, 'rad', ANGLE_UNITS);

const SpinDirection = Type.Object(
  {
    right_ascension: Angle(
      "Right ascension of the gyroscope's spin axis in the body's equatorial frame (counted from the frame's x axis, the same origin as ascending_node; for the Earth, the equinox).",
    ),
    declination: Angle("Declination of the gyroscope's spin axis above the body's equator, -pi/2..pi/2 (-90..90 deg); +pi/2 is along the body's spin."),
  },
  {
    additionalProperties: false,
    description:
      "Direction of the gyroscope's spin, e.g. toward a guide star, in the body's equatorial frame (z along the body's spin axis, x toward the reference direction). When given, the reply adds spin_drift: how fast this direction moves on the sky, and toward which way.",
  },
);

export const GyroscopeCase = Type.Object(
  {
    body: RotatingBody,
    r: Quantity('Radius of the circular orbit, measured from the centre of the body (or in rg = GM/c^2, rs = 2GM/c^2).', 'm', LENGTH_UNITS, { positive: true }),
    inclination: Angle(
      "Inclination i of the orbit: angle between the orbit normal (the orbit's angular momentum) and the body's spin axis, 0..pi: 0 prograde equatorial, pi/2 (90 deg) polar, pi retrograde equatorial.",
    ),
    ascending_node: Type.Optional(
      Angle("Right ascension of the orbit's ascending node in the body's equatorial frame (same origin as spin_direction.right_ascension). Default 0. Orients the vectors and the spin drift; the magnitudes do not depend on it."),
    ),
    spin_direction: Type.Optional(SpinDirection),
    ppn_gamma: Type.Optional(PpnGamma),
    uncertainty_method: Type.Optional(UncertaintyMethod),
  },
  { additionalProperties: false, description: 'A gyroscope on a circular orbit around one body (first post-Newtonian order, orbit-averaged).' },
);
type GyroscopeCase = Static<typeof GyroscopeCase>;

const R = (what: string) => QuantityOut(what, 'm', true);

const AdvancePerOrbitOut = Type.Object(
  {
    ...QuantityOut('Periastron advance per orbit.', 'rad').properties,
    arcsec: Type.Number({ description: 'The value in arcseconds (nominal; the uncertainty scales by the same factor).' }),
  },
  { description: 'Periastron advance per orbit, Delta omega = 6 pi GM/(c^2 a (1 - e^2)) x (2 + 2 gamma - beta)/3 (Will 2014).' },
);

const AdvanceRateOut = Type.Object(
  {
    ...QuantityOut('Mean periastron advance rate, Delta omega per orbit / period.', 'rad.s-1').properties,
    arcsec_per_century: Type.Number({ description: 'The value in arcseconds per Julian century (36525 d; nominal, the uncertainty scales by the same factor).' }),
    deg_per_yr: Type.Number({ description: 'The value in degrees per Julian year (365.25 d; nominal, the uncertainty scales by the same factor).' }),
  },
  { description: 'Mean periastron advance rate, Delta omega per orbit / period.' },
);

const PrecessionResult = Type.Object({
  period: QuantityOut("Orbital period P = 2 pi sqrt(a^3/GM) (Kepler's third law, test body).", 's'),
  periastron_advance_per_orbit: AdvancePerOrbitOut,
  periastron_advance_rate: AdvanceRateOut,
  semi_latus_rectum: R('Semi-latus rectum p = a (1 - e^2).'),
  periastron_distance: R('Periastron distance a (1 - e) from the centre of the body.'),
  weak_field_parameter: ScalarOut('GM/(c^2 a (1 - e^2)), dimensionless: the expansion parameter of the first post-Newtonian result (flagged above 1e-3).'),
  ppn_factor: ScalarOut('PPN weight (2 + 2 gamma - beta)/3, dimensionless (1 in general relativity).'),
  ...Provenance,
});

const RateOut = (description: string) =>
  Type.Object(
    {
      ...QuantityOut(description, 'rad.s-1').properties,
      mas_per_yr: Type.Number({ description: 'The value in milliarcseconds per Julian year (365.25 d; nominal, the uncertainty scales by the same factor).' }),
    },
    { description },
  );

const VectorOut = (description: string) =>
  Type.Object(
    {
      unit: Type.String({ description: 'Unit of the components (VOUnits): "rad.s-1".' }),
      x: ScalarOut('x component (toward the reference direction of the body\'s equatorial frame), rad.s-1.'),
      y: ScalarOut('y component (90 deg east of x in the body\'s equator), rad.s-1.'),
      z: ScalarOut("z component (along the body's spin axis), rad.s-1."),
    },
    { description: `${description} Components in the body's equatorial frame, rad.s-1.` },
  );

const DriftOut = (what: string) =>
  Type.Object(
    {
      rate: RateOut(`Angular speed of the spin direction on the sky due to the ${what} precession, |Omega x s|.`),
      north: RateOut(`Northward component d(dec)/dt of the drift due to the ${what} precession (toward the body's spin axis; signed).`),
      east: RateOut(`Eastward component cos(dec) d(ra)/dt of the drift due to the ${what} precession (toward increasing right ascension; signed).`),
    },
    { description: `Drift of the spin direction due to the ${what} precession: ds/dt = Omega x s.` },
  );

const GyroscopeResult = Type.Object({
  geodetic_rate: RateOut('Geodetic (de Sitter) precession rate, (3/2)(GM)^{3/2}/(c^2 r^{5/2}) x (1 + 2 gamma)/3, along the orbit normal.'),
  frame_dragging_rate: RateOut(
    'Magnitude of the orbit-averaged frame-dragging (Lense-Thirring/Schiff) precession, G J/(2 c^2 r^3) sqrt(1 + 3 cos^2 i) x (1 + gamma)/2: G J/(2 c^2 r^3) for a polar orbit.',
  ),
  total_rate: RateOut('Magnitude of the sum of the geodetic and orbit-averaged frame-dragging precession vectors.'),
  geodetic_vector: VectorOut('Geodetic precession vector, Omega_geo times the orbit normal.'),
  frame_dragging_vector: VectorOut('Orbit-averaged frame-dragging precession vector, (1 + gamma)/2 x G/(2 c^2 r^3) [J - 3 (J.L) L].'),
  total_vector: VectorOut('Sum of the geodetic and orbit-averaged frame-dragging precession vectors.'),
  orbit_normal: Type.Object(
    {
      x: ScalarOut('x component (dimensionless).'),
      y: ScalarOut('y component (dimensionless).'),
      z: ScalarOut('z component (dimensionless).'),
    },
    { description: "Unit orbit normal L = (sin i sin Omega, -sin i cos Omega, cos i) in the body's equatorial frame (Omega: ascending_node)." },
  ),
  angular_momentum: QuantityOut(
    'Spin angular momentum J of the body used for frame dragging: as given, from the "earth" preset (C/(M a^2) = 0.3307, Yoder 1995), or a* GM^2/(c G) from a black hole\'s spin (0 when none is given).',
    'kg.m2.s-1',
  ),
  weak_field_parameter: ScalarOut('GM/(c^2 r), dimensionless: the expansion parameter of the weak-field result (flagged above 1e-3).'),
  spin_drift: Type.Optional(
    Type.Object(
      {
        geodetic: DriftOut('geodetic'),
        frame_dragging: DriftOut('orbit-averaged frame-dragging'),
        total: DriftOut('total'),
      },
      { description: 'Present when spin_direction is given: the drift of that direction on the sky (rad.s-1, with mas/yr).' },
    ),
  ),
  ...Provenance,
});

// ---------------------------------------------------------------------------
// Provenance

const REFS = {
  will: 'Will 2014, Living Rev. Relativity 17, 4 (PPN perihelion shift and gyroscope precession)',
  cutler: 'Cutler, Kennefick & Poisson 1994, Phys. Rev. D 50, 3816 (separatrix of bound orbits)',
  desitter: 'de Sitter 1916, MNRAS 77, 155 (geodetic precession)',
  schiff: 'Schiff 1960, Phys. Rev. Lett. 4, 215 (gyroscope precession)',
  everitt: 'Everitt et al. 2011, Phys. Rev. Lett. 106, 221101 (Gravity Probe B)',
  yoder: "Yoder 1995, AGU Reference Shelf 1 (Earth's C/(M a^2) = 0.3307)",
};

// ---------------------------------------------------------------------------
// Reading inputs

/** A length that may be body-relative: its variable is in metres or in rg. */
function readLength(input: QuantityInput, pointer: string): { value: number; sigma: number; unit: 'm' | 'rg' } {
  const l = length(input, pointer);
  if (l.relative === 'rs') return { value: 2 * l.value, sigma: 2 * l.sigma, unit: 'rg' };
  if (l.relative === 'rg') return { value: l.value, sigma: l.sigma, unit: 'rg' };
  return { value: l.value, sigma: l.sigma, unit: 'm' };
}

function readAngle(input: QuantityInput, pointer: string): { value: number; sigma: number } {
  const q = quantity(input, pointer, 'angle');
  if (!Number.isFinite(q.value) || !Number.isFinite(q.sigma)) fail(pointer, `gives ${q.value} rad, outside the representable range`);
  return q;
}

function bodyVar(b: BodyInfo, vars: VarList): number {
  return vars.add({ name: b.gmPointer, value: b.gm.value, sigma: b.gm.sigma, lo: 0, hi: Infinity });
}

function ppnVar(input: PrecessionCase['ppn_gamma'], pointer: string, vars: VarList): number {
  const s = scalar(input, 1);
  return vars.add({ name: pointer, value: s.value, sigma: s.sigma, lo: -Infinity, hi: Infinity });
}

function isLinear(method: { kind: string } | undefined, vars: VarList): boolean {
  return method?.kind !== 'monte-carlo' && vars.list.some((v) => v.sigma > 0);
}

function weakFieldFlag(x: number, what: string): Warning[] {
  if (!(x > WEAK_FIELD_LIMIT)) return [];
  return [
    {
      code: 'weak-field-formula',
      message: `${what} = ${x.toExponential(2)} > ${WEAK_FIELD_LIMIT}: these are first post-Newtonian (weak-field) results, with relative errors of order ${what}`,
    },
  ];
}

// ---------------------------------------------------------------------------
// POST /v1/orbits/precession

function preparePrecession(input: PrecessionCase): Prepared {
  const vars = new VarList();
  const b = readBody(input.body, '/body');
  const preset = b.preset;
  if (preset && (b.spin.value !== 0 || b.spin.sigma > 0)) {
    fail(b.spinPointer, 'a preset body is modelled as a non-rotating point mass here: omit spin (spin is the dimensionless Kerr a* of a black hole given by mass or gm)');
  }
  const iGm = bodyVar(b, vars);
  const e = scalar(input.eccentricity, 0);
  if (!(e.value < 1)) fail('/eccentricity', `must be < 1 (a bound orbit: 0 <= e < 1); got ${e.value}`);
  const iE = vars.add({ name: '/eccentricity', value: e.value, sigma: e.sigma, lo: 0, hi: 1, loClosed: true });
  const a = readLength(input.semi_major_axis, '/semi_major_axis');
  const rgNominal = b.gm.value / C / C; // GM/c^2, m
  // Domain of a at the nominal e and GM: the periastron must clear a preset body's surface; for
  // any other body p = a (1 - e^2) must lie outside the separatrix (6 + 2e) GM/c^2.
  const loM = preset ? b.surfaceRadius! / (1 - e.value) : (separatrixSemiLatusRectum(e.value) * rgNominal) / ((1 - e.value) * (1 + e.value));
  const iA = vars.add({ name: '/semi_major_axis', value: a.value, sigma: a.sigma, lo: a.unit === 'rg' ? loM / rgNominal : loM, hi: Infinity });
  const iGamma = ppnVar(input.ppn_gamma, '/ppn_gamma', vars);
  const iBeta = ppnVar(input.ppn_beta, '/ppn_beta', vars);

  const compute = (x: readonly number[]): Outputs => {
    const gm = x[iGm];
    const ecc = x[iE];
    const rg = gm / C / C; // GM/c^2, m
    const aM = a.unit === 'rg' ? x[iA] * rg : x[iA];
    if (!(aM > 0 && aM < Infinity)) {
      throw new PhysicsDomainError(`a = ${x[iA]} GM/c^2 is ${aM} m, outside the representable range for GM/c^2 = ${rg} m`, 'a between 0 and 1e300 m when converted to metres', '/semi_major_axis');
    }
    const oneMinusE2 = (1 - ecc) * (1 + ecc);
    const p = aM * oneMinusE2; // semi-latus rectum, m
    const peri = aM * (1 - ecc); // periastron distance, m
    if (preset) {
      const R0 = b.surfaceRadius!;
      if (!(peri > R0)) {
        throw new PhysicsDomainError(
          `the orbit's periastron a (1 - e) = ${peri} m is inside the ${preset}'s reference radius ${R0} m: the orbit runs into the body`,
          `a (1 - e) > ${R0} m (periastron outside the body), i.e. a > ${R0 / (1 - ecc)} m at e = ${ecc}`,
          '/semi_major_axis',
        );
      }
    } else {
      const pRg = a.unit === 'rg' ? x[iA] * oneMinusE2 : p / rg;
      const ps = separatrixSemiLatusRectum(ecc); // 6 + 2e, GM/c^2 (Cutler, Kennefick & Poisson 1994)
      if (!(pRg > ps)) {
        throw new PhysicsDomainError(
          `no bound orbit has a (1 - e^2) = ${pRg} GM/c^2 at e = ${ecc}: it lies inside the separatrix of a Schwarzschild field (the body plunges)`,
          `a (1 - e^2) > (6 + 2e) GM/c^2 = ${ps * rg} m, i.e. a > ${(ps / oneMinusE2) * rg} m at e = ${ecc} (Cutler, Kennefick & Poisson 1994)`,
          '/semi_major_axis',
        );
      }
    }
    const period = keplerPeriod(gm, aM); // 2 pi sqrt(a^3/GM) (Kepler III), s
    const advance = periastronAdvancePerOrbit(gm, aM, ecc, x[iGamma], x[iBeta]); // 6 pi GM/(c^2 p) (2+2g-b)/3 (Will 2014), rad
    return {
      rg,
      period,
      advance,
      rate: advance / period, // rad/s
      p,
      peri,
      wf: rg / p, // GM/(c^2 a (1 - e^2))
      ppn: ppnPeriastronFactor(x[iGamma], x[iBeta]),
    };
  };

  return {
    vars: vars.list,
    method: input.uncertainty_method,
    compute,
    shape: (get, nominal) => {
      const adv = get('advance');
      const rate = get('rate');
      return {
        period: dimensional(get('period'), 's'),
        periastron_advance_per_orbit: { ...dimensional(adv, 'rad'), arcsec: adv.value * ARCSEC_PER_RAD },
        periastron_advance_rate: {
          ...dimensional(rate, 'rad.s-1'),
          arcsec_per_century: rate.value * JULIAN_CENTURY * ARCSEC_PER_RAD,
          deg_per_yr: (rate.value * JULIAN_YEAR * 180) / Math.PI,
        },
        semi_latus_rectum: radius(get('p'), nominal.rg),
        periastron_distance: radius(get('peri'), nominal.rg),
        weak_field_parameter: dimensionless(get('wf')),
        ppn_factor: dimensionless(get('ppn')),
      };
    },
    warnings: (nominal) => {
      const w = weakFieldFlag(nominal.wf, 'GM/(c^2 a (1 - e^2))');
      if (!preset && (b.spin.value !== 0 || b.spin.sigma > 0)) {
        w.push({
          code: 'spin-not-modelled',
          message: "the body's spin is not used here: the Lense-Thirring contribution to the periastron advance is not included (point-mass field)",
        });
      }
      if (preset === 'earth') {
        w.push({
          code: 'oblateness-not-modelled',
          message: "the Earth's oblateness (J2) turns the periastron of a satellite by far more (degrees per day in low orbit) than the relativistic advance given here, which it does not include",
        });
      }
      return w;
    },
    model: 'weak-field',
    references: preset ? [REFS.will] : [REFS.will, REFS.cutler],
  };
}

// ---------------------------------------------------------------------------
// POST /v1/orbits/gyroscope

/** Where the body's angular momentum comes from. */
type Spin = { kind: 'j'; idx: number } | { kind: 'spin'; idx: number } | { kind: 'earth' } | { kind: 'none' };

function readSpin(b: BodyInfo, input: GyroscopeCase['body'], vars: VarList): Spin {
  if (b.preset && (b.spin.value !== 0 || b.spin.sigma > 0)) {
    fail(b.spinPointer, 'a preset body is not a black hole: give its angular_momentum (kg.m2.s-1) instead of spin, or omit both (the "earth" preset has a published J)');
  }
  if (b.angularMomentum) {
    const j = b.angularMomentum;
    if (!Number.isFinite(j.value) || !Number.isFinite(j.sigma)) fail('/body/angular_momentum', `gives ${j.value} kg.m2.s-1, outside the representable range`);
    return { kind: 'j', idx: vars.add({ name: '/body/angular_momentum', value: j.value, sigma: j.sigma, lo: 0, hi: Infinity }) };
  }
  if (b.preset === 'earth') return { kind: 'earth' };
  if (b.preset) {
    fail('/body/angular_momentum', `is required with the "${b.preset}" preset for frame dragging: no published angular momentum of this body is built in; give J in kg.m2.s-1`);
  }
  if (input.spin !== undefined) {
    return { kind: 'spin', idx: vars.add({ name: b.spinPointer, value: b.spin.value, sigma: b.spin.sigma, lo: -1, hi: 1, loClosed: true, hiClosed: true }) };
  }
  return { kind: 'none' };
}

function putVector(out: Outputs, key: string, v: Vec3): void {
  out[`${key}_x`] = v.x;
  out[`${key}_y`] = v.y;
  out[`${key}_z`] = v.z;
}

function prepareGyroscope(input: GyroscopeCase): Prepared {
  const vars = new VarList();
  const b = readBody(input.body, '/body');
  const preset = b.preset;
  const iGm = bodyVar(b, vars);
  const spin = readSpin(b, input.body, vars);
  const rIn = readLength(input.r, '/r');
  const rgNominal = b.gm.value / C / C; // GM/c^2, m
  // Inner edge of r at the nominal inputs: a preset's surface, else the smallest circular photon
  // orbit (prograde equatorial, BPT72 eq. 2.18; 3 GM/c^2 without spin).
  const edgeRg = spin.kind === 'spin' ? kerr.photonOrbit(Math.abs(b.spin.value)) : 3;
  const loM = preset ? b.surfaceRadius! : edgeRg * rgNominal;
  const iR = vars.add({ name: '/r', value: rIn.value, sigma: rIn.sigma, lo: rIn.unit === 'rg' ? loM / rgNominal : loM, hi: Infinity });

  const inc = readAngle(input.inclination, '/inclination');
  if (!(inc.value >= 0 && inc.value <= Math.PI)) fail('/inclination', `must be between 0 and pi rad (0 and 180 deg); got ${inc.value} rad`);
  const iInc = vars.add({ name: '/inclination', value: inc.value, sigma: inc.sigma, lo: 0, hi: Math.PI, loClosed: true, hiClosed: true });
  const node = input.ascending_node === undefined ? { value: 0, sigma: 0 } : readAngle(input.ascending_node, '/ascending_node');
  const iNode = vars.add({ name: '/ascending_node', value: node.value, sigma: node.sigma, lo: -Infinity, hi: Infinity });
  let iRa = -1;
  let iDec = -1;
  if (input.spin_direction !== undefined) {
    const ra = readAngle(input.spin_direction.right_ascension, '/spin_direction/right_ascension');
    const dec = readAngle(input.spin_direction.declination, '/spin_direction/declination');
    if (!(Math.abs(dec.value) <= Math.PI / 2)) fail('/spin_direction/declination', `must be between -pi/2 and pi/2 rad (-90 and 90 deg); got ${dec.value} rad`);
    iRa = vars.add({ name: '/spin_direction/right_ascension', value: ra.value, sigma: ra.sigma, lo: -Infinity, hi: Infinity });
    iDec = vars.add({ name: '/spin_direction/declination', value: dec.value, sigma: dec.sigma, lo: -Math.PI / 2, hi: Math.PI / 2, loClosed: true, hiClosed: true });
  }
  const iGamma = ppnVar(input.ppn_gamma, '/ppn_gamma', vars);

  const compute = (x: readonly number[]): Outputs => {
    const gm = x[iGm];
    const rg = gm / C / C; // GM/c^2, m
    const r = rIn.unit === 'rg' ? x[iR] * rg : x[iR];
    if (!(r > 0 && r < Infinity)) {
      throw new PhysicsDomainError(`r = ${x[iR]} GM/c^2 is ${r} m, outside the representable range for GM/c^2 = ${rg} m`, 'r between 0 and 1e300 m when converted to metres', '/r');
    }
    if (preset) {
      const R0 = b.surfaceRadius!;
      if (!(r > R0)) {
        throw new PhysicsDomainError(`an orbit of radius r = ${r} m lies inside the ${preset}'s reference radius ${R0} m`, `r > ${R0} m (an orbit outside the body)`, '/r');
      }
    } else {
      const rRg = rIn.unit === 'rg' ? x[iR] : r / rg;
      const a = spin.kind === 'spin' ? x[spin.idx] : 0;
      const edge = spin.kind === 'spin' ? kerr.photonOrbit(Math.abs(a)) : 3; // BPT72 eq. 2.18, GM/c^2
      if (!(rRg > edge)) {
        throw new PhysicsDomainError(
          `no circular orbit of a massive body exists at r = ${rRg} GM/c^2 = ${r} m`,
          `r > ${edge} GM/c^2 = ${edge * rg} m (outside the innermost circular photon orbit, Bardeen, Press & Teukolsky 1972 eq. 2.18)`,
          '/r',
        );
      }
    }
    const gamma = x[iGamma];
    const i = x[iInc];
    const om = x[iNode];
    // G J_z/(c^2 r^3), rad/s (J along +z when positive)
    const scale =
      spin.kind === 'j'
        ? lenseThirringScale((G * x[spin.idx]) / C / C, r) // CODATA 2018 G
        : spin.kind === 'spin'
          ? lenseThirringScaleKerr(x[spin.idx], gm, r) // a* = cJ/(GM^2): a* c (GM/(c^2 r))^2/r
          : spin.kind === 'earth'
            ? lenseThirringScale(EARTH_GJ / C / C, r) // (C/(M a^2)) GM a^2 omega/c^2 (Yoder 1995; IERS 2010)
            : 0;
    if (!Number.isFinite(scale)) {
      throw new PhysicsDomainError(`the frame-dragging rate G J/(c^2 r^3) at r = ${r} m is beyond the representable range`, 'G J/(c^2 r^3) below about 1e300 rad/s (a larger r or a smaller J)', '/r');
    }
    const geo = geodeticRate(gm, r, gamma); // (gamma + 1/2) GM^{3/2}/(c^2 r^{5/2}) (de Sitter 1916; Will 2014), rad/s
    const L = orbitNormal(i, om);
    const geoV = { x: geo * L.x, y: geo * L.y, z: geo * L.z };
    const fdV = frameDraggingAveraged(scale, i, om, gamma); // (1+gamma)/2 G/(2c^2 r^3)[J - 3(J.L)L] (Schiff 1960), rad/s
    const totV = { x: geoV.x + fdV.x, y: geoV.y + fdV.y, z: geoV.z + fdV.z };
    const out: Outputs = {
      geo,
      fd: frameDraggingMagnitude(scale, i, gamma),
      tot: norm(totV),
      n_x: L.x,
      n_y: L.y,
      n_z: L.z,
      // |J| = |G J/(c^2 r^3)| r^3 c^2/G, kg m^2 s^-1, for display (CODATA 2018 G)
      j: spin.kind === 'j' ? x[spin.idx] : spin.kind === 'spin' ? (Math.abs(x[spin.idx]) * (gm / C) * (gm / G)) : spin.kind === 'earth' ? EARTH_GJ / G : 0,
      wf: rg / r, // GM/(c^2 r)
    };
    putVector(out, 'geo', geoV);
    putVector(out, 'fd', fdV);
    putVector(out, 'tot', totV);
    if (iRa >= 0) {
      const ra = x[iRa];
      const dec = x[iDec];
      // ds/dt = Omega x s on the local north/east directions (Schiff 1960); linear in Omega, so the
      // total is the sum of the two drifts (which keeps an exactly zero part exactly zero)
      const g = spinDrift(geoV, ra, dec);
      const f = spinDrift(fdV, ra, dec);
      const tn = g.north + f.north;
      const te = g.east + f.east;
      out.geo_dr = g.rate;
      out.geo_dn = g.north;
      out.geo_de = g.east;
      out.fd_dr = f.rate;
      out.fd_dn = f.north;
      out.fd_de = f.east;
      out.tot_dr = Math.hypot(tn, te);
      out.tot_dn = tn;
      out.tot_de = te;
    }
    return out;
  };

  const rate = (m: Measured) => ({ ...dimensional(m, 'rad.s-1'), mas_per_yr: m.value * JULIAN_YEAR * MAS_PER_RAD });
  const linear = isLinear(input.uncertainty_method, vars);
  let late: Warning[] = [];
  const refs = [REFS.desitter, REFS.schiff, REFS.will, REFS.everitt, ...(spin.kind === 'earth' ? [REFS.yoder] : [])];
  return {
    vars: vars.list,
    method: input.uncertainty_method,
    compute,
    shape: (get) => {
      const vector = (key: string) => ({ unit: 'rad.s-1', x: dimensionless(get(`${key}_x`)), y: dimensionless(get(`${key}_y`)), z: dimensionless(get(`${key}_z`)) });
      const drift = (key: string) => ({ rate: rate(get(`${key}_dr`)), north: rate(get(`${key}_dn`)), east: rate(get(`${key}_de`)) });
      const reply: Record<string, unknown> = {
        geodetic_rate: rate(get('geo')),
        frame_dragging_rate: rate(get('fd')),
        total_rate: rate(get('tot')),
        geodetic_vector: vector('geo'),
        frame_dragging_vector: vector('fd'),
        total_vector: vector('tot'),
        orbit_normal: { x: dimensionless(get('n_x')), y: dimensionless(get('n_y')), z: dimensionless(get('n_z')) },
        angular_momentum: dimensional(get('j'), 'kg.m2.s-1'),
        weak_field_parameter: dimensionless(get('wf')),
      };
      if (iRa >= 0) reply.spin_drift = { geodetic: drift('geo'), frame_dragging: drift('fd'), total: drift('tot') };
      // Near a zero magnitude (|Omega x s| or a norm), linear propagation of a modulus is not
      // meaningful; flag it when the uncertainty exceeds the value.
      late = [];
      if (linear) {
        const keys = ['fd', 'tot', ...(iRa >= 0 ? ['geo_dr', 'fd_dr', 'tot_dr'] : [])];
        const poor = keys.filter((k) => {
          const m = get(k);
          return m.uncertainty !== undefined && m.uncertainty > Math.abs(m.value);
        });
        if (poor.length > 0) {
          late.push({
            code: 'linear-uncertainty-unreliable',
            message: 'a rate magnitude is smaller than its first-order uncertainty: a magnitude near zero is not linear in the inputs, so its linear uncertainty is not trustworthy; use uncertainty_method monte-carlo',
          });
        }
      }
      return reply;
    },
    warnings: (nominal) => {
      const w = weakFieldFlag(nominal.wf, 'GM/(c^2 r)');
      if (spin.kind === 'none') {
        w.push({
          code: 'no-angular-momentum',
          message: "the body has no angular_momentum (or spin): frame dragging is zero here; give the body's J in kg.m2.s-1 for the Lense-Thirring precession",
        });
      }
      return [...w, ...late];
    },
    model: 'weak-field',
    references: refs,
  };
}

// ---------------------------------------------------------------------------

export async function orbitsWeakRoutes(app: FastifyInstance, opts: { config: Config }): Promise<void> {
  registerCaseRoute<PrecessionCase>(app, opts.config, {
    url: '/v1/orbits/precession',
    summary: 'Relativistic periastron advance of a bound orbit (weak field, PPN)',
    description:
      'First post-Newtonian periastron advance of a test body on a bound orbit of semi-major axis a and eccentricity e around any body: ' +
      'Delta omega = 6 pi GM/(c^2 a (1 - e^2)) x (2 + 2 gamma - beta)/3 per orbit (Will 2014), the Kepler period, and the mean rate ' +
      '(rad/s, arcsec per Julian century, deg per Julian year). PPN gamma and beta default to 1 (general relativity). ' +
      'A result with GM/(c^2 a (1 - e^2)) > 1e-3 is flagged (weak-field-formula). An orbit whose periastron is inside a preset body, ' +
      'or (other bodies) whose a (1 - e^2) is inside the Schwarzschild separatrix (6 + 2e) GM/c^2, is a 422. ' +
      'Not included: the Lense-Thirring and quadrupole (J2) contributions, and the planetary perturbations.',
    tags: ['orbits'],
    caseSchema: PrecessionCase,
    resultSchema: PrecessionResult,
    prepare: (input) => preparePrecession(input),
  });

  registerCaseRoute<GyroscopeCase>(app, opts.config, {
    url: '/v1/orbits/gyroscope',
    summary: 'Geodetic and frame-dragging precession of a gyroscope on a circular orbit (weak field)',
    description:
      'Precession of a gyroscope on a circular orbit of radius r and inclination i around a rotating body: the geodetic (de Sitter) precession ' +
      '(3/2)(GM)^{3/2}/(c^2 r^{5/2}) x (1 + 2 gamma)/3 along the orbit normal, and the frame-dragging (Lense-Thirring) precession of Schiff (1960) averaged ' +
      "over the orbit, (1 + gamma)/2 x G/(2 c^2 r^3) [J - 3 (J.L) L], as magnitudes (rad/s and mas/yr) and vectors in the body's equatorial frame. " +
      'With spin_direction (e.g. a guide star) the reply adds the drift of that direction on the sky (north and east components). ' +
      'J comes from body.angular_momentum, from the "earth" preset (C/(M a^2) = 0.3307, Yoder 1995: J = 5.86e33 kg m^2/s), or from a black hole\'s spin ' +
      '(G J = a* (GM)^2/c); the "sun" preset needs angular_momentum. Not included: the body\'s oblateness (J2) and the orbit\'s eccentricity; for Gravity Probe B ' +
      'the results agree with the published predictions (Everitt et al. 2011) to about 0.05 % (geodetic) and 0.5 % (frame dragging).',
    tags: ['orbits'],
    caseSchema: GyroscopeCase,
    resultSchema: GyroscopeResult,
    prepare: (input) => prepareGyroscope(input),
  });
}
