/**
 * POST /v1/tides and POST /v1/tides/disruption: tidal stretching and compression of a small
 * object falling radially toward a body (with the rod tension, the radius where a given limit is
 * reached and the proper time left from there), and the tidal disruption of a star by a black
 * hole (tidal radius, Hills mass) with the classical Roche limits of a satellite.
 *
 * All the physics is in ../physics/tides.ts (and ../physics/kerr.ts for horizons and marginally
 * bound orbits); this module reads the case, declares the uncertain inputs with their physical
 * domains, and shapes the reply.
 */
import type { FastifyInstance } from 'fastify';
import { Type, type Static, type TSchema } from '@sinclair/typebox';
import { C, G, G0, GM_SUN } from '../physics/constants.js';
import { PhysicsDomainError } from '../physics/errors.js';
import * as kerr from '../physics/kerr.js';
import {
  ROCHE_FLUID_COEFFICIENT,
  ROCHE_RIGID_COEFFICIENT,
  assertStarRadius,
  hillsGm,
  kerrAxisTidalRates,
  meanDensity,
  properTimeBetween,
  properTimeToSingularity,
  radialTidalRate,
  rocheLimit,
  rodMidpointTension,
  survivalRadiusForAcceleration,
  survivalRadiusForTension,
  tidalAcceleration,
  tidalRadius,
  transverseTidalRate,
} from '../physics/tides.js';
import type { Measured, Outputs, Variable } from '../physics/uncertainty.js';
import { DIMENSIONS } from '../physics/units.js';
import { registerCaseRoute, type Prepared, type Warning } from '../server/cases.js';
import type { Config } from '../server/config.js';
import { VarList, fail, body as readBody, length, massAsGm, quantity, scalar, type BodyInfo, type Uncertain } from '../server/inputs.js';
import { dimensional, dimensionless, radius } from '../server/outputs.js';
import { Body, LENGTH_UNITS, MASS_UNITS, Provenance, Quantity, QuantityOut, Scalar, ScalarOut, UncertaintyMethod, type QuantityInput } from '../server/schemas.js';

// ---------------------------------------------------------------------------
// Units of the inputs

const OBJECT_LENGTH_UNITS = ['m', 'km', 'cm', 'mm', 'um', 'nm'] as const;
const BODY_SIZE_UNITS = ['m', 'km', 'solRad', 'AU'] as const;
const ACCELERATION_UNITS = DIMENSIONS.acceleration.examples;
const FORCE_UNITS = DIMENSIONS.force.examples;
const DENSITY_UNITS = DIMENSIONS.density.examples;
type Family = 'acceleration' | 'force' | 'density';

/** Threshold on (object size)/r above which the linear (geodesic deviation) result is flagged. */
const SMALL_OBJECT_LIMIT = 1e-2;
/** Threshold on GM/(c^2 r) above which a Newtonian estimate is flagged as used in a strong field. */
const STRONG_FIELD_LIMIT = 1e-2;

// ---------------------------------------------------------------------------
// Schemas: POST /v1/tides

const LimitCase = Type.Union(
  [
    Type.Object(
      {
        acceleration: Quantity(
          'Largest tolerable tidal acceleration difference across the object (the radial stretch over `length`), e.g. 10 g0 = 98.0665 m/s^2 for a person.',
          'm.s-2',
          ACCELERATION_UNITS,
          { positive: true },
        ),
      },
      { additionalProperties: false, description: 'A limit on the radial stretch, as an acceleration difference (default unit m.s-2).' },
    ),
    Type.Object(
      {
        tension: Quantity('Largest tolerable tension at the middle of the object modelled as a uniform rod along the radial direction (needs `mass`).', 'N', FORCE_UNITS, {
          positive: true,
        }),
      },
      { additionalProperties: false, description: 'A limit on the rod tension (default unit N); needs the object\'s `mass`.' },
    ),
  ],
  {
    description:
      'Optional limit the object can bear: {"acceleration": ...} (m.s-2) on the radial stretch, or {"tension": ...} (N) on the tension at the middle of the rod (needs mass). When given, the reply adds survival_radius, where the limit is reached.',
  },
);

export const TidesCase = Type.Object(
  {
    body: Body,
    r: Quantity(
      "Distance of the object's centre from the centre of the body: the Schwarzschild (areal) radius, Boyer-Lindquist r for a spinning hole (or in rg = GM/c^2, rs = 2GM/c^2).",
      'm',
      LENGTH_UNITS,
      { positive: true },
    ),
    length: Quantity("Extent L of the object along the radial direction (e.g. a person's height, feet first).", 'm', OBJECT_LENGTH_UNITS, { positive: true }),
    width: Type.Optional(Quantity('Extent of the object across the radial direction, for lateral_compression. Default: length.', 'm', OBJECT_LENGTH_UNITS, { positive: true })),
    mass: Type.Optional(Quantity('Mass m of the object, for rod_tension (the object modelled as a uniform rod along the radial direction).', 'kg', MASS_UNITS, { positive: true })),
    limit: Type.Optional(LimitCase),
    uncertainty_method: Type.Optional(UncertaintyMethod),
  },
  { additionalProperties: false, description: 'A small object falling radially toward a body (tidal field of a radial geodesic).' },
);
type TidesCase = Static<typeof TidesCase>;

