/**
 * POST /v1/clock-rate and POST /v1/clock-rate/inversion: how fast a clock ticks in the field of a
 * black hole (Schwarzschild, Kerr) or of a preset body (weak field), against a clock at rest at
 * infinity, the geoid (TT) or another clock; and where a clock ticks at a requested rate.
 *
 * All the physics is in ../physics/clocks.ts (and ./redshift.ts, ./kerr.ts); this module reads the
 * case, declares the uncertain inputs with their physical domains, and shapes the reply. Radii
 * inside are in rg = GM/c^2 for black holes and in metres for preset bodies.
 */
import type { FastifyInstance } from 'fastify';
import { Type, type Static } from '@sinclair/typebox';
import { C, L_G } from '../physics/constants.js';
import {
  type ClockRate,
  type ClockTarget,
  circularOrbitClock,
  circularOrbitClockRadius,
  circularOrbitClockRadiusSI,
  circularOrbitClockSI,
  clockRateFromLapse,
  eccentricOrbitClockAmplitude,
  fractionalOffset,
  geoidLnRate,
  lapseTargetFromClock,
  movingClockSchwarzschildHeight,
  movingClockSI,
  staticClockKerrHeight,
  staticClockPositionKerr,
  staticClockRadiusSI,
  staticClockSI,
} from '../physics/clocks.js';
import { PhysicsDomainError } from '../physics/errors.js';
import * as kerr from '../physics/kerr.js';
import type { Measured, Outputs } from '../physics/uncertainty.js';
import { registerCaseRoute, type Prepared, type Warning } from '../server/cases.js';
import type { Config } from '../server/config.js';
import { VarList, fail, body as readBody, length, quantity, scalar, type BodyInfo } from '../server/inputs.js';
import { dimensional, dimensionless, radius } from '../server/outputs.js';
import { InputError, joinPointer } from '../server/problems.js';
import { Body, OrbitDirection, LENGTH_UNITS, Provenance, Quantity, QuantityOut, Scalar, ScalarOut, UncertaintyMethod, type QuantityInput } from '../server/schemas.js';

// ---------------------------------------------------------------------------
// Schemas

const SPEED_UNITS = ['m/s', 'km/s', 'm.s-1'] as const;
const ANGLE_UNITS = ['rad', 'deg', 'arcsec'] as const;
const TIME_UNITS = ['s', 'ms', 'us', 'min', 'h', 'd', 'yr'] as const;

const MotionSchema = (kinds: readonly string[], description: string) =>
  Type.Unsafe<'static' | 'circular' | 'moving'>({ type: 'string', enum: [...kinds], description });

const Direction = OrbitDirection;

const PolarAngle = Quantity(
  'Static clocks only: polar angle theta from the spin axis (Boyer-Lindquist), 0..pi; matters only for a spinning hole. Default pi/2 (equatorial plane).',
  'rad',
  ANGLE_UNITS,
);

const clockFields = {
  r: Type.Optional(
    Quantity(
      'Radius of the clock: Boyer-Lindquist r around a black hole, areal (Schwarzschild) radius around a preset body. Give exactly one of r, altitude or height.',
      'm',
      LENGTH_UNITS,
      { positive: true },
    ),
  ),
  altitude: Type.Optional(
    Quantity(
      'Preset bodies only, instead of r: height above the body\'s reference radius (for "earth" the IERS Conventions 2010 equatorial radius 6378136.6 m, for "sun" the IAU 2015 nominal radius 6.957e8 m); may be negative.',
      'm',
      LENGTH_UNITS,
    ),
  ),
  height: Type.Optional(
    Quantity(
      'Black holes only (mass or gm), instead of r: height above the outer horizon, r - r+ (Boyer-Lindquist). Keeps full precision arbitrarily close to the horizon.',
      'm',
      LENGTH_UNITS,
    ),
  ),
  speed: Type.Optional(
    Quantity('Moving clocks only (required there): speed measured by the local static observer, 0 <= speed < c. Around the Earth: the speed in the non-rotating geocentric frame.', 'm.s-1', SPEED_UNITS),
  ),
  polar_angle: Type.Optional(PolarAngle),
  direction: Type.Optional(Direction),
};

const MOTION_TEXT =
  '"static": at rest relative to the distant stars (Kerr: any polar angle, outside the ergosphere; a clock fixed on the rotating Earth is "moving" with its rotation speed); ' +
  '"circular": on a circular equatorial geodesic orbit (Kerr, prograde or retrograde; outside the photon orbit; the orbital speed follows from r); ' +
  '"moving": at r with the given local speed relative to static observers (Schwarzschild or preset bodies).';

export const Clock = Type.Object(
  { motion: MotionSchema(['static', 'circular', 'moving'], `How the clock moves. ${MOTION_TEXT}`), ...clockFields },
  { additionalProperties: false, description: 'A clock: its motion and where it is (exactly one of r, altitude or height).' },
);
type ClockInput = Static<typeof Clock>;

const Reference = Type.Union(
  [
    Type.Unsafe<'infinity' | 'geoid'>({
      type: 'string',
      enum: ['infinity', 'geoid'],
      description:
        '"infinity": a clock at rest far away (coordinate time; for the Earth TCG). "geoid": clocks on the geoid, i.e. TT, through L_G = 6.969290134e-10 (IAU 2000 Resolution B1.9, IERS Conventions 2010); "earth" preset only.',
    }),
    Clock,
  ],
  { description: 'What the fractional offset is measured against: "infinity" (default), "geoid", or another clock around the same body.' },
);
type ReferenceInput = Static<typeof Reference>;