const AccelOut = (description: string) =>
  Type.Object(
    {
      ...QuantityOut(description, 'm.s-2').properties,
      g0: Type.Number({ description: 'The value in units of standard gravity g0 = 9.80665 m/s^2 (3rd CGPM 1901; nominal, the uncertainty scales by the same factor).' }),
    },
    { description },
  );

const R = (what: string) => QuantityOut(what, 'm', true);

const TidesResult = Type.Object({
  r: R('Radius of the object\'s centre, in m (and rg).'),
  radial_stretch: AccelOut('Tidal acceleration difference between the two ends of the object along the radial direction, 2GM L/r^3 (stretching; MTW eq. 31.4).'),
  lateral_compression: AccelOut('Tidal acceleration difference across the object\'s width perpendicular to the radial direction, GM w/r^3 (squeezing; MTW eq. 31.4).'),
  tidal_rates: Type.Object(
    {
      radial: QuantityOut('Radial eigenvalue of the tidal tensor, +2GM/r^3 (positive: stretching).', 's-2'),
      transverse: QuantityOut('Transverse eigenvalue of the tidal tensor, -GM/r^3 (negative: compression).', 's-2'),
    },
    { description: 'Eigenvalues of the tidal tensor in the freely falling frame (relative acceleration per unit separation, s-2).' },
  ),
  rod_tension: Type.Optional(QuantityOut('Tension at the middle of the object modelled as a uniform rod of mass m along the radial direction, (1/8) m L (2GM/r^3). Present when mass is given.', 'N')),
  spin_axis: Type.Optional(
    Type.Object(
      {
        radial_stretch: AccelOut('Radial stretch for a fall along the spin axis of the Kerr hole, 2GM r (r^2 - 3A^2)/(r^2 + A^2)^3 L with A = a* GM/c^2 (negative: a compression, inside r = sqrt(3) A).'),
        lateral_compression: AccelOut('Lateral compression for a fall along the spin axis, half the radial value times w/L (negative: a lateral stretch).'),
      },
      { description: 'Exact tidal accelerations for a fall along the spin axis of a spinning hole (Teukolsky 1973 Psi_2; Lima Junior, Crispino & Higuchi 2020). Present when the body has a spin.' },
    ),
  ),
  horizon: Type.Optional(R('Outer horizon of the hole, r+ = (1 + sqrt(1 - a*^2)) GM/c^2 (2GM/c^2 without spin). Absent for preset bodies.')),
  survival_radius: Type.Optional(R('Radius where the limit is reached: (2GM L/a_max)^{1/3} for an acceleration limit, (GM m L/(4 T_max))^{1/3} for a tension limit. Present when limit is given.')),
  outside_horizon: Type.Optional(Type.Boolean({ description: 'Whether survival_radius lies outside the horizon (the object is torn apart before it crosses the horizon). With limit, for black holes.' })),
  above_surface: Type.Optional(Type.Boolean({ description: 'Whether survival_radius lies above the reference surface of a preset body (else the limit is never reached outside the body). With limit, for preset bodies.' })),
  proper_time_to_singularity: Type.Optional(
    QuantityOut('Proper time from survival_radius to the singularity for a fall from rest at infinity, (2/3) r^{3/2}/sqrt(2GM) = (2/3) sqrt(L/a_max) for an acceleration limit (MTW §25.5, §31.4). With limit, for non-spinning holes.', 's'),
  ),
  proper_time_to_horizon: Type.Optional(
    QuantityOut('Proper time from survival_radius to the horizon for the same fall, (2/3)(r^{3/2} - r_h^{3/2})/sqrt(2GM); negative when the limit is reached only inside the horizon. With limit, for non-spinning holes.', 's'),
  ),
  ...Provenance,
});

// ---------------------------------------------------------------------------
// Schemas: POST /v1/tides/disruption

export const DisruptionCase = Type.Object(
  {
    body: Body,
    star: Type.Object(
      {
        mass: Quantity('Mass M* of the star (solMass converts through the nominal solar GM).', 'kg', MASS_UNITS, { positive: true }),
        radius: Quantity('Radius R* of the star.', 'm', BODY_SIZE_UNITS, { positive: true }),
      },
      { additionalProperties: false, description: 'The star that approaches the hole: its mass (default kg) and radius (default m).' },
    ),
    factor: Type.Optional(
      Scalar('Order-unity factor eta in r_t = eta R* (M/M*)^{1/3}, dimensionless, 0.01..100; default 1 (Rees 1988). Depends on the star\'s structure; may carry an uncertainty.', {
        minimum: 0.01,
        maximum: 100,
      }),
    ),
    satellite: Type.Optional(
      Type.Object(
        {
          density: Quantity('Mean density rho_m of the satellite.', 'kg.m-3', DENSITY_UNITS, { positive: true }),
        },
        { additionalProperties: false, description: 'A satellite of given mean density (default kg.m-3): the reply adds its classical Roche limits around the body.' },
      ),
    ),
    primary_radius: Type.Optional(
      Quantity(
        'Radius R_M of the body when it is not a black hole (a planet or star given by mass or gm): gives its mean density and whether the tidal radius and Roche limits lie above its surface. Preset bodies use their reference radius.',
        'm',
        BODY_SIZE_UNITS,
        { positive: true },
      ),
    ),
    uncertainty_method: Type.Optional(UncertaintyMethod),
  },
  { additionalProperties: false, description: 'A star (and optionally a satellite) near a body, usually a black hole.' },
);
type DisruptionCase = Static<typeof DisruptionCase>;

const MassOut = (description: string) =>
  Type.Object(
    {
      ...QuantityOut(`${description} Mass GM_H/G (CODATA 2018 G).`, 'kg').properties,
      solar_masses: Type.Number({ description: 'The value in nominal solar masses, GM_H/GM_sun (IAU 2015 B3; nominal, the uncertainty scales by the same factor).' }),
    },
    { description },
  );

const Pair = (what: string, make: (d: string) => TSchema, description: string) =>
  Type.Object(
    {
      prograde: make(`${what}, prograde equatorial orbit (co-rotating with the hole when spin > 0).`),
      retrograde: make(`${what}, retrograde equatorial orbit (counter-rotating when spin > 0).`),
    },
    { description },
  );

const Bool = (description: string) => Type.Boolean({ description });

const DisruptionResult = Type.Object({
  tidal_radius: R('Tidal radius r_t = eta R* (M/M*)^{1/3} (Rees 1988), m (and rg): a star whose pericentre lies inside it is torn apart.'),
  tidal_radius_over_horizon: ScalarOut('r_t / r+, dimensionless (r+ the outer horizon; 2GM/c^2 without spin).'),
  horizon: R('Outer horizon r+ of a black hole of this mass and spin, m (and rg).'),
  disrupted_outside_horizon: Bool('Whether r_t > r+: the disruption happens outside the horizon (below the Hills mass).'),
  marginally_bound: Pair('Radius of the marginally bound circular orbit r_mb (BPT72 eq. 2.19), m (and rg)', R, 'Marginally bound circular orbits: a parabolic star with its pericentre inside r_mb is captured (Kesden 2012).'),
  disrupted_outside_marginally_bound: Pair('Whether r_t > r_mb', Bool, 'Whether a star on a parabolic equatorial orbit is disrupted before it is captured (r_t > r_mb).'),
  hills_mass: MassOut('Hills mass: the hole mass for which r_t equals the outer horizon at this spin, GM_H = (eta R* c^2/x)^{3/2}/sqrt(GM*) with x = r+ c^2/(GM) (2 without spin). Heavier holes swallow the star whole.'),
  hills_mass_marginally_bound: Pair('Hole mass for which r_t equals r_mb (x = r_mb c^2/(GM))', MassOut, 'Hills mass with the capture radius r_mb of parabolic equatorial orbits instead of the horizon (Kesden 2012).'),
  mass_ratio: ScalarOut('M/M* = GM/GM*, dimensionless.'),
  star_density: QuantityOut('Mean density of the star, 3M*/(4 pi R*^3).', 'kg.m-3'),
  primary: Type.Optional(
    Type.Object(
      {
        radius: R('Radius of the body: the preset\'s reference radius or primary_radius.'),
        density: QuantityOut('Mean density of the body, 3M/(4 pi R_M^3).', 'kg.m-3'),
        disrupted_above_surface: Bool('Whether r_t lies above the body\'s surface.'),
      },
      { description: 'The body as an extended primary (preset bodies, or when primary_radius is given).' },
    ),
  ),
  roche_limit: Type.Optional(
    Type.Object(
      {
        rigid: R('Roche limit of a rigid spherical satellite, d = 1.26 R_M (rho_M/rho_m)^{1/3} = 2^{1/3} (3M/(4 pi rho_m))^{1/3}.'),
        fluid: R('Roche limit of a fluid (homogeneous incompressible, synchronously rotating) satellite, d = 2.455 R_M (rho_M/rho_m)^{1/3} (Darwin 1906; Chandrasekhar 1969; Roche 1849: 2.44).'),
        rigid_coefficient: Type.Number({ description: 'Coefficient used for the rigid limit, 2^{1/3} = 1.2599 (dimensionless).' }),
        fluid_coefficient: Type.Number({ description: 'Coefficient used for the fluid limit, 2.455 (Darwin 1906; Chandrasekhar 1969), dimensionless.' }),
        above_surface: Type.Optional(
          Type.Object(
            { rigid: Bool('Whether the rigid Roche limit lies above the body\'s surface.'), fluid: Bool('Whether the fluid Roche limit lies above the body\'s surface.') },
            { description: 'Present when the body\'s radius is known (preset or primary_radius).' },
          ),
        ),
        outside_horizon: Type.Optional(
          Type.Object(
            { rigid: Bool('Whether the rigid Roche limit lies outside the horizon.'), fluid: Bool('Whether the fluid Roche limit lies outside the horizon.') },
            { description: 'Present for black holes (bodies given by mass or gm without primary_radius).' },
          ),
        ),
      },
      { description: 'Classical Roche limits of the satellite around the body (present when satellite is given). Only the body\'s mass and the satellite\'s density enter: R_M rho_M^{1/3} = (3M/(4 pi))^{1/3}.' },
    ),
  ),
  ...Provenance,
});