export const ClockRateCase = Type.Object(
  {
    body: Body,
    clock: Clock,
    reference: Type.Optional(Reference),
    interval: Type.Optional(Quantity('Interval over which the offset accumulates (offset_per_interval = fractional_offset x interval). Default 1 d = 86400 s.', 's', TIME_UNITS, { positive: true })),
    orbit: Type.Optional(
      Type.Object(
        {
          semi_major_axis: Quantity('Semi-major axis of the clock\'s orbit, measured from the centre (replaces the clock\'s r).', 'm', LENGTH_UNITS, { positive: true }),
          eccentricity: Scalar('Orbital eccentricity e, 0 <= e < 1 (dimensionless).', { minimum: 0, maximum: 1 }),
        },
        {
          additionalProperties: false,
          description:
            'A clock on an eccentric Keplerian orbit (clock.motion "circular", no r/altitude/height): the mean rate is that of the circular orbit of radius a (exact at first order in GM/(a c^2)), and the reply adds the amplitude of the periodic term (IS-GPS-200).',
        },
      ),
    ),
    uncertainty_method: Type.Optional(UncertaintyMethod),
  },
  { additionalProperties: false, description: 'One clock around one body, and what to compare it with.' },
);
type ClockRateCase = Static<typeof ClockRateCase>;

export const ClockInversionCase = Type.Object(
  {
    body: Body,
    clock: Type.Object(
      {
        motion: MotionSchema(['static', 'circular'], 'Which clock to place: "static" (at rest; Kerr: at the given polar angle) or "circular" (circular equatorial geodesic orbit).'),
        polar_angle: Type.Optional(PolarAngle),
        direction: Type.Optional(Direction),
      },
      { additionalProperties: false, description: 'The kind of clock to place (no position: that is what is solved for).' },
    ),
    target: Type.Object(
      {
        dilation: Type.Optional(Scalar('Target dilation dt/dtau against a clock at infinity (dimensionless, > 1).', { minimum: -1e300, maximum: 1e300 })),
        rate: Type.Optional(Scalar('Target rate dtau/dt against a clock at infinity (dimensionless, 0 < rate < 1).', { minimum: -1e300, maximum: 1e300 })),
        fractional_offset: Type.Optional(
          Scalar('Target fractional offset rate/rate_reference - 1 (dimensionless; > 0 when the clock runs fast). Needs reference.', { minimum: -1e300, maximum: 1e300 }),
        ),
        reference: Type.Optional(Reference),
      },
      { additionalProperties: false, description: 'Exactly one of dilation, rate, or fractional_offset with its reference.' },
    ),
    uncertainty_method: Type.Optional(UncertaintyMethod),
  },
  { additionalProperties: false, description: 'Where does a clock run at the requested rate?' },
);
type ClockInversionCase = Static<typeof ClockInversionCase>;

const R = (what: string) => QuantityOut(what, 'm', true);
const Bool = (d: string) => Type.Optional(Type.Boolean({ description: d }));

const PositionOut = {
  r: R('Radius of the clock (Boyer-Lindquist r for a black hole, areal radius for a preset body).'),
  height_above_horizon: Type.Optional(R('Black holes: height above the outer horizon, r - r+.')),
  altitude: Type.Optional(QuantityOut('Preset bodies: height above the reference radius (IERS 2010 equatorial radius for "earth").', 'm')),
  stable: Bool('Circular orbits: true when r >= r_ISCO (Bardeen, Press & Teukolsky 1972 eq. 2.21).'),
};

const RateOut = {
  rate: ScalarOut('dtau/dt: proper time of the clock per unit time of a clock at rest at infinity (dimensionless).'),
  rate_minus_one: ScalarOut('rate - 1, to full relative precision (dimensionless, <= 0).'),
  dilation: ScalarOut('dt/dtau = 1/rate (dimensionless, >= 1).'),
  dilation_minus_one: ScalarOut('dilation - 1, to full relative precision (dimensionless, >= 0).'),
};

const ReferenceOut = Type.Object(
  {
    kind: Type.String({ description: '"infinity", "geoid" or "clock".' }),
    rate: ScalarOut('dtau/dt of the reference against a clock at infinity (dimensionless; 1 - L_G for the geoid).'),
    rate_minus_one: ScalarOut('Reference rate - 1 (dimensionless).'),
    ...PositionOut,
    r: Type.Optional(PositionOut.r),
  },
  { description: 'The reference the fractional offset is measured against.' },
);

const ClockRateResult = Type.Object({
  ...RateOut,
  fractional_offset: ScalarOut('rate / rate_reference - 1 (dimensionless; > 0 when the clock runs fast), computed as expm1(ln rate - ln rate_reference).'),
  offset_per_interval: QuantityOut('Time the clock gains (> 0) or loses against the reference over the interval: fractional_offset x interval.', 's'),
  interval: QuantityOut('The interval used.', 's'),
  clock: Type.Object({ ...PositionOut }, { description: 'Where the clock is.' }),
  reference: ReferenceOut,
  periodic_amplitude: Type.Optional(
    QuantityOut('Eccentric orbits: amplitude of the periodic relativistic clock term, 2 sqrt(GM a) e / c^2 (IS-GPS-200 §20.3.3.3.3.1: Delta t_r = F e sqrt(A) sin E).', 's'),
  ),
  ...Provenance,
});

const ClockInversionResult = Type.Object({
  ...PositionOut,
  ...RateOut,
  fractional_offset: Type.Optional(ScalarOut('The target fractional offset against the reference (dimensionless).')),
  reference: Type.Optional(ReferenceOut),
  ...Provenance,
});

// ---------------------------------------------------------------------------
// Provenance

const REFS = {
  schwarzschild: 'Misner, Thorne & Wheeler 1973, Gravitation, ch. 31 (Schwarzschild static observers)',
  kerr: 'Misner, Thorne & Wheeler 1973, Gravitation, ch. 33 (Kerr, Boyer-Lindquist static observers)',
  bpt: 'Bardeen, Press & Teukolsky 1972, ApJ 178, 347',
  ashby: 'Ashby 2003, Living Rev. Relativity 6, 1 (weak-field clock rates)',
  iers: 'IERS Conventions 2010 (IERS TN 36), ch. 10; IAU 2000 Resolution B1.9 (L_G)',
  gps: 'IS-GPS-200, §20.3.3.3.3.1 (relativistic clock correction)',
  brent: 'Brent 1973, Algorithms for Minimization without Derivatives, ch. 4',
};

// ---------------------------------------------------------------------------
// Reading inputs

type Motion = 'static' | 'circular' | 'moving';

/** The uncertain inputs of one case, in the order the model takes them. */