// ---------------------------------------------------------------------------
// Provenance

const REFS = {
  mtw: 'Misner, Thorne & Wheeler 1973, Gravitation, eq. 31.4 and §25.5, §31.4 (tidal tensor and proper time of a radial fall in Schwarzschild)',
  teukolsky: 'Teukolsky 1973, ApJ 185, 635 (Kerr Weyl scalar Psi_2)',
  lima: 'Lima Junior, Crispino & Higuchi 2020, arXiv:2003.09506 (on-axis tidal forces in Kerr)',
  bpt: 'Bardeen, Press & Teukolsky 1972, ApJ 178, 347',
  rees: 'Rees 1988, Nature 333, 523 (tidal radius)',
  hills: 'Hills 1975, Nature 254, 295 (stars swallowed whole above a critical mass)',
  kesden: 'Kesden 2012, Phys. Rev. D 85, 024037 (capture of parabolic orbits inside r_mb)',
  roche: 'Roche 1849, Acad. Sci. Montpellier (fluid Roche limit, 2.44)',
  darwin: 'Darwin 1906, Phil. Trans. R. Soc. A 206, 161 (fluid coefficient 2.455)',
  chandra: 'Chandrasekhar 1969, Ellipsoidal Figures of Equilibrium, ch. 8 (Roche ellipsoids)',
};

// ---------------------------------------------------------------------------
// Reading inputs

function finiteOrFail(q: Uncertain, pointer: string, unit: string): Uncertain {
  if (!Number.isFinite(q.value) || !Number.isFinite(q.sigma) || !(q.value > 0)) fail(pointer, `gives ${q.value} ${unit}, outside the representable range (0, 1e300]`);
  return q;
}

/** An acceleration, force or density in SI. */
function readFamily(input: QuantityInput, pointer: string, family: Family): Uncertain {
  return finiteOrFail(quantity(input, pointer, family), pointer, DIMENSIONS[family].si);
}

/** A length in metres only (object sizes, star radii): body-relative units are refused. */
function readMetres(input: QuantityInput, pointer: string): Uncertain {
  if (typeof input !== 'number' && (input.unit === 'rg' || input.unit === 'rs')) {
    fail(pointer + '/unit', `the body-relative units rg and rs are not accepted for this size; give it in m, km, solRad, ... (default m)`);
  }
  return finiteOrFail(quantity(input, pointer, 'length'), pointer, 'm');
}

/** A mass as a mass parameter GM (m^3 s^-2): solMass and the like through their nominal GM, kg through G. */
const readMassAsGm = massAsGm;

/** A length that may be body-relative: its variable is in metres or in rg. */
function readRadius(input: QuantityInput, pointer: string): { value: number; sigma: number; unit: 'm' | 'rg' } {
  const l = length(input, pointer);
  if (l.relative === 'rs') return { value: 2 * l.value, sigma: 2 * l.sigma, unit: 'rg' };
  if (l.relative === 'rg') return { value: l.value, sigma: l.sigma, unit: 'rg' };
  finiteOrFail(l, pointer, 'm');
  return { value: l.value, sigma: l.sigma, unit: 'm' };
}

const positive = (name: string, q: Uncertain): Variable => ({ name, value: q.value, sigma: q.sigma, lo: 0, hi: Infinity });

function spinVar(b: BodyInfo, vars: VarList): number {
  if (!(b.spin.value !== 0 || b.spin.sigma > 0)) return -1;
  return vars.add({ name: b.spinPointer, value: b.spin.value, sigma: b.spin.sigma, lo: -1, hi: 1, loClosed: true, hiClosed: true });
}

function refusePresetSpin(b: BodyInfo): void {
  if (b.preset && (b.spin.value !== 0 || b.spin.sigma > 0)) {
    fail(b.spinPointer, 'a preset body is modelled as a non-rotating spherical body here: omit spin (spin is the dimensionless Kerr a* of a black hole given by mass or gm)');
  }
}