/** What the case says about the central body. */
interface BodyPlan {
  info: BodyInfo;
  /** Preset body: weak-field model, positions in metres, altitude above `surface`. */
  preset: boolean;
  surface: number;
  iGm: number;
  iSpin: number;
  /** Nominal values, for the domains of the other inputs. */
  gm: number;
  spin: number;
}

function readBodyPlan(input: ClockRateCase['body'], vars: VarList): BodyPlan {
  const info = readBody(input, '/body');
  const preset = info.preset !== undefined;
  if (preset && (info.spin.value !== 0 || info.spin.sigma > 0)) {
    fail(info.spinPointer, `a preset body uses the weak-field (non-rotating, spherical) model: omit spin, or give the body by mass or gm for a Kerr hole`);
  }
  const iGm = vars.add({ name: info.gmPointer, value: info.gm.value, sigma: info.gm.sigma, lo: 0, hi: Infinity });
  const iSpin = vars.add({ name: info.spinPointer, value: info.spin.value, sigma: info.spin.sigma, lo: -1, hi: 1, loClosed: true, hiClosed: true });
  return { info, preset, surface: info.surfaceRadius ?? 0, iGm, iSpin, gm: info.gm.value, spin: info.spin.value };
}

/** Where a clock is: which input gave its position, in which unit the variable is. */
interface PositionPlan {
  kind: 'r' | 'altitude' | 'height';
  /** The variable is in rg (given in rg or rs) or in metres. */
  unit: 'rg' | 'm';
  idx: number;
  pointer: string;
}

interface ClockPlan {
  motion: Motion;
  pointer: string;
  pos: PositionPlan;
  /** Index of the polar angle variable (static clocks), else -1. */
  iTheta: number;
  /** Index of the speed variable (moving clocks), else -1. */
  iSpeed: number;
  /** +1 prograde, -1 retrograde (circular orbits). */
  dir: 1 | -1;
}

/** Reads a length, keeping body-relative units as rg. */
function readLength(input: QuantityInput, pointer: string): { value: number; sigma: number; unit: 'rg' | 'm' } {
  let l: ReturnType<typeof length>;
  try {
    l = length(input, pointer);
  } catch (err) {
    // server/inputs.ts lists only the SI-convertible units; these fields also take rg and rs.
    if (err instanceof InputError) {
      throw new InputError(err.errors.map((e) => (e.pointer.endsWith('/unit') ? { ...e, message: `${e.message}; or the body-relative rg (GM/c^2), rs (2GM/c^2)` } : e)));
    }
    throw err;
  }
  if (l.relative === 'rs') return { value: 2 * l.value, sigma: 2 * l.sigma, unit: 'rg' };
  if (l.relative === 'rg') return { value: l.value, sigma: l.sigma, unit: 'rg' };
  return { value: l.value, sigma: l.sigma, unit: 'm' };
}

/** Inner edge (excluded) of the physical domain of a clock's radius, in rg (black holes) or m (presets). */
function innerEdge(b: BodyPlan, motion: Motion, dir: number, theta: number): { r: number; aboveHorizon: number } {
  if (b.preset) {
    const rs = (2 * b.gm) / C / C; // Schwarzschild radius 2GM/c^2, m (MTW ch. 31)
    return { r: motion === 'circular' ? 1.5 * rs : rs, aboveHorizon: NaN };
  }
  const rPlus = kerr.horizonOuter(b.spin);
  const edge = motion === 'static' ? kerr.staticLimit(b.spin, theta) : motion === 'circular' ? kerr.photonOrbit(dir * b.spin) : 2;
  return { r: edge, aboveHorizon: edge - rPlus };
}

/**
 * Reads a clock object (forward route, or a reference clock) into variables.
 * `orbitAxis`: the eccentric orbit's semi-major axis, which then stands for r.
 */
function readClock(input: ClockInput, pointer: string, b: BodyPlan, vars: VarList, orbitAxis?: QuantityInput): ClockPlan {
  const motion = input.motion;
  const p = (k: string) => joinPointer(pointer, k);
  if (motion !== 'moving' && input.speed !== undefined) fail(p('speed'), 'speed applies only to motion "moving" (a circular orbit\'s speed follows from r)');
  if (motion !== 'static' && input.polar_angle !== undefined) {
    fail(p('polar_angle'), motion === 'circular' ? 'circular orbits are equatorial: polar_angle applies only to motion "static"' : 'polar_angle applies only to motion "static"');
  }
  if (motion !== 'circular' && input.direction !== undefined) fail(p('direction'), 'direction applies only to motion "circular"');
  if (motion === 'moving' && !b.preset && (b.spin !== 0 || b.info.spin.sigma > 0)) {
    fail(b.info.spinPointer, 'motion "moving" is available for a non-spinning hole (Schwarzschild) or a preset body: spin must be 0 without uncertainty');
  }

  const given = (['r', 'altitude', 'height'] as const).filter((k) => input[k] !== undefined);
  if (orbitAxis !== undefined) {
    if (given.length > 0) fail(p(given[0]), 'with orbit, the orbit\'s semi_major_axis gives the radius: omit r, altitude and height');
  } else if (given.length !== 1) {
    fail(pointer, given.length === 0 ? 'needs one of r, altitude or height' : `give exactly one of r, altitude or height (got ${given.join(' and ')})`);
  }
  const kind = given[0] ?? 'r';
  if (kind === 'altitude' && !b.preset) fail(p('altitude'), 'altitude is measured from a preset body\'s reference radius: give r or height (above the horizon) for a black hole');
  if (kind === 'height' && b.preset) fail(p('height'), 'a preset body has no horizon: give r or altitude');

  // Polar angle: [0, pi], default equatorial.
  let iTheta = -1;
  let theta = Math.PI / 2;
  if (motion === 'static') {
    const th = input.polar_angle === undefined ? { value: Math.PI / 2, sigma: 0 } : quantity(input.polar_angle, p('polar_angle'), 'angle');
    if (!(th.value >= 0 && th.value <= Math.PI)) fail(p('polar_angle'), `must be between 0 and pi rad (0 and 180 deg); got ${th.value} rad`);
    theta = th.value;
    iTheta = vars.add({ name: p('polar_angle'), value: th.value, sigma: th.sigma, lo: 0, hi: Math.PI, loClosed: true, hiClosed: true });
  }

  let iSpeed = -1;
  if (motion === 'moving') {
    if (input.speed === undefined) fail(p('speed'), 'is required for motion "moving" (m/s, relative to the local static observer)');
    const v = quantity(input.speed, p('speed'), 'velocity');
    if (!(v.value >= 0)) fail(p('speed'), `must be >= 0 (a speed); got ${v.value} m/s`);
    if (!(v.value < C)) fail(p('speed'), `must be < c = ${C} m/s (allowed: 0 <= speed < c); got ${v.value} m/s`);
    // The rate depends on speed^2: the domain (-c, c) lets derivatives and samples straddle 0.
    iSpeed = vars.add({ name: p('speed'), value: v.value, sigma: v.sigma, lo: -C, hi: C });
  }

  const dir: 1 | -1 = input.direction === 'retrograde' ? -1 : 1;
  const posPointer = orbitAxis !== undefined ? '/orbit/semi_major_axis' : p(kind);
  const l = readLength((orbitAxis ?? input[kind]) as QuantityInput, posPointer);
  const edge = innerEdge(b, motion, dir, theta);
  const rgM = b.gm / C / C; // GM/c^2, m
  // Domain of the position variable, in its own unit.
  let lo: number;
  if (b.preset) {
    const edgeM = kind === 'altitude' ? edge.r - b.surface : edge.r;
    lo = l.unit === 'rg' ? edgeM / rgM : edgeM;
  } else {
    const edgeRg = kind === 'height' ? edge.aboveHorizon : edge.r;
    lo = l.unit === 'rg' ? edgeRg : edgeRg * rgM;
  }
  const idx = vars.add({ name: posPointer, value: l.value, sigma: l.sigma, lo, hi: Infinity });
  return { motion, pointer, pos: { kind, unit: l.unit, idx, pointer: posPointer }, iTheta, iSpeed, dir };
}

// ---------------------------------------------------------------------------
// Evaluating a clock

interface ClockValue {
  rate: ClockRate;
  /** Radius, m. */
  r: number;
  /** Height above the horizon (black holes) or altitude (presets), m. */
  h: number;
  /** 1 when a circular orbit is stable (r >= ISCO), 0 otherwise. */
  stable: number;
}

/** Re-raises a physics domain error as one about the request field at `pointer`. */
function at<T>(pointer: string, speedPointer: string, f: () => T): T {
  try {
    return f();
  } catch (err) {
    if (err instanceof PhysicsDomainError && !err.parameter?.startsWith('/')) {
      const which = err.parameter === 'v' || err.parameter === 'beta' ? speedPointer : pointer;
      throw new PhysicsDomainError(err.message, err.allowed, which);
    }
    throw err;
  }
}

/** The field value in metres and in rg, for messages. */
function both(rg: number, rgM: number): string {
  return `${rg} GM/c^2 = ${rg * rgM} m`;
}

function evalClock(p: ClockPlan, x: readonly number[], b: BodyPlan): ClockValue {
  const gm = x[b.iGm];
  const rgM = gm / C / C; // GM/c^2, m
  const v = x[p.pos.idx];
  const speedPointer = p.iSpeed >= 0 ? joinPointer(p.pointer, 'speed') : p.pos.pointer;

  if (b.preset) {
    // Weak field: exterior Schwarzschild of a spherical body at areal radius r (m); equal to the
    // first-order forms -GM/(r c^2) - v^2/(2c^2) to O(phi^2) ~ 1e-19 (Ashby 2003; IERS 2010 ch. 10).
    const vM = p.pos.unit === 'rg' ? v * rgM : v;
    const r = p.pos.kind === 'altitude' ? b.surface + vM : vM;
    const h = p.pos.kind === 'altitude' ? vM : r - b.surface;
    if (p.motion === 'circular') {
      const c = at(p.pos.pointer, speedPointer, () => circularOrbitClockSI(gm, r)); // rate = sqrt(1 - 3GM/(r c^2)), BPT72 with a = 0
      return { rate: c, r, h, stable: c.stable ? 1 : 0 };
    }
    const rate =
      p.motion === 'moving'
        ? at(p.pos.pointer, speedPointer, () => movingClockSI(gm, r, x[p.iSpeed])) // sqrt(1 - 2 phi) sqrt(1 - v^2/c^2), MTW ch. 31 + SR
        : at(p.pos.pointer, speedPointer, () => staticClockSI(gm, r)); // sqrt(1 - 2GM/(r c^2)), MTW ch. 31
    return { rate, r, h, stable: 0 };
  }

  // Black hole: Boyer-Lindquist radii in rg.
  const a = x[b.iSpin];
  const vRg = p.pos.unit === 'rg' ? v : v / rgM;
  const rPlus = kerr.horizonOuter(a); // r+ = 1 + sqrt(1 - a^2), BPT72
  const fromHeight = p.pos.kind === 'height';
  const r = fromHeight ? rPlus + vRg : vRg;
  const hRg = fromHeight ? vRg : r - rPlus;
  const h = fromHeight && p.pos.unit === 'm' ? v : hRg * rgM;
  const what = fromHeight ? 'height' : 'r';
  if (!Number.isFinite(vRg)) {
    const range = `${what} up to ~1e300 GM/c^2 (double range)`;
    throw new PhysicsDomainError(`${what} = ${v} ${p.pos.unit} is beyond the representable range in units of GM/c^2 = ${rgM} m`, range, p.pos.pointer);
  }

  if (p.motion === 'static') {
    const theta = x[p.iTheta];
    const s = a * Math.sin(theta);
    const root = Math.sqrt((1 - a) * (1 + a)); // sqrt(1 - a^2)
    const delta = Math.sqrt(root * root + s * s); // sqrt(1 - a^2 cos^2 theta): r_E = 1 + delta (MTW ch. 33)
    // Height above the static limit r_E: from r directly, or from the height above the horizon
    // with r_E - r+ = delta - sqrt(1 - a^2) = a^2 sin^2 theta / (delta + sqrt(1 - a^2)) (algebra).
    const hStatic = fromHeight ? hRg - (s * s) / (delta + root) : r - (1 + delta);
    if (!(hStatic > 0)) {
      const edge = fromHeight ? (s * s) / (delta + root) : 1 + delta;
      const allowed = `${what} > ${both(edge, rgM)} (${fromHeight ? 'above the horizon: ' : ''}outside the static limit r_E(theta) = 1 + sqrt(1 - a^2 cos^2 theta) GM/c^2; no static observer exists inside the ergosphere or the horizon)`;
      throw new PhysicsDomainError(`a static clock at ${what} = ${both(fromHeight ? hRg : r, rgM)} is inside the ergosphere or the horizon`, allowed, p.pos.pointer);
    }
    // rate = sqrt(1 - 2r/Sigma), Sigma = r^2 + a^2 cos^2 theta (Boyer-Lindquist, MTW ch. 33)
    return { rate: at(p.pos.pointer, speedPointer, () => staticClockKerrHeight(hStatic, a, theta)), r: r * rgM, h, stable: 0 };
  }
  if (p.motion === 'circular') {
    const aS = p.dir * a; // signed spin: > 0 when the orbit co-rotates (BPT72)
    const rPh = kerr.photonOrbit(aS); // BPT72 eq. 2.18
    if (!(r > rPh)) {
      const edge = fromHeight ? rPh - rPlus : rPh;
      const allowed = `${what} > ${both(edge, rgM)} (outside the ${p.dir > 0 ? 'prograde' : 'retrograde'} circular photon orbit r_ph = ${rPh} GM/c^2, BPT72 eq. 2.18)`;
      throw new PhysicsDomainError(`no timelike circular orbit at ${what} = ${both(fromHeight ? hRg : r, rgM)}`, allowed, p.pos.pointer);
    }
    // rate = 1/u^t = r^{3/4} sqrt(r^{3/2} - 3 r^{1/2} + 2a) / (r^{3/2} + a) (BPT72 §II)
    const c = at(p.pos.pointer, speedPointer, () => circularOrbitClock(r, aS));
    return { rate: c, r: r * rgM, h, stable: c.stable ? 1 : 0 };
  }
  // Moving (Schwarzschild): x = (r - r_s)/r_s = height/(2 rg); rate = sqrt(x/(1+x)) sqrt(1 - beta^2) (MTW ch. 31 + SR)
  const xs = hRg / 2;
  if (!(xs > 0)) {
    const allowed = `${what} > ${both(fromHeight ? 0 : 2, rgM)} (outside the horizon r_s = 2GM/c^2)`;
    throw new PhysicsDomainError(`a clock at ${what} = ${both(fromHeight ? hRg : r, rgM)} is not outside the horizon`, allowed, p.pos.pointer);
  }
  const rate = at(p.pos.pointer, speedPointer, () => movingClockSchwarzschildHeight(xs, x[p.iSpeed] / C));
  return { rate, r: r * rgM, h, stable: 0 };
}