const accel = (m: Measured) => ({ ...dimensional(m, 'm.s-2'), g0: m.value / G0 });

// ---------------------------------------------------------------------------
// POST /v1/tides

function prepareTides(input: TidesCase): Prepared {
  const vars = new VarList();
  const b = readBody(input.body, '/body');
  refusePresetSpin(b);
  const preset = b.preset;
  const iGm = vars.add(positive(b.gmPointer, b.gm));
  const iSpin = spinVar(b, vars);
  const rIn = readRadius(input.r, '/r');
  const rgNominal = b.gm.value / C / C; // GM/c^2, m
  const loM = preset ? b.surfaceRadius! : 0;
  const iR = vars.add({ name: '/r', value: rIn.value, sigma: rIn.sigma, lo: rIn.unit === 'rg' ? loM / rgNominal : loM, hi: Infinity });
  const iL = vars.add(positive('/length', readMetres(input.length, '/length')));
  const iW = input.width === undefined ? iL : vars.add(positive('/width', readMetres(input.width, '/width')));
  const iM = input.mass === undefined ? -1 : vars.add(positive('/mass', finiteOrFail(quantity(input.mass, '/mass', 'mass'), '/mass', 'kg')));
  let limitKind: 'acceleration' | 'tension' | undefined;
  let iLim = -1;
  if (input.limit !== undefined) {
    if ('acceleration' in input.limit) {
      limitKind = 'acceleration';
      iLim = vars.add(positive('/limit/acceleration', readFamily(input.limit.acceleration, '/limit/acceleration', 'acceleration')));
    } else {
      limitKind = 'tension';
      if (iM < 0) fail('/mass', 'is required with limit.tension: the tension of the rod depends on its mass (kg)');
      iLim = vars.add(positive('/limit/tension', readFamily(input.limit.tension, '/limit/tension', 'force')));
    }
  }
  const hole = !preset;
  const spinning = iSpin >= 0;

  const compute = (x: readonly number[]): Outputs => {
    const gm = x[iGm];
    const rg = gm / C / C; // GM/c^2, m
    const r = rIn.unit === 'rg' ? x[iR] * rg : x[iR];
    if (!(r > 0 && r < Infinity)) {
      throw new PhysicsDomainError(`r = ${x[iR]} GM/c^2 is ${r} m, outside the representable range for GM/c^2 = ${rg} m`, 'r between 0 and 1e300 m when converted to metres', '/r');
    }
    if (preset && !(r > b.surfaceRadius!)) {
      throw new PhysicsDomainError(
        `r = ${r} m is inside the ${preset}'s reference radius ${b.surfaceRadius} m, where the field is not that of a point mass`,
        `r > ${b.surfaceRadius} m (outside the body)`,
        '/r',
      );
    }
    const L = x[iL];
    const w = x[iW];
    const kr = radialTidalRate(gm, r); // 2GM/r^3 (MTW eq. 31.4), s^-2
    const kt = transverseTidalRate(gm, r); // -GM/r^3 (MTW eq. 31.4), s^-2
    const out: Outputs = {
      rg,
      r,
      kr,
      kt,
      stretch: tidalAcceleration(kr, L), // 2GM L/r^3, m/s^2
      squeeze: -tidalAcceleration(kt, w), // GM w/r^3, m/s^2
      size: Math.max(L, w) / r,
    };
    if (iM >= 0) out.tension = rodMidpointTension(x[iM], L, kr); // (1/8) m L 2GM/r^3, N
    const a = spinning ? x[iSpin] : 0;
    if (hole) out.rh = rg * kerr.horizonOuter(a); // r+ = (1 + sqrt(1 - a^2)) GM/c^2 (BPT72), m
    if (spinning) {
      const axis = kerrAxisTidalRates(gm, r, a); // -2 Re Psi_2 at theta = 0 (Teukolsky 1973), s^-2
      out.ax_stretch = tidalAcceleration(axis.radial, L);
      out.ax_squeeze = -tidalAcceleration(axis.transverse, w);
    }
    if (limitKind) {
      const rl =
        limitKind === 'acceleration'
          ? survivalRadiusForAcceleration(gm, L, x[iLim]) // (2GM L/a)^{1/3}, m
          : survivalRadiusForTension(gm, x[iM], L, x[iLim]); // (GM m L/(4T))^{1/3}, m
      out.rl = rl;
      if (hole && !spinning) {
        out.tau_sing = properTimeToSingularity(gm, rl); // (2/3) r^{3/2}/sqrt(2GM) (MTW §25.5), s
        out.tau_h = properTimeBetween(gm, rl, out.rh); // (2/3)(r^{3/2} - r_h^{3/2})/sqrt(2GM), s
      }
    }
    return out;
  };

  return {
    vars: vars.list,
    method: input.uncertainty_method,
    compute,
    shape: (get, nominal) => {
      const rg = nominal.rg;
      const reply: Record<string, unknown> = {
        r: radius(get('r'), rg),
        radial_stretch: accel(get('stretch')),
        lateral_compression: accel(get('squeeze')),
        tidal_rates: { radial: dimensional(get('kr'), 's-2'), transverse: dimensional(get('kt'), 's-2') },
      };
      if (iM >= 0) reply.rod_tension = dimensional(get('tension'), 'N');
      if (spinning) reply.spin_axis = { radial_stretch: accel(get('ax_stretch')), lateral_compression: accel(get('ax_squeeze')) };
      if (hole) reply.horizon = radius(get('rh'), rg);
      if (limitKind) {
        reply.survival_radius = radius(get('rl'), rg);
        if (hole) reply.outside_horizon = nominal.rl > nominal.rh;
        else reply.above_surface = nominal.rl > b.surfaceRadius!;
        if (hole && !spinning) {
          reply.proper_time_to_singularity = dimensional(get('tau_sing'), 's');
          reply.proper_time_to_horizon = dimensional(get('tau_h'), 's');
        }
      }
      return reply;
    },
    warnings: (nominal) => {
      const w: Warning[] = [];
      if (spinning) {
        const diff = nominal.ax_stretch / nominal.stretch - 1;
        const size = Number.isFinite(diff) ? ` (radial stretch ${(100 * diff).toPrecision(3)} % different here)` : '';
        w.push({
          code: 'schwarzschild-form-for-spin',
          message:
            `the hole spins (a* = ${b.spin.value}): radial_stretch, lateral_compression, rod_tension and survival_radius use the Schwarzschild radial-fall tidal tensor ` +
            `(2GM/r^3 radially, exact for a* = 0); in Kerr the tidal field depends on the path. For a fall along the spin axis the exact values are in spin_axis ` +
            `${size}${limitKind ? '; the proper times to the horizon and the singularity are not given for a spinning hole' : ''}`,
        });
      }
      if (hole && nominal.r < nominal.rh) {
        w.push({
          code: 'inside-horizon',
          message: `r = ${(nominal.r / nominal.rg).toPrecision(4)} GM/c^2 is inside the horizon (${(nominal.rh / nominal.rg).toPrecision(4)} GM/c^2): the object cannot stay there; the values hold for its radial fall through r`,
        });
      }
      if (nominal.size > SMALL_OBJECT_LIMIT) {
        w.push({
          code: 'object-not-small',
          message: `the object's size is ${nominal.size.toPrecision(3)} of r (> ${SMALL_OBJECT_LIMIT}): the tidal (geodesic deviation) result is first order in size/r, with relative errors of that order`,
        });
      }
      if (limitKind && preset && !(nominal.rl > b.surfaceRadius!)) {
        w.push({
          code: 'limit-not-reached-above-surface',
          message: `the limit would be reached at r = ${nominal.rl.toPrecision(6)} m, inside the ${preset}'s reference radius ${b.surfaceRadius} m: it is never reached above the surface (the field inside the body is not that of a point mass)`,
        });
      }
      return w;
    },
    model: spinning ? 'kerr' : 'schwarzschild',
    references: spinning ? [REFS.mtw, REFS.teukolsky, REFS.lima, REFS.bpt] : [REFS.mtw],
  };
}