// ---------------------------------------------------------------------------
// References (what the offset is measured against)

interface RefPlan {
  kind: 'infinity' | 'geoid' | 'clock';
  clock?: ClockPlan;
  pointer: string;
}

function readReference(input: ReferenceInput | undefined, pointer: string, b: BodyPlan, vars: VarList): RefPlan {
  if (input === undefined || input === 'infinity') return { kind: 'infinity', pointer };
  if (input === 'geoid') {
    if (b.info.preset !== 'earth') {
      fail(pointer, '"geoid" (TT, through L_G of the IERS Conventions 2010) is defined only for body preset "earth"; use "infinity" or a reference clock');
    }
    return { kind: 'geoid', pointer };
  }
  return { kind: 'clock', clock: readClock(input, pointer, b, vars), pointer };
}

interface RefValue {
  lnRate: number;
  rate: number;
  rateMinusOne: number;
  clock?: ClockValue;
}

function evalReference(ref: RefPlan, x: readonly number[], b: BodyPlan): RefValue {
  if (ref.kind === 'infinity') return { lnRate: 0, rate: 1, rateMinusOne: 0 };
  if (ref.kind === 'geoid') {
    // dTT/dTCG = 1 - L_G (IAU 2000 Resolution B1.9; IERS Conventions 2010 ch. 10)
    return { lnRate: geoidLnRate(L_G), rate: 1 - L_G, rateMinusOne: -L_G };
  }
  const c = evalClock(ref.clock!, x, b);
  return { lnRate: c.rate.lnRate, rate: c.rate.rate, rateMinusOne: c.rate.rateMinusOne, clock: c };
}

// ---------------------------------------------------------------------------
// Shaping and flags

/** The clock's rate outputs (flat, dimensionless); `compute` runs thousands of times, so plain stores. */
function putRates(out: Outputs, c: ClockRate): void {
  out.rate = c.rate;
  out.rate_m1 = c.rateMinusOne;
  out.dilation = c.dilation;
  out.dilation_m1 = c.dilationMinusOne;
}

/** Position outputs of the clock ("clock_") or of the reference clock ("ref_"), m. */
function putPosition(out: Outputs, which: 'clock' | 'ref', c: ClockValue): void {
  if (which === 'clock') {
    out.clock_r = c.r;
    out.clock_h = c.h;
    out.clock_stable = c.stable;
  } else {
    out.ref_r = c.r;
    out.ref_h = c.h;
    out.ref_stable = c.stable;
  }
}

type Get = (key: string) => Measured;

/**
 * A quantity q = 1 + m near 1, measured through m = q - 1: q itself carries only ~16 digits of
 * which the first ~10 are the leading 1, so derivatives and samples of q are rounding-limited
 * while those of m keep full precision. Same uncertainty (dq = dm); percentiles shift by 1
 * (a monotone map).
 */
function nearOne(get: Get, key: string, keyMinusOne: string): Measured {
  const q = get(key);
  const m = get(keyMinusOne);
  const out: Measured = { value: q.value };
  if (m.uncertainty !== undefined) out.uncertainty = m.uncertainty;
  if (m.p16 !== undefined) {
    out.p16 = 1 + m.p16;
    out.p50 = 1 + m.p50!;
    out.p84 = 1 + m.p84!;
  }
  return out;
}

function shapeRates(prefix: string, get: Get) {
  return {
    rate: dimensionless(nearOne(get, `${prefix}rate`, `${prefix}rate_m1`)),
    rate_minus_one: dimensionless(get(`${prefix}rate_m1`)),
    dilation: dimensionless(nearOne(get, `${prefix}dilation`, `${prefix}dilation_m1`)),
    dilation_minus_one: dimensionless(get(`${prefix}dilation_m1`)),
  };
}

function shapeReference(ref: RefPlan, b: BodyPlan, get: Get, nominal: Outputs) {
  return {
    kind: ref.kind,
    rate: dimensionless(nearOne(get, 'ref_rate', 'ref_rate_m1')),
    rate_minus_one: dimensionless(get('ref_rate_m1')),
    ...(ref.clock ? shapePosition('ref_', ref.clock.motion, b, get, nominal) : {}),
  };
}

function shapePosition(prefix: string, motion: Motion, b: BodyPlan, get: Get, nominal: Outputs) {
  const rgM = nominal.rg;
  const out: Record<string, unknown> = { r: radius(get(`${prefix}r`), rgM) };
  if (b.preset) out.altitude = dimensional(get(`${prefix}h`), 'm');
  else out.height_above_horizon = radius(get(`${prefix}h`), rgM);
  if (motion === 'circular') out.stable = nominal[`${prefix}stable`] === 1;
  return out;
}

/**
 * Linear propagation assumes the output is close to linear over +-1 sigma of the inputs; near a
 * horizon the rate goes like sqrt(height), so a height uncertain by more than 10 % is flagged.
 */
function nearHorizonFlag(label: string, m: Measured, linear: boolean): Warning[] {
  if (!linear || m.uncertainty === undefined || !(m.value > 0)) return [];
  const rel = m.uncertainty / m.value;
  if (!(rel > 0.1)) return [];
  return [
    {
      code: 'linear-uncertainty-unreliable',
      message: `the height of ${label} above the horizon is uncertain by ${(100 * rel).toFixed(0)} % (> 10 %): near the horizon the result is strongly non-linear in it, so the first-order uncertainties are not trustworthy; use uncertainty_method monte-carlo`,
    },
  ];
}

function positionFlags(label: string, motion: Motion, b: BodyPlan, prefix: string, nominal: Outputs): Warning[] {
  const w: Warning[] = [];
  if (motion === 'circular' && nominal[`${prefix}stable`] !== 1) {
    w.push({ code: 'inside-isco', message: `${label} is on a circular orbit inside the innermost stable circular orbit (BPT72 eq. 2.21): the orbit exists but is unstable` });
  }
  if (b.preset && nominal[`${prefix}r`] < b.surface) {
    w.push({
      code: 'below-reference-surface',
      message: `${label} is ${-nominal[`${prefix}h`]} m below the reference radius of the ${b.info.preset}: the exterior (point-mass) field used here holds only outside the body's mass`,
    });
  }
  return w;
}

function isLinear(p: { uncertainty_method?: { kind: string } }, vars: VarList): boolean {
  return p.uncertainty_method?.kind !== 'monte-carlo' && vars.list.some((v) => v.sigma > 0);
}

function modelOf(b: BodyPlan): string {
  if (b.preset) return 'weak-field';
  return b.spin !== 0 || b.info.spin.sigma > 0 ? 'kerr' : 'schwarzschild';
}

function referencesFor(b: BodyPlan, motions: Motion[], extra: string[]): string[] {
  const refs: string[] = [];
  const add = (s: string) => {
    if (!refs.includes(s)) refs.push(s);
  };
  if (b.preset) add(REFS.ashby);
  for (const m of motions) {
    if (m === 'circular') add(REFS.bpt);
    else add(!b.preset && modelOf(b) === 'kerr' ? REFS.kerr : REFS.schwarzschild);
  }
  extra.forEach(add);
  return refs;
}

// ---------------------------------------------------------------------------
// POST /v1/clock-rate

function prepareForward(input: ClockRateCase): Prepared {
  const vars = new VarList();
  const b = readBodyPlan(input.body, vars);

  let iAxis = -1;
  let iEcc = -1;
  let axisUnit: 'rg' | 'm' = 'm';
  if (input.orbit !== undefined) {
    if (input.clock.motion !== 'circular') fail('/clock/motion', 'an eccentric orbit (orbit) needs motion "circular"');
    const e = scalar(input.orbit.eccentricity, 0);
    if (!(e.value < 1)) fail('/orbit/eccentricity', `must be < 1 (a bound orbit: 0 <= e < 1); got ${e.value}`);
    iEcc = vars.add({ name: '/orbit/eccentricity', value: e.value, sigma: e.sigma, lo: 0, hi: 1, loClosed: true });
  }
  const clock = readClock(input.clock, '/clock', b, vars, input.orbit?.semi_major_axis);
  if (input.orbit !== undefined) {
    iAxis = clock.pos.idx;
    axisUnit = clock.pos.unit;
  }
  const ref = readReference(input.reference, '/reference', b, vars);
  const interval = input.interval === undefined ? { value: 86400, sigma: 0 } : quantity(input.interval, '/interval', 'time');
  const iInterval = vars.add({ name: '/interval', value: interval.value, sigma: interval.sigma, lo: 0, hi: Infinity });

  const compute = (x: readonly number[]): Outputs => {
    const gm = x[b.iGm];
    const A = evalClock(clock, x, b);
    const B = evalReference(ref, x, b);
    // rate_A/rate_B - 1 = expm1(ln rate_A - ln rate_B) (physics/clocks.ts, common practice)
    const offset = fractionalOffset(A.rate, B);
    const out: Outputs = { rg: gm / C / C }; // GM/c^2, m
    putRates(out, A.rate);
    putPosition(out, 'clock', A);
    out.offset = offset;
    out.offset_interval = offset * x[iInterval]; // s
    out.interval = x[iInterval];
    out.ref_rate = B.rate;
    out.ref_rate_m1 = B.rateMinusOne;
    if (B.clock) putPosition(out, 'ref', B.clock);
    if (iAxis >= 0) {
      const aM = axisUnit === 'rg' ? (x[iAxis] * gm) / C / C : x[iAxis];
      // 2 sqrt(GM a) e / c^2 = |F| e sqrt(A), F = -2 sqrt(GM)/c^2 (IS-GPS-200 §20.3.3.3.3.1), s
      out.amplitude = eccentricOrbitClockAmplitude(gm, aM, x[iEcc]);
    }
    return out;
  };

  const linear = isLinear(input, vars);
  let late: Warning[] = [];
  const motions: Motion[] = [clock.motion, ...(ref.clock ? [ref.clock.motion] : [])];
  const extra = [...(ref.kind === 'geoid' ? [REFS.iers] : []), ...(iAxis >= 0 ? [REFS.gps] : [])];
  return {
    vars: vars.list,
    method: input.uncertainty_method,
    compute,
    shape: (get, nominal) => {
      const reply: Record<string, unknown> = {
        ...shapeRates('', get),
        fractional_offset: dimensionless(get('offset')),
        offset_per_interval: dimensional(get('offset_interval'), 's'),
        interval: dimensional(get('interval'), 's'),
        clock: shapePosition('clock_', clock.motion, b, get, nominal),
        reference: shapeReference(ref, b, get, nominal),
      };
      if (iAxis >= 0) reply.periodic_amplitude = dimensional(get('amplitude'), 's');
      // Flags that need the propagated uncertainties: `warnings` below runs after `shape`.
      late = b.preset
        ? []
        : [...nearHorizonFlag('the clock', get('clock_h'), linear), ...(ref.clock ? nearHorizonFlag('the reference clock', get('ref_h'), linear) : [])];
      return reply;
    },
    warnings: (nominal) => {
      const w = positionFlags('the clock', clock.motion, b, 'clock_', nominal);
      if (ref.clock) w.push(...positionFlags('the reference clock', ref.clock.motion, b, 'ref_', nominal));
      if (iAxis >= 0) {
        const phi = nominal.rg / nominal.clock_r; // GM/(a c^2), dimensionless
        if (phi > 1e-3) {
          w.push({
            code: 'weak-field-formula',
            message: `GM/(a c^2) = ${phi.toExponential(2)}: the eccentric-orbit amplitude 2 sqrt(GM a) e/c^2 and the mean rate of the circular orbit of radius a are first-order (weak-field) results, with relative errors of order GM/(a c^2)`,
          });
        }
      }
      return [...w, ...late];
    },
    model: modelOf(b),
    references: referencesFor(b, motions, extra),
  };
}