// ---------------------------------------------------------------------------
// POST /v1/tides/disruption

function prepareDisruption(input: DisruptionCase): Prepared {
  const vars = new VarList();
  const b = readBody(input.body, '/body');
  refusePresetSpin(b);
  const preset = b.preset;
  const iGm = vars.add(positive(b.gmPointer, b.gm));
  const iSpin = spinVar(b, vars);
  const iGmStar = vars.add(positive('/star/mass', readMassAsGm(input.star.mass, '/star/mass')));
  const iRStar = vars.add(positive('/star/radius', readMetres(input.star.radius, '/star/radius')));
  const eta = scalar(input.factor, 1);
  const iEta = vars.add(positive('/factor', eta));
  const iRho = input.satellite === undefined ? -1 : vars.add(positive('/satellite/density', readFamily(input.satellite.density, '/satellite/density', 'density')));
  if (preset && input.primary_radius !== undefined) {
    fail('/primary_radius', `the "${preset}" preset has its own reference radius (${b.surfaceRadius} m): omit primary_radius`);
  }
  const iRp = input.primary_radius === undefined ? -1 : vars.add(positive('/primary_radius', readMetres(input.primary_radius, '/primary_radius')));
  const spinning = iSpin >= 0;
  const surface = preset !== undefined || iRp >= 0;

  const compute = (x: readonly number[]): Outputs => {
    const gm = x[iGm];
    const a = spinning ? x[iSpin] : 0;
    const gmStar = x[iGmStar];
    const rStar = x[iRStar];
    const e = x[iEta];
    assertStarRadius(gmStar, rStar, '/star/radius');
    const rg = gm / C / C; // GM/c^2, m
    const xh = kerr.horizonOuter(a); // r+ c^2/GM (BPT72)
    const xPro = kerr.marginallyBound(a); // r_mb c^2/GM, prograde (BPT72 eq. 2.19)
    const xRetro = kerr.marginallyBound(-a);
    const rt = tidalRadius(e, rStar, gm, gmStar); // eta R* (M/M*)^{1/3} (Rees 1988), m
    const out: Outputs = {
      rg,
      rt,
      rh: rg * xh,
      rt_rh: rt / (rg * xh),
      mb_pro: rg * xPro,
      mb_retro: rg * xRetro,
      hills: hillsGm(e, rStar, gmStar, xh) / G, // (eta R* c^2/x)^{3/2}/sqrt(GM*) / G (Hills 1975), kg
      hills_pro: hillsGm(e, rStar, gmStar, xPro) / G,
      hills_retro: hillsGm(e, rStar, gmStar, xRetro) / G,
      ratio: gm / gmStar,
      rho_star: meanDensity(gmStar, rStar), // 3M*/(4 pi R*^3), kg/m^3
    };
    if (surface) {
      const rp = preset ? b.surfaceRadius! : x[iRp];
      if (!preset && !(rp > rg * xh)) {
        throw new PhysicsDomainError(
          `a body of radius ${rp} m lies inside the horizon ${rg * xh} m of its own mass: it would be a black hole`,
          `primary_radius > r+ = ${rg * xh} m (or omit primary_radius for a black hole)`,
          '/primary_radius',
        );
      }
      out.rp = rp;
      out.rho_p = meanDensity(gm, rp); // 3M/(4 pi R_M^3), kg/m^3
    }
    if (iRho >= 0) {
      out.roche_rigid = rocheLimit(ROCHE_RIGID_COEFFICIENT, gm, x[iRho]); // 2^{1/3} (3M/(4 pi rho_m))^{1/3}, m
      out.roche_fluid = rocheLimit(ROCHE_FLUID_COEFFICIENT, gm, x[iRho]); // 2.455 (3M/(4 pi rho_m))^{1/3} (Darwin 1906), m
    }
    return out;
  };

  const mass = (m: Measured) => ({ ...dimensional(m, 'kg'), solar_masses: (m.value * G) / GM_SUN });
  return {
    vars: vars.list,
    method: input.uncertainty_method,
    compute,
    shape: (get, nominal) => {
      const rg = nominal.rg;
      const reply: Record<string, unknown> = {
        tidal_radius: radius(get('rt'), rg),
        tidal_radius_over_horizon: dimensionless(get('rt_rh')),
        horizon: radius(get('rh'), rg),
        disrupted_outside_horizon: nominal.rt > nominal.rh,
        marginally_bound: { prograde: radius(get('mb_pro'), rg), retrograde: radius(get('mb_retro'), rg) },
        disrupted_outside_marginally_bound: { prograde: nominal.rt > nominal.mb_pro, retrograde: nominal.rt > nominal.mb_retro },
        hills_mass: mass(get('hills')),
        hills_mass_marginally_bound: { prograde: mass(get('hills_pro')), retrograde: mass(get('hills_retro')) },
        mass_ratio: dimensionless(get('ratio')),
        star_density: dimensional(get('rho_star'), 'kg.m-3'),
      };
      if (surface) {
        reply.primary = { radius: radius(get('rp'), rg), density: dimensional(get('rho_p'), 'kg.m-3'), disrupted_above_surface: nominal.rt > nominal.rp };
      }
      if (iRho >= 0) {
        const roche: Record<string, unknown> = {
          rigid: radius(get('roche_rigid'), rg),
          fluid: radius(get('roche_fluid'), rg),
          rigid_coefficient: ROCHE_RIGID_COEFFICIENT,
          fluid_coefficient: ROCHE_FLUID_COEFFICIENT,
        };
        if (surface) roche.above_surface = { rigid: nominal.roche_rigid > nominal.rp, fluid: nominal.roche_fluid > nominal.rp };
        else roche.outside_horizon = { rigid: nominal.roche_rigid > nominal.rh, fluid: nominal.roche_fluid > nominal.rh };
        reply.roche_limit = roche;
      }
      return reply;
    },
    warnings: (nominal) => {
      const w: Warning[] = [];
      if (preset) {
        w.push({
          code: 'not-a-black-hole',
          message: `the "${preset}" preset is not a black hole: horizon, marginally_bound and the Hills masses are those of a black hole of the same mass and spin; see primary for the body's surface`,
        });
      } else if (iRp >= 0) {
        w.push({
          code: 'not-a-black-hole',
          message: 'with primary_radius the body is an extended body, not a black hole: horizon, marginally_bound and the Hills masses are those of a black hole of the same mass and spin',
        });
      }
      const strong = nominal.rg / nominal.rt;
      if (strong > STRONG_FIELD_LIMIT) {
        w.push({
          code: 'newtonian-in-strong-field',
          message:
            `the tidal radius is ${(1 / strong).toPrecision(3)} GM/c^2 (GM/(c^2 r_t) = ${strong.toPrecision(3)} > ${STRONG_FIELD_LIMIT}): r_t and the Hills masses are Newtonian estimates, ` +
            'and relativistic tidal fields change them by factors of order unity this close to the hole (Kesden 2012)',
        });
      }
      if (iRho >= 0 && nominal.rg / nominal.roche_rigid > STRONG_FIELD_LIMIT) {
        w.push({
          code: 'roche-newtonian-in-strong-field',
          message: `the rigid Roche limit is ${(nominal.roche_rigid / nominal.rg).toPrecision(3)} GM/c^2: the classical (Newtonian) Roche limits are not reliable within about 100 GM/c^2`,
        });
      }
      if (!(nominal.rt > nominal.rh) && !preset && iRp < 0) {
        w.push({
          code: 'swallowed-whole',
          message: 'r_t is inside the horizon: the hole is heavier than the Hills mass and the star crosses the horizon before it is disrupted (no flare)',
        });
      }
      return w;
    },
    model: preset ? 'weak-field' : spinning ? 'kerr' : 'schwarzschild',
    references: [REFS.rees, REFS.hills, REFS.bpt, REFS.kesden, ...(iRho >= 0 ? [REFS.roche, REFS.darwin, REFS.chandra] : [])],
  };
}