// ---------------------------------------------------------------------------
// POST /v1/clock-rate/inversion

type TargetKind = 'dilation' | 'rate' | 'fractional_offset';

function prepareInversion(input: ClockInversionCase): Prepared {
  const vars = new VarList();
  const b = readBodyPlan(input.body, vars);
  const motion = input.clock.motion as 'static' | 'circular';
  if (motion !== 'static' && input.clock.polar_angle !== undefined) fail('/clock/polar_angle', 'circular orbits are equatorial: polar_angle applies only to motion "static"');
  if (motion !== 'circular' && input.clock.direction !== undefined) fail('/clock/direction', 'direction applies only to motion "circular"');
  const dir = input.clock.direction === 'retrograde' ? -1 : 1;
  let iTheta = -1;
  if (motion === 'static') {
    const th = input.clock.polar_angle === undefined ? { value: Math.PI / 2, sigma: 0 } : quantity(input.clock.polar_angle, '/clock/polar_angle', 'angle');
    if (!(th.value >= 0 && th.value <= Math.PI)) fail('/clock/polar_angle', `must be between 0 and pi rad (0 and 180 deg); got ${th.value} rad`);
    iTheta = vars.add({ name: '/clock/polar_angle', value: th.value, sigma: th.sigma, lo: 0, hi: Math.PI, loClosed: true, hiClosed: true });
  }

  const t = input.target;
  const kinds = (['dilation', 'rate', 'fractional_offset'] as const).filter((k) => t[k] !== undefined);
  if (kinds.length !== 1) {
    fail('/target', kinds.length === 0 ? 'needs one of dilation, rate or fractional_offset (with reference)' : `give exactly one of dilation, rate or fractional_offset (got ${kinds.join(' and ')})`);
  }
  const kind: TargetKind = kinds[0];
  const tPointer = `/target/${kind}`;
  if (kind === 'fractional_offset' && t.reference === undefined) fail('/target/reference', 'is required with fractional_offset: "infinity", "geoid" or a reference clock');
  if (kind !== 'fractional_offset' && t.reference !== undefined) fail('/target/reference', `applies only to fractional_offset (${kind} is always against a clock at infinity)`);
  const ref = kind === 'fractional_offset' ? readReference(t.reference, '/target/reference', b, vars) : undefined;
  const tv = scalar(t[kind], 0);
  // Physical domains of the target (beyond them the model answers with the achievable range).
  const hiOffset = ref?.kind === 'infinity' ? 0 : ref?.kind === 'geoid' ? Math.expm1(-geoidLnRate(L_G)) : Infinity;
  const [lo, hi] = kind === 'dilation' ? [1, Infinity] : kind === 'rate' ? [0, 1] : [-1, hiOffset];
  const iTarget = vars.add({ name: tPointer, value: tv.value, sigma: tv.sigma, lo, hi });

  const where = motion === 'static' ? 'static clock' : 'circular orbit';
  const toward = b.preset ? 'the centre' : motion === 'static' ? 'the static limit' : 'the photon orbit';
  const compute = (x: readonly number[]): Outputs => {
    const gm = x[b.iGm];
    const rgM = gm / C / C; // GM/c^2, m
    const y = x[iTarget];
    let target: ClockTarget;
    let refValue: RefValue | undefined;
    if (kind === 'dilation') {
      if (!(y > 1)) {
        throw new PhysicsDomainError(`no ${where} has dilation dt/dtau = ${y}`, `dilation > 1 (1 at infinity, growing without bound towards ${toward})`, tPointer);
      }
      target = { dilation: y };
    } else if (kind === 'rate') {
      if (!(y > 0 && y < 1)) {
        throw new PhysicsDomainError(`no ${where} has rate dtau/dt = ${y}`, `0 < rate < 1 (1 at infinity, 0 towards ${toward})`, tPointer);
      }
      target = { rate: y };
    } else {
      refValue = evalReference(ref!, x, b);
      target = ref!.kind === 'geoid' ? { offsetAgainstGeoid: y } : { offset: y, reference: refValue };
    }
    // Converted once (also validates the offset against the reference: achievable range in the error).
    const lapse = at(tPointer, tPointer, () => lapseTargetFromClock(target));
    const rate = clockRateFromLapse({ n: lapse.g2, d: 1, m: lapse.omg2 });
    let rM: number;
    let hM: number;
    let stable = 0;
    if (b.preset) {
      if (motion === 'static') {
        rM = at(tPointer, tPointer, () => staticClockRadiusSI(gm, target)).r; // r = r_s/(1 - rate^2) (MTW ch. 31), m
      } else {
        const o = at(tPointer, tPointer, () => circularOrbitClockRadiusSI(gm, target)); // r = 3GM/(c^2 (1 - rate^2)) (BPT72, a = 0), m
        rM = o.r;
        stable = o.stable ? 1 : 0;
      }
      hM = rM - b.surface;
    } else {
      const a = x[b.iSpin];
      const rPlus = kerr.horizonOuter(a); // r+ = 1 + sqrt(1 - a^2)
      let r: number;
      let hRg: number;
      if (motion === 'static') {
        const theta = x[iTheta];
        // Closed form: outer root of (1 - rate^2) r^2 - 2r + (1 - rate^2) a^2 cos^2 theta = 0 (MTW ch. 33 g_tt)
        const pos = at(tPointer, tPointer, () => staticClockPositionKerr(target, a, theta));
        const s = a * Math.sin(theta);
        const root = Math.sqrt((1 - a) * (1 + a));
        const delta = Math.sqrt(root * root + s * s);
        r = pos.r;
        hRg = pos.h + (s * s) / (delta + root); // + (r_E - r+), algebra as in evalClock
      } else {
        // Brent's method on ln(1/u^t) with the bracket derived in physics/redshift.ts (BPT72 §II)
        const sol = at(tPointer, tPointer, () => circularOrbitClockRadius(target, dir * a));
        r = sol.r;
        hRg = r - rPlus;
        stable = sol.stable ? 1 : 0;
      }
      rM = r * rgM;
      hM = hRg * rgM;
    }
    const out: Outputs = { rg: rgM };
    putRates(out, rate);
    out.clock_r = rM;
    out.clock_h = hM;
    out.clock_stable = stable;
    if (refValue) {
      out.offset = y;
      out.ref_rate = refValue.rate;
      out.ref_rate_m1 = refValue.rateMinusOne;
      if (refValue.clock) putPosition(out, 'ref', refValue.clock);
    }
    return out;
  };

  const linear = isLinear(input, vars);
  let late: Warning[] = [];
  const motions: Motion[] = [motion, ...(ref?.clock ? [ref.clock.motion] : [])];
  const extra = [...(ref?.kind === 'geoid' ? [REFS.iers] : []), ...(motion === 'circular' && !b.preset ? [REFS.brent] : [])];
  return {
    vars: vars.list,
    method: input.uncertainty_method,
    compute,
    shape: (get, nominal) => {
      const reply: Record<string, unknown> = { ...shapePosition('clock_', motion, b, get, nominal), ...shapeRates('', get) };
      if (ref) {
        reply.fractional_offset = dimensionless(get('offset'));
        reply.reference = shapeReference(ref, b, get, nominal);
      }
      // Flags that need the propagated uncertainties: `warnings` below runs after `shape`.
      late = b.preset ? [] : [...nearHorizonFlag('the clock', get('clock_h'), linear), ...(ref?.clock ? nearHorizonFlag('the reference clock', get('ref_h'), linear) : [])];
      return reply;
    },
    warnings: (nominal) => {
      const w = positionFlags('the clock', motion, b, 'clock_', nominal);
      if (ref?.clock) w.push(...positionFlags('the reference clock', ref.clock.motion, b, 'ref_', nominal));
      return [...w, ...late];
    },
    model: modelOf(b),
    references: referencesFor(b, motions, extra),
  };
}

// ---------------------------------------------------------------------------
// Registration

export async function clockRateRoutes(app: FastifyInstance, opts: { config: Config }): Promise<void> {
  registerCaseRoute<ClockRateCase>(app, opts.config, {
    url: '/v1/clock-rate',
    summary: 'Rate of a clock in a gravitational field, and its offset against a reference',
    description:
      'dtau/dt of a static, orbiting or moving clock against a clock at rest at infinity (Schwarzschild or Kerr for a black hole given by mass or gm; ' +
      'exterior field of a spherical, non-rotating body for the presets "sun" and "earth", model "weak-field"), the dilation dt/dtau, and the fractional ' +
      'offset rate/rate_reference - 1 against "infinity", "geoid" (TT through L_G; "earth" only) or a second clock, with the time gained per interval. ' +
      `${MOTION_TEXT} The Earth model has no J2 or tides: at the surface the potential is off by up to ~4e-13 (relative), at GPS altitude by ~5e-15. ` +
      'Offsets are formed from ln(rate) (absolute error ~1e-25 in the Earth\'s field), so against infinity they keep full precision and between two nearby clocks (1e-15) about 10 digits. Static clocks inside the ergosphere and orbits inside the photon orbit are 422; orbits inside the ISCO are computed with a warning.',
    tags: ['clock-rate'],
    caseSchema: ClockRateCase,
    resultSchema: ClockRateResult,
    prepare: (input) => prepareForward(input),
  });

  registerCaseRoute<ClockInversionCase>(app, opts.config, {
    url: '/v1/clock-rate/inversion',
    summary: 'Where a clock runs at a given rate',
    description:
      'The radius at which a static clock (Kerr: at the given polar angle; closed form) or a clock on a circular equatorial orbit (Kerr: Brent\'s method ' +
      'with a bracket derived from the physics; preset bodies: closed form) has the target dilation, rate, or fractional offset against a reference. ' +
      'Replies r (with its value in rg) and the height above the horizon (black holes) or the altitude above the reference radius (preset bodies). ' +
      'A target no position reaches is a 422 stating the achievable range.',
    tags: ['clock-rate'],
    caseSchema: ClockInversionCase,
    resultSchema: ClockInversionResult,
    prepare: (input) => prepareInversion(input),
  });
}