// ---------------------------------------------------------------------------

export async function tidesRoutes(app: FastifyInstance, opts: { config: Config }): Promise<void> {
  registerCaseRoute<TidesCase>(app, opts.config, {
    url: '/v1/tides',
    summary: 'Tidal stretching and compression of a small object falling toward a body',
    description:
      'Tidal accelerations across a small object of length L (and width w) whose centre falls radially at radius r: the radial stretch 2GM L/r^3 and the ' +
      'lateral compression GM w/r^3, in m/s^2 and in g0. These are the eigenvalues of the tidal tensor in the freely falling frame, exact for radial geodesics ' +
      'in Schwarzschild at any speed and any r > 0, inside the horizon too (MTW eq. 31.4); they coincide with the Newtonian values. With mass, the tension at the ' +
      'middle of the object as a uniform radial rod, (1/8) m L 2GM/r^3. With limit (an acceleration difference in m.s-2 or a tension in N), the survival_radius where ' +
      'it is reached, whether that is outside the horizon (or above a preset body\'s surface), and the proper time left from there to the horizon and to the ' +
      'singularity for a fall from rest at infinity, (2/3) r^{3/2}/sqrt(2GM). For a spinning hole the same Schwarzschild form is used (flagged), and spin_axis gives ' +
      'the exact Kerr values for a fall along the spin axis. Results are first order in size/r (flagged above 1e-2).',
    tags: ['tides'],
    caseSchema: TidesCase,
    resultSchema: TidesResult,
    prepare: (input) => prepareTides(input),
  });

  registerCaseRoute<DisruptionCase>(app, opts.config, {
    url: '/v1/tides/disruption',
    summary: 'Tidal disruption of a star by a black hole: tidal radius, Hills mass, Roche limits',
    description:
      'Tidal radius r_t = eta R* (M/M*)^{1/3} of a star near a hole (Rees 1988; eta defaults to 1), its ratio to the horizon, whether the star is disrupted ' +
      'outside the horizon and outside the marginally bound orbit (the capture radius of parabolic equatorial orbits, BPT72; Kesden 2012), and the Hills mass: ' +
      'the hole mass for which r_t equals the horizon, GM_H = (eta R* c^2/x)^{3/2}/sqrt(GM*) with x = r+ c^2/GM (x = 2 without spin; Hills 1975), and the same ' +
      'with r_mb. With satellite.density, the classical Roche limits d = 1.26 R_M (rho_M/rho_m)^{1/3} (rigid) and 2.455 R_M (rho_M/rho_m)^{1/3} ' +
      '(fluid; Darwin 1906 and Chandrasekhar 1969, Roche 1849 gave 2.44): since R_M rho_M^{1/3} = (3M/(4 pi))^{1/3}, only the body\'s mass enters. ' +
      'For a preset body, or with primary_radius, the reply adds the body\'s density and whether each radius lies above its surface. All estimates are Newtonian ' +
      '(flagged within 100 GM/c^2).',
    tags: ['tides'],
    caseSchema: DisruptionCase,
    resultSchema: DisruptionResult,
    prepare: (input) => prepareDisruption(input),
  });
}
