/**
 * POST /v1/redshift and POST /v1/redshift/inversion: gravitational redshift of static and
 * circularly orbiting emitters (Schwarzschild, Kerr, and the Schwarzschild exterior of the
 * preset bodies), forward and inverse.
 *
 * Everything is computed through the cancellation-free lapse forms of physics/redshift.ts: z is
 * never formed as (1+z) - 1, heights above the horizon or static limit are never formed as a
 * difference of two nearly equal radii when the caller gave a height or a shift, so tiny z (Sun,
 * Earth) and huge z (emitters hugging the horizon) keep full relative precision.
 */
import type { FastifyInstance } from 'fastify';
import { Type, type Static } from '@sinclair/typebox';
import { C, G, GM_SUN } from '../physics/constants.js';
import { PhysicsDomainError } from '../physics/errors.js';
import { isco, photonOrbit } from '../physics/kerr.js';
import {
  circularOrbitLapse,
  circularOrbitRadiusForLapse,
  evaluateLapse,
  gmFromRedshiftSI,
  lapseTargetFromRedshift,
  staticKerrLapseHeight,
  staticKerrPositionForLapse,
  staticSchwarzschildPositionFromRedshift,
  type LapseTarget,
} from '../physics/redshift.js';
import { BracketError, RootNotConvergedError } from '../physics/roots.js';
import type { Measured, Outputs, Variable } from '../physics/uncertainty.js';
import { hzToSpectral, spectralToHz, type SpectralKind } from '../physics/units.js';
import { findNonFinite, registerCaseRoute, type Warning } from '../server/cases.js';
import type { Config } from '../server/config.js';
import { fail, body as readBody, length, quantity, scalar, spectral, type BodyInfo, type SpectralInput, type Uncertain } from '../server/inputs.js';
import { dimensional, dimensionless, radius } from '../server/outputs.js';
import { joinPointer } from '../server/problems.js';
import type { QuantityInput } from '../server/schemas.js';
import { Body, OrbitDirection, LENGTH_UNITS, Provenance, Quantity, QuantityOut, Scalar, ScalarOut, UncertaintyMethod } from '../server/schemas.js';

// ---------------------------------------------------------------------------
// Schemas

const SPECTRAL_UNITS = ['m', 'um', 'nm', 'Angstrom', 'Hz', 'kHz', 'MHz', 'GHz', 'eV', 'keV', 'J'] as const;
const ANGLE_UNITS = ['rad', 'deg', 'arcsec'] as const;
const VELOCITY_UNITS = ['m/s', 'km/s', 'm.s-1', 'km.s-1'] as const;
const SI_LENGTH_UNITS = LENGTH_UNITS.filter((u) => u !== 'rg' && u !== 'rs');
/** Largest observer inclination for the orbital-phase range, deg (rays start in the orbit's plane at 90). */
export const OBSERVER_INCLINATION_MAX_DEG = 89.9;
/** Largest orbit radius for the orbital-phase range, rg. */
export const PHASE_RANGE_R_MAX = 1e6;
/** Rays one orbital-phase range may trace (counted against RAYS_MAX). */
const PHASE_RANGE_RAYS = 4000;

const Motion = Type.Unsafe<'static' | 'circular'>({
  type: 'string',
  enum: ['static', 'circular'],
  description:
    '"static": at rest at fixed Boyer-Lindquist (r, polar angle), 1+z = 1/sqrt(-g_tt) (outside the static limit only); ' +
    '"circular": on a circular equatorial geodesic, seen face-on (photons of zero axial angular momentum), 1+z = u^t (outside the photon orbit only).',
});

const Direction = OrbitDirection;

const PolarAngle = Quantity(
  'Polar angle of a static emitter from the spin axis (Boyer-Lindquist theta, 0 to pi). Default pi/2 (equatorial); circular orbits are equatorial (only pi/2 is accepted).',
  'rad',
  ANGLE_UNITS,
);

const Spectral = (what: string) =>
  Quantity(`${what}: a wavelength, a frequency or a photon energy; replies use the unit given.`, 'm', SPECTRAL_UNITS, { positive: true });

const Emitter = Type.Object(
  {
    motion: Motion,
    r: Type.Optional(
      Quantity('Radius of the emitter: Boyer-Lindquist r (the areal radius for spin 0). Exactly one of r and height.', 'm', LENGTH_UNITS, { positive: true }),
    ),
    height: Type.Optional(
      Quantity(
        'Black holes only, instead of r (exactly one of them): the height above the outer horizon r+ = rg (1 + sqrt(1 - a*^2)). ' +
          'Giving the height keeps full relative precision for emitters hugging the horizon (spin 0, or on the axis, where the static limit is the horizon).',
        'm',
        LENGTH_UNITS,
      ),
    ),
    polar_angle: Type.Optional(PolarAngle),
    direction: Type.Optional(Direction),
  },
  { additionalProperties: false, description: 'The emitter: its motion and position.' },
);

export const RedshiftCase = Type.Object(
  {
    body: Body,
    emitter: Emitter,
    rest: Type.Optional(Spectral('Rest-frame (emitted) spectral value')),
    observer_inclination: Type.Optional(
      Quantity(
        `Circular emitters only: inclination of a distant observer's line of sight to the orbit's axis, 0 (face-on) to ${OBSERVER_INCLINATION_MAX_DEG} deg (an observer below the plane at 180 deg - i sees the same). ` +
          'Adds `orbital_phase_range`: the range of g (and 1+z) over the orbit, from ray tracing in the Kerr metric.',
        'rad',
        ANGLE_UNITS,
      ),
    ),
    uncertainty_method: Type.Optional(UncertaintyMethod),
  },
  { additionalProperties: false, description: 'One emitter around one central body.' },
);
type RedshiftCase = Static<typeof RedshiftCase>;

const InversionEmitter = Type.Object(
  {
    motion: Motion,
    polar_angle: Type.Optional(PolarAngle),
    direction: Type.Optional(Direction),
  },
  { additionalProperties: false, description: 'The kind of emitter whose position (or central mass) is sought.' },
);

export const RedshiftInversionCase = Type.Object(
  {
    body: Type.Optional(Body),
    emitter: InversionEmitter,
    z: Type.Optional(Scalar('The measured redshift z (dimensionless, > 0). One of z, velocity, or observed with rest.', { minimum: -1, maximum: 1e300 })),
    velocity: Type.Optional(
      Quantity('The shift as a gravitational-redshift velocity v = c z (the convention of white-dwarf work). One of z, velocity, or observed with rest.', 'm.s-1', VELOCITY_UNITS),
    ),
    observed: Type.Optional(Spectral('Observed spectral value (received at infinity); needs rest')),
    rest: Type.Optional(Spectral('Rest-frame (emitted) spectral value; needs observed')),
    solve_for: Type.Unsafe<'r' | 'mass'>({
      type: 'string',
      enum: ['r', 'mass'],
      description: '"r": the emitter position for the given body; "mass": the central mass for an emitter at the given r.',
    }),
    r: Type.Optional(Quantity('Radius of the emitter (Boyer-Lindquist r) when solve_for is "mass". In metres or another SI length unit (not rg or rs).', 'm', SI_LENGTH_UNITS, { positive: true })),
    uncertainty_method: Type.Optional(UncertaintyMethod),
  },
  { additionalProperties: false, description: 'A measured shift, to be turned into an emitter radius or a central mass.' },
);
type RedshiftInversionCase = Static<typeof RedshiftInversionCase>;

const Len = (what: string) => QuantityOut(what, 'm', true);

const SpectralOut = (what: string) =>
  Type.Object(
    {
      value: Type.Number({ description: `${what}, in unit.` }),
      unit: Type.String({ description: 'The unit of rest as given (default m, a wavelength).' }),
      uncertainty: Type.Optional(Type.Number({ description: 'One-sigma uncertainty, in unit.' })),
      p16: Type.Optional(Type.Number({ description: 'Monte Carlo 15.87th percentile.' })),
      p50: Type.Optional(Type.Number({ description: 'Monte Carlo median.' })),
      p84: Type.Optional(Type.Number({ description: 'Monte Carlo 84.13th percentile.' })),
    },
    { description: what },
  );

const SpectralOutBare = (what: string) =>
  Type.Object({ value: Type.Number({ description: `${what}, in unit.` }), unit: Type.String({ description: 'The unit of rest as given.' }) }, { description: what });

const PositionOut = {
  r: Len('Radius of the emitter (Boyer-Lindquist r).'),
  height_above_horizon: Type.Optional(Len('Height above the outer horizon r+ (black holes; not for preset bodies). Full relative precision near the horizon.')),
  height_above_static_limit: Type.Optional(Len('Static emitters around a black hole: height above the static limit r_E(theta) (equals the horizon height for spin 0).')),
  height_above_surface: Type.Optional(QuantityOut('Preset bodies: height above the reference surface radius (IAU 2015 B3 solar radius; IERS 2010 equatorial radius of the Earth).', 'm')),
  direction: Type.Optional(Type.String({ description: 'Circular orbits: "prograde" or "retrograde", as used.' })),
  stable: Type.Optional(Type.Boolean({ description: 'Circular orbits: true at or outside the ISCO; false between the photon orbit and the ISCO (unstable orbit).' })),
};

const PhaseRange = Type.Object(
  {
    g_min: Type.Number({ description: 'Smallest g = nu_received/nu_emitted over the orbital phase (dimensionless): the receding side.' }),
    g_max: Type.Number({ description: 'Largest g over the orbital phase (dimensionless): the approaching side.' }),
    one_plus_z_min: Type.Number({ description: '1/g_max (dimensionless).' }),
    one_plus_z_max: Type.Number({ description: '1/g_min (dimensionless).' }),
    observed_min: Type.Optional(SpectralOutBare('Smallest observed spectral value over the orbit, in the unit of rest.')),
    observed_max: Type.Optional(SpectralOutBare('Largest observed spectral value over the orbit, in the unit of rest.')),
    inclination_deg: Type.Number({ description: 'Observer inclination used, deg.' }),
    rays: Type.Integer({ description: 'Rays traced.' }),
  },
  {
    description:
      "Circular emitters seen at observer_inclination: the range of the shift over the orbital phase, from the orbit's direct image traced backward from the observer (Cunningham & Bardeen 1973; g of Cunningham 1975). Nominal inputs (uncertainties do not propagate into it).",
  },
);

const RedshiftResult = Type.Object({
  one_plus_z: ScalarOut('1 + z = nu_emitted / nu_received at infinity = lambda_received / lambda_emitted.'),
  z: ScalarOut('Redshift z, computed directly (full relative precision also for z ~ 1e-10).'),
  g: ScalarOut('g = 1/(1+z) = nu_received / nu_emitted.'),
  velocity: QuantityOut('The shift as a velocity c z (the convention of white-dwarf gravitational redshifts; not a physical speed).', 'm.s-1'),
  observed: Type.Optional(SpectralOut('Spectral value received at infinity, in the unit of rest: wavelengths stretch by 1+z, frequencies and photon energies shrink by it.')),
  shift: Type.Optional(SpectralOut('observed - rest, in the unit of rest, computed without cancellation.')),
  orbital_phase_range: Type.Optional(PhaseRange),
  ...PositionOut,
  ...Provenance,
});

const InversionResult = Type.Object({
  z: ScalarOut('The redshift z used (from z, velocity/c, or the spectral pair).'),
  gm: Type.Optional(QuantityOut('solve_for "mass": mass parameter GM of the central body.', 'm3.s-2')),
  mass: Type.Optional(QuantityOut('solve_for "mass": mass GM/G (CODATA 2018 G).', 'kg')),
  mass_solar: Type.Optional(ScalarOut('solve_for "mass": mass in nominal solar masses, GM / GM_sun (IAU 2015 B3).')),
  ...PositionOut,
  ...Provenance,
});

// ---------------------------------------------------------------------------
// Shared helpers

const REFS = {
  schwarzschild: 'Misner, Thorne & Wheeler 1973, Gravitation (Freeman), ch. 31',
  kerr: 'Misner, Thorne & Wheeler 1973, Gravitation (Freeman), ch. 33',
  einstein: 'Einstein 1911, Ann. Phys. 35, 898',
  bpt: 'Bardeen, Press & Teukolsky 1972, ApJ 178, 347',
  brent: 'Brent 1973, Algorithms for Minimization without Derivatives (Prentice-Hall), ch. 4',
  cunningham: 'Cunningham 1975, ApJ 202, 788 (redshift factor g of orbiting gas seen by a distant observer)',
  cb73: 'Cunningham & Bardeen 1973, ApJ 183, 237 (image-plane constants of motion; ray tracing)',
};

interface PhaseRangeResult {
  gMin: number;
  gMax: number;
  rays: number;
}

/**
 * The orbital-phase range request of a forward case, or undefined without observer_inclination:
 * checks the inclination and the orbit, and names the worker-side function that traces it
 * (physics/lineprofile.ts ringRedshiftRange, with the signed spin of the orbit's sense).
 */
function phaseRangeRequest(input: RedshiftCase, em: EmitterInfo, b: BodyInfo, setup: ForwardSetup, vars: Variable[]) {
  if (input.observer_inclination === undefined) return undefined;
  if (em.motion !== 'circular') fail('/observer_inclination', 'applies to circular emitters only (a static emitter shows one shift at every inclination)');
  const q = quantity(input.observer_inclination, '/observer_inclination', 'angle');
  const maxRad = (OBSERVER_INCLINATION_MAX_DEG * Math.PI) / 180;
  if (!(q.value >= 0 && q.value <= maxRad)) {
    fail('/observer_inclination', `must lie in [0, ${OBSERVER_INCLINATION_MAX_DEG}] deg (0 = face-on; use 180 deg - i for an observer below the plane); got ${fmt((q.value * 180) / Math.PI)} deg`);
  }
  if (q.sigma > 0) fail('/observer_inclination/uncertainty', 'is not propagated into the orbital-phase range: trace the ends of the range as a batch instead');
  let out: Outputs;
  try {
    out = forwardAt(setup, vars.map((v) => v.value));
  } catch {
    return undefined; // the case itself fails with its 422
  }
  const rRg = out.r / out.rg;
  if (!(rRg <= PHASE_RANGE_R_MAX)) {
    fail('/observer_inclination', `the orbital-phase range is traced for orbits within ${PHASE_RANGE_R_MAX} rg; this orbit is at ${fmt(rRg)} rg (there g = 1 -+ v sin i to first order, v = sqrt(GM/r))`);
  }
  return {
    incDeg: (q.value * 180) / Math.PI,
    offload: { module: 'lineprofile', name: 'ringRedshiftRange', args: [em.sign * b.spin.value, q.value, rRg], rays: PHASE_RANGE_RAYS },
  };
}

function shapePhaseRange(r: PhaseRangeResult, incDeg: number, rest: SpectralInput | undefined): Record<string, unknown> {
  const out: Record<string, unknown> = {
    g_min: r.gMin,
    g_max: r.gMax,
    one_plus_z_min: 1 / r.gMax,
    one_plus_z_max: 1 / r.gMin,
  };
  if (rest) {
    // wavelengths stretch by 1/g, frequencies and energies scale by g
    const ends = rest.kind === 'wavelength' ? [rest.value / r.gMax, rest.value / r.gMin] : [rest.value * r.gMin, rest.value * r.gMax];
    out.observed_min = { value: ends[0], unit: rest.unit };
    out.observed_max = { value: ends[1], unit: rest.unit };
  }
  out.inclination_deg = incDeg;
  out.rays = r.rays;
  return out;
}

type Motion = 'static' | 'circular';
type Dir = 'prograde' | 'retrograde';

/** A number for a message: 10 significant digits. */
function fmt(x: number): string {
  return Number.isFinite(x) ? String(Number(x.toPrecision(10))) : String(x);
}

/** r+ - 1 = sqrt(1 - a^2), without cancellation near |a| = 1. */
function horizonRoot(a: number): number {
  return Math.sqrt((1 - a) * (1 + a));
}

/** r_E(theta) - 1 = sqrt(1 - a^2 cos^2 theta) = sqrt((1 - a)(1 + a) + (a sin theta)^2). */
function staticLimitRoot(a: number, theta: number): number {
  const s = a * Math.sin(theta);
  return Math.sqrt((1 - a) * (1 + a) + s * s);
}

/** r_E(theta) - r+ = (a sin theta)^2 / (delta + sqrt(1 - a^2)), free of cancellation (rg). */
function staticLimitAboveHorizon(a: number, theta: number): number {
  const s = a * Math.sin(theta);
  const d = staticLimitRoot(a, theta) + horizonRoot(a);
  return d > 0 ? (s * s) / d : 0;
}

interface EmitterInfo {
  motion: Motion;
  direction: Dir;
  /** +1 prograde (signed spin a), -1 retrograde (signed spin -a). */
  sign: 1 | -1;
  theta: Uncertain;
  thetaPointer: string;
}

/** Reads motion, direction and polar angle; `p` is the pointer of the emitter object. */
function readEmitter(input: { motion: Motion; polar_angle?: QuantityInput; direction?: Dir }, p: string): EmitterInfo {
  const motion = input.motion;
  const thetaPointer = joinPointer(p, 'polar_angle');
  if (motion === 'static' && input.direction !== undefined) {
    fail(joinPointer(p, 'direction'), 'applies to circular orbits only; omit it for a static emitter');
  }
  let theta: Uncertain = { value: Math.PI / 2, sigma: 0 };
  if (input.polar_angle !== undefined) {
    const q = quantity(input.polar_angle, thetaPointer, 'angle');
    let v = q.value;
    // Values that round just outside [0, pi] in a unit conversion (180 deg) are the edge itself.
    if (v < 0 && v > -1e-15) v = 0;
    if (v > Math.PI && v - Math.PI < 4e-15) v = Math.PI;
    if (!(v >= 0 && v <= Math.PI)) fail(thetaPointer, `must lie in [0, pi] rad = [0, 180] deg (polar angle from the spin axis); got ${fmt(q.value)} rad`);
    if (!(q.sigma <= Math.PI)) fail(thetaPointer + '/uncertainty', 'must be <= pi rad (the polar angle is confined to [0, pi])');
    theta = { value: v, sigma: q.sigma };
    if (motion === 'circular' && (Math.abs(v - Math.PI / 2) > 1e-12 || q.sigma > 0)) {
      fail(thetaPointer, 'circular orbits here are equatorial: polar_angle must be pi/2 rad (90 deg) with no uncertainty, or omitted');
    }
  }
  const direction = input.direction ?? 'prograde';
  return { motion, direction, sign: direction === 'prograde' ? 1 : -1, theta, thetaPointer };
}

function modelOf(b: { preset?: string; spin: Uncertain }): string {
  if (b.preset) return 'weak-field';
  return b.spin.value !== 0 || b.spin.sigma > 0 ? 'kerr' : 'schwarzschild';
}

function referencesOf(model: string, motion: Motion, inversion: boolean): string[] {
  if (motion === 'circular') return inversion ? [REFS.bpt, REFS.brent] : [REFS.bpt];
  if (model === 'kerr') return [REFS.kerr];
  if (model === 'weak-field') return [REFS.schwarzschild, REFS.einstein];
  return [REFS.schwarzschild];
}

/**
 * Runs a model evaluation, turning any physics failure into a PhysicsDomainError whose pointer
 * names a field of the case (physics functions name their own parameters, which are not fields),
 * and refusing non-finite outputs the same way.
 */
function guarded(pointer: string, fn: () => Outputs): Outputs {
  let out: Outputs;
  try {
    out = fn();
  } catch (err) {
    if (err instanceof PhysicsDomainError) {
      if (err.parameter?.startsWith('/')) throw err;
      throw new PhysicsDomainError(err.message, err.allowed, pointer);
    }
    if (err instanceof RangeError) throw new PhysicsDomainError(err.message, 'inputs inside the physical domain', pointer);
    if (err instanceof BracketError || err instanceof RootNotConvergedError) {
      throw new PhysicsDomainError(`no emitter position could be resolved in double precision for these inputs (${err.message})`, 'shifts resolvable in double precision', pointer);
    }
    throw err;
  }
  if ('rg' in out && !(out.rg > 0)) {
    throw new PhysicsDomainError('GM/c^2 underflows to 0 m for these inputs', 'a central mass whose gravitational radius GM/c^2 is a positive double (GM > ~1e-307 m^3 s^-2)', pointer);
  }
  for (const k in out) {
    if (!Number.isFinite(out[k])) {
      throw new PhysicsDomainError(`the result ${k} is outside the double-precision range for these inputs`, 'inputs whose results are finite doubles (magnitudes below ~1.8e308)', pointer);
    }
  }
  return out;
}

/**
 * Refuses a reply holding a non-finite number (an uncertainty whose square overflows, say) with a
 * 422 that names the input most likely at fault: the one with the largest relative uncertainty.
 */
function finiteReply(out: Record<string, unknown>, vars: readonly Variable[], base: string, fallback: string): Record<string, unknown> {
  const bad = findNonFinite(out);
  if (!bad) return out;
  let worst = fallback;
  let worstRel = -1;
  for (const v of vars) {
    const rel = v.sigma / Math.abs(v.value);
    if (v.sigma > 0 && rel > worstRel) {
      worstRel = rel;
      worst = v.name.slice(base.length);
    }
  }
  const why = worstRel >= 0 ? ` (the uncertainty of ${worst} is too large to propagate)` : '';
  throw new PhysicsDomainError(`the result ${bad} overflows the double range for these inputs${why}`, 'inputs whose results and uncertainties are finite doubles', worst);
}

/** The emitter's position in a reply (forward and inverse alike): r, its height, and orbit flags. */
function shapePosition(out: Record<string, unknown>, get: (key: string) => Measured, nominal: Outputs, em: EmitterInfo, preset: boolean): void {
  const rg = nominal.rg;
  out.r = radius(get('r'), rg);
  if (preset) {
    out.height_above_surface = dimensional(get('height_above_surface'), 'm');
  } else {
    out.height_above_horizon = radius(get('height_above_horizon'), rg);
    if (em.motion === 'static') out.height_above_static_limit = radius(get('height_above_static_limit'), rg);
  }
  if (em.motion === 'circular') {
    out.direction = em.direction;
    out.stable = nominal.stable === 1;
  }
}

/** Flags shared by the forward and inverse routes: unstable orbit, below a preset's surface, and
 * linear propagation too close to a singular boundary. */
function emitterWarnings(em: EmitterInfo, b: Pick<BodyInfo, 'preset' | 'spin'>, linear: boolean) {
  return (nominal: Outputs, get: (key: string) => Measured): Warning[] => {
    const w: Warning[] = [];
    if (em.motion === 'circular' && nominal.stable === 0) w.push(unstableWarning(nominal.r / nominal.rg, em.sign * b.spin.value, em.direction));
    if (b.preset && nominal.height_above_surface < 0) w.push(belowSurfaceWarning(b.preset, nominal.height_above_surface));
    if (linear) {
      w.push(
        ...linearityWarning(get, [
          { key: 'margin', what: boundaryName(em.motion, b.spin.value === 0 && b.spin.sigma === 0) },
          { key: 'height_above_horizon', what: 'the horizon' },
        ]),
      );
    }
    return w;
  };
}

function unstableWarning(rRg: number, signedSpin: number, direction: Dir): Warning {
  return {
    code: 'unstable-orbit',
    message: `the ${direction} circular orbit at r = ${fmt(rRg)} rg lies between the photon orbit (${fmt(photonOrbit(signedSpin))} rg) and the ISCO (${fmt(isco(signedSpin))} rg): it exists but is unstable`,
  };
}

function belowSurfaceWarning(preset: string, heightM: number): Warning {
  return {
    code: 'below-surface',
    message: `the emitter is ${fmt(-heightM)} m below the reference surface radius of the ${preset}: the exterior (point-mass Schwarzschild) field used here does not hold inside the body`,
  };
}

/**
 * Flags first-order propagation near a boundary where the observables are singular: when the
 * height above the horizon, or the distance to the boundary that matters for this emitter (static
 * limit, photon orbit), is uncertain by more than 10 %, the model is far from linear over +-1 sigma.
 */
function linearityWarning(
  get: (k: string) => { value: number; uncertainty?: number },
  margins: Array<{ key: string; what: string }>,
): Warning[] {
  for (const { key, what } of margins) {
    const m = get(key);
    if (m.uncertainty === undefined || !(m.value > 0)) continue;
    const rel = m.uncertainty / m.value;
    if (rel > 0.1) {
      return [
        {
          code: 'linear-propagation-unreliable',
          message: `the emitter's height above ${what} is uncertain by ${(100 * rel).toPrecision(3)} % (> 10 %): first-order propagation is not trustworthy this close to a singular boundary; use uncertainty_method {"kind": "monte-carlo"}`,
        },
      ];
    }
  }
  return [];
}

/** The measurement of offset + scale * m (value given separately, computed directly). */
function affine(m: Measured, value: number, scale: number, offset: number): Measured {
  const out: Measured = { value };
  if (m.uncertainty !== undefined) out.uncertainty = Math.abs(scale) * m.uncertainty;
  if (m.p16 !== undefined && m.p50 !== undefined && m.p84 !== undefined) {
    const lo = offset + scale * (scale >= 0 ? m.p16 : m.p84);
    const hi = offset + scale * (scale >= 0 ? m.p84 : m.p16);
    out.p16 = lo;
    out.p50 = offset + scale * m.p50;
    out.p84 = hi;
  }
  return out;
}

/**
 * The observed spectral value with an uncertainty that keeps the tiny gravitational part: z does
 * not depend on rest, so to first order sigma^2 = (d obs/d rest)^2 sigma_rest^2 + rest^2 sigma_k^2
 * with k = z (wavelengths, obs = rest (1+z)) or k = 1-g (frequencies and energies, obs = rest g).
 * With an exact rest value, obs is affine in k and its spread is that of k. Otherwise (Monte Carlo
 * with an uncertain rest) the samples of obs themselves.
 */
function observedMeasured(get: (k: string) => Measured, nominal: Outputs, rest: SpectralInput, linear: boolean): Measured {
  const wl = rest.kind === 'wavelength';
  const k = get(wl ? 'z' : 'one_minus_g');
  const value = nominal.observed;
  if (k.uncertainty === undefined) return { value };
  if (!(rest.sigma > 0)) return wl ? affine(k, value, rest.value, rest.value) : affine(k, value, -rest.value, rest.value);
  if (!linear) return get('observed');
  const dRest = wl ? nominal.one_plus_z : nominal.g;
  return { value, uncertainty: Math.hypot(dRest * rest.sigma, rest.value * k.uncertainty) };
}

function boundaryName(motion: Motion, spinZero: boolean): string {
  if (motion === 'circular') return 'the photon orbit';
  return spinZero ? 'the horizon' : 'the static limit';
}

// ---------------------------------------------------------------------------
// Forward: POST /v1/redshift

interface ForwardSetup {
  em: EmitterInfo;
  /** Which position input was given, and its pointer relative to the case. */
  given: 'r' | 'height';
  posPointer: string;
  relative?: 'rg' | 'rs';
  /** Preset bodies: reference surface radius (m). */
  surface?: number;
  rest?: { unit: string; kind: SpectralKind };
}

/** Converts the position input (metres, or rg/rs units) to rg. */
function toRg(s: ForwardSetup, pos: number, rgM: number): number {
  return s.relative === 'rg' ? pos : s.relative === 'rs' ? 2 * pos : pos / rgM;
}

/** Converts a length in rg to the unit of the position input. */
function fromRg(s: ForwardSetup, lenRg: number, rgM: number): number {
  return s.relative === 'rg' ? lenRg : s.relative === 'rs' ? lenRg / 2 : lenRg * rgM;
}

/**
 * x = [GM (m^3 s^-2), a*, r or height (m, or rg/rs), theta (rad), rest?]. Lengths out in m.
 * A static emitter's height is measured from the static limit r_E(theta), a circular orbit's from
 * the outer horizon r+; given r, heights are r - r_E and r - r+ (the cancellation is the one
 * inherent to giving r).
 */
function forwardAt(s: ForwardSetup, x: readonly number[]): Outputs {
  const [gm, a, pos, theta] = x;
  const rgM = gm / C / C;
  const rPlus = 1 + horizonRoot(a);
  const posRg = toRg(s, pos, rgM);
  const byR = s.given === 'r';
  const out: Outputs = {};
  let rRg: number;
  let hHorizon: number; // rg
  let margin: number; // rg: distance to the boundary where z diverges
  let lapse;
  if (s.em.motion === 'static') {
    const rE = 1 + staticLimitRoot(a, theta);
    // The height input is above the outer horizon (as everywhere in the API); above the static
    // limit it is h - (r_E - r+), exact for spin 0 and on the axis, where r_E = r+.
    const hE = byR ? posRg - rE : posRg - staticLimitAboveHorizon(a, theta);
    if (!(hE > 0)) throw staticDomainError(s, a, theta, rE, byR ? posRg : hE, rgM);
    lapse = staticKerrLapseHeight(hE, a, theta);
    rRg = byR ? posRg : rPlus + posRg;
    // r - r+ directly when r is the input (exact, and independent of theta); the height otherwise.
    hHorizon = byR ? posRg - rPlus : posRg;
    margin = hE;
    out.height_above_static_limit = hE * rgM;
  } else {
    const signed = s.em.sign * a;
    const rPh = photonOrbit(signed);
    rRg = byR ? posRg : rPlus + posRg;
    if (!(rRg > rPh)) throw circularDomainError(s, signed, rPh, rRg, rPlus, rgM);
    const l = circularOrbitLapse(rRg, signed);
    lapse = l;
    hHorizon = byR ? rRg - rPlus : posRg;
    margin = rRg - rPh;
    out.stable = l.stable ? 1 : 0;
  }
  const v = evaluateLapse(lapse);
  out.one_plus_z = v.inverse;
  out.z = v.inverseMinusOne;
  out.g = v.g;
  out.one_minus_g = -v.gMinusOne;
  out.velocity = C * v.inverseMinusOne;
  out.rg = rgM;
  out.r = rRg * rgM;
  out.height_above_horizon = hHorizon * rgM;
  out.margin = margin * rgM;
  if (s.surface !== undefined) out.height_above_surface = (byR && !s.relative ? pos : rRg * rgM) - s.surface;
  if (s.rest) {
    const rest = x[4];
    if (s.rest.kind === 'wavelength') {
      out.observed = rest * v.inverse;
      out.shift = rest * v.inverseMinusOne;
    } else {
      out.observed = rest * v.g;
      out.shift = -rest * v.inverseMinusOne * v.g;
    }
  }
  return out;
}

function staticDomainError(s: ForwardSetup, a: number, theta: number, rE: number, posRg: number, rgM: number): PhysicsDomainError {
  const isHorizon = a === 0 || staticLimitAboveHorizon(a, theta) === 0;
  const where = isHorizon ? 'the horizon' : `the static limit (ergosphere boundary) at polar angle ${fmt((theta * 180) / Math.PI)} deg`;
  const above = staticLimitAboveHorizon(a, theta);
  const at = s.given === 'height' ? `at a height not above ${where}` : `at r = ${fmt(posRg * rgM)} m (${fmt(posRg)} rg): it is not outside ${where}`;
  const allowed =
    s.given === 'height'
      ? `height above the horizon > r_E - r+ = ${fmt(above * rgM)} m = ${fmt(above)} GM/c^2 (${where}, r_E = ${fmt(rE)} GM/c^2)`
      : `r > r_E = ${fmt(rE * rgM)} m = ${fmt(rE)} GM/c^2 (${where})`;
  return new PhysicsDomainError(`no static emitter exists ${at}, where nothing can stay at rest`, allowed, s.posPointer);
}

function circularDomainError(s: ForwardSetup, signed: number, rPh: number, rRg: number, rPlus: number, rgM: number): PhysicsDomainError {
  const allowed =
    s.given === 'height'
      ? `height > r_ph - r+ = ${fmt((rPh - rPlus) * rgM)} m = ${fmt(rPh - rPlus)} rg (outside the ${s.em.direction} photon orbit r_ph = ${fmt(rPh)} rg)`
      : `r > r_ph = ${fmt(rPh * rgM)} m = ${fmt(rPh)} GM/c^2 (the ${s.em.direction} circular photon orbit, BPT72 eq. 2.18)`;
  return new PhysicsDomainError(
    `no timelike circular orbit at r = ${fmt(rRg * rgM)} m (${fmt(rRg)} rg): it is at or inside the ${s.em.direction} photon orbit (signed spin ${fmt(signed)}; orbits between the photon orbit and the ISCO are computed, flagged unstable)`,
    allowed,
    s.posPointer,
  );
}

type Interval = [lo: number, hi: number, loClosed: boolean, hiClosed: boolean];

/**
 * Physical domains of the uncertain inputs around the nominal point, so that derivatives and
 * samples never leave them: the boundary (static limit or photon orbit) fixes how far r, GM, the
 * spin and the polar angle may move with the others held at their nominal values. Where no closed
 * form is at hand (the spin for a circular orbit given by its height) the domain is left wide and
 * the propagation retries smaller steps.
 */
function forwardDomains(s: ForwardSetup, x0: readonly number[]): { gm: Interval; spin: Interval; pos: number; theta: Interval } {
  const [gm, a, pos, theta] = x0;
  const rgM = gm / C / C;
  const dom = {
    gm: [0, Infinity, false, false] as Interval,
    spin: [-1, 1, true, true] as Interval,
    pos: -Infinity,
    theta: [0, Math.PI, true, true] as Interval,
  };
  if (!(rgM > 0) || !Number.isFinite(rgM) || !(Math.abs(a) <= 1)) return dom;
  const byR = s.given === 'r';
  const posRg = toRg(s, pos, rgM);
  if (s.em.motion === 'static') {
    const rE = 1 + staticLimitRoot(a, theta);
    if (!byR) {
      dom.pos = fromRg(s, staticLimitAboveHorizon(a, theta), rgM); // heights above r+ start at r_E - r+
      return dom;
    }
    dom.pos = fromRg(s, rE, rgM);
    // r (m) fixed, GM grows: r/rg falls to r_E at GM = r c^2 / r_E.
    if (!s.relative) dom.gm = [0, (pos / rE) * C * C, false, false];
    if (posRg > 1 && posRg < 2) {
      // r_E(a, theta) < r  <=>  a^2 cos^2 theta > r (2 - r)  (only restrictive inside r = 2 rg).
      const need = Math.sqrt(posRg * (2 - posRg));
      const cosT = Math.abs(Math.cos(theta));
      if (cosT > 0 && need / cosT < 1) {
        const ac = need / cosT;
        dom.spin = a > 0 ? [ac, 1, false, true] : [-1, -ac, true, false];
      }
      if (a !== 0 && need / Math.abs(a) < 1) {
        const thc = Math.acos(need / Math.abs(a));
        dom.theta = theta < Math.PI / 2 ? [0, thc, true, false] : [Math.PI - thc, Math.PI, false, true];
      }
    }
    return dom;
  }
  const signed = s.em.sign * a;
  const rPh = photonOrbit(signed);
  const rPlus = 1 + horizonRoot(a);
  dom.pos = fromRg(s, byR ? rPh : rPh - rPlus, rgM);
  if (!s.relative) {
    if (byR) dom.gm = [0, (pos / rPh) * C * C, false, false];
    else if (rPh - rPlus > 0) dom.gm = [0, (pos / (rPh - rPlus)) * C * C, false, false];
  }
  if (byR && posRg >= 1) {
    // r > r_ph(signed a)  <=>  D = r^{3/2} - 3 r^{1/2} + 2 (signed a) > 0  for r >= 1 (BPT72).
    const ac = (Math.sqrt(posRg) * (3 - posRg)) / 2; // threshold on the signed spin
    if (ac > -1 && ac < 1) dom.spin = s.em.sign === 1 ? [ac, 1, false, true] : [-1, -ac, true, false];
  }
  return dom;
}

/** The body, refusing a spin on a preset body (its model is the non-rotating Schwarzschild exterior). */
function readBodyChecked(input: RedshiftCase['body'], pointer: string): BodyInfo {
  const b = readBody(input, pointer);
  if (b.preset && (b.spin.value !== 0 || b.spin.sigma > 0)) {
    fail(b.spinPointer, 'a preset body uses the weak-field (non-rotating, spherical Schwarzschild exterior) model: omit spin, or give the body by mass or gm for a Kerr hole');
  }
  return b;
}

function prepareForward(input: RedshiftCase, base: string) {
  const b = readBodyChecked(input.body, joinPointer(base, 'body'));
  const emP = joinPointer(base, 'emitter');
  const em = readEmitter(input.emitter, emP);
  const hasR = input.emitter.r !== undefined;
  const hasH = input.emitter.height !== undefined;
  if (hasR === hasH) {
    fail(
      joinPointer(emP, hasR ? 'height' : 'r'),
      hasR ? 'give exactly one of r and height, not both' : 'needs the emitter position: r, or height (above the outer horizon)',
    );
  }
  if (hasH && b.preset) fail(joinPointer(emP, 'height'), 'a preset body has no horizon: give r (the areal radius; the reply has the height above the surface)');
  const given = hasR ? 'r' : 'height';
  const posPointerAbs = joinPointer(emP, given);
  const posIn = length((hasR ? input.emitter.r : input.emitter.height)!, posPointerAbs);
  const rest = input.rest !== undefined ? spectral(input.rest, joinPointer(base, 'rest')) : undefined;
  const setup: ForwardSetup = {
    em,
    given,
    posPointer: `/emitter/${given}`,
    relative: posIn.relative,
    surface: b.surfaceRadius,
    rest: rest ? { unit: rest.unit, kind: rest.kind } : undefined,
  };
  const x0 = [b.gm.value, b.spin.value, posIn.value, em.theta.value];
  const dom = forwardDomains(setup, x0);
  const vars: Variable[] = [
    { name: b.gmPointer, value: b.gm.value, sigma: b.gm.sigma, lo: dom.gm[0], hi: dom.gm[1] },
    { name: b.spinPointer, value: b.spin.value, sigma: b.spin.sigma, lo: dom.spin[0], hi: dom.spin[1], loClosed: dom.spin[2], hiClosed: dom.spin[3] },
    { name: posPointerAbs, value: posIn.value, sigma: posIn.sigma, lo: dom.pos, hi: Infinity },
    { name: em.thetaPointer, value: em.theta.value, sigma: em.theta.sigma, lo: dom.theta[0], hi: dom.theta[1], loClosed: dom.theta[2], hiClosed: dom.theta[3] },
  ];
  if (rest) vars.push({ name: joinPointer(base, 'rest'), value: rest.value, sigma: rest.sigma, lo: 0, hi: Infinity });
  return { b, em, setup, vars, rest };
}

// ---------------------------------------------------------------------------
// Inversion: POST /v1/redshift/inversion

interface ShiftReader {
  /** Uncertain inputs of the shift, in the order zOf takes them. */
  vars: Variable[];
  /** z from the shift inputs. */
  zOf: (xs: readonly number[]) => number;
  /** Pointer (relative to the case) of the shift, for 422s. */
  pointer: string;
}

function readShift(input: RedshiftInversionCase, base: string): ShiftReader {
  const hasObs = input.observed !== undefined;
  const hasRest = input.rest !== undefined;
  if (hasObs !== hasRest) {
    const missing = hasObs ? 'rest' : 'observed';
    fail(joinPointer(base, missing), `needed with ${hasObs ? 'observed' : 'rest'}: the shift as a spectral pair takes both observed and rest`);
  }
  const given = [input.z !== undefined && 'z', input.velocity !== undefined && 'velocity', hasObs && 'observed'].filter(Boolean) as string[];
  if (given.length !== 1) {
    fail(
      joinPointer(base, given.length === 0 ? 'z' : given[1]),
      given.length === 0 ? 'needs the shift: exactly one of z, velocity (c z), or observed with rest' : `give the shift exactly once: one of z, velocity, or observed with rest (got ${given.join(' and ')})`,
    );
  }
  if (input.z !== undefined) {
    const z = scalar(input.z, 0);
    return {
      vars: [{ name: joinPointer(base, 'z'), value: z.value, sigma: z.sigma, lo: 0, hi: Infinity }],
      zOf: (xs) => xs[0],
      pointer: '/z',
    };
  }
  if (input.velocity !== undefined) {
    const v = quantity(input.velocity, joinPointer(base, 'velocity'), 'velocity');
    return {
      vars: [{ name: joinPointer(base, 'velocity'), value: v.value, sigma: v.sigma, lo: 0, hi: Infinity }],
      zOf: (xs) => xs[0] / C,
      pointer: '/velocity',
    };
  }
  const obsP = joinPointer(base, 'observed');
  const restP = joinPointer(base, 'rest');
  const obs = spectral(input.observed!, obsP);
  const rest = spectral(input.rest!, restP);
  const sameUnit = obs.unit === rest.unit;
  // z = nu_rest/nu_obs - 1, as a difference of the given values when the units agree (exact there).
  const zOf = (xs: readonly number[]): number => {
    const [o, r] = xs;
    if (sameUnit) return obs.kind === 'wavelength' ? (o - r) / r : (r - o) / o;
    const nuO = spectralToHz(o, obs.unit);
    const nuR = spectralToHz(r, rest.unit);
    return (nuR - nuO) / nuO;
  };
  // Domains: the pair stays a redshift (z > 0) with the other value held at its nominal value.
  const restInObs = sameUnit ? rest.value : hzToSpectral(rest.hz.value, obs.unit);
  const obsInRest = sameUnit ? obs.value : hzToSpectral(obs.hz.value, rest.unit);
  const obsDom: [number, number] = obs.kind === 'wavelength' ? [restInObs, Infinity] : [0, restInObs];
  const restDom: [number, number] = rest.kind === 'wavelength' ? [0, obsInRest] : [obsInRest, Infinity];
  return {
    vars: [
      { name: obsP, value: obs.value, sigma: obs.sigma, lo: obsDom[0], hi: obsDom[1] },
      { name: restP, value: rest.value, sigma: rest.sigma, lo: restDom[0], hi: restDom[1] },
    ],
    zOf,
    pointer: '/observed',
  };
}

/** The lapse target of a shift, with a 422 that names the achievable range for anything not a redshift. */
function targetOf(z: number, motion: Motion, pointer: string, signedSpin: number): LapseTarget {
  const allowed = () =>
    motion === 'static'
      ? 'achievable range 0 < z < infinity for a static emitter (z -> infinity at the static limit, z -> 0 as r -> infinity)'
      : `achievable range 0 < z < infinity for a circular orbit (1+z = u^t falls monotonically from infinity at the photon orbit, r_ph = ${fmt(photonOrbit(signedSpin))} rg, to 1 as r -> infinity)`;
  if (!(z > 0)) {
    const what = z === 0 ? 'z = 0 (no shift) needs r = infinity' : `z = ${fmt(z)} is a blueshift, which a static or orbiting emitter never shows at infinity`;
    throw new PhysicsDomainError(`no radius gives this shift: ${what}`, allowed(), pointer);
  }
  try {
    return lapseTargetFromRedshift(z);
  } catch (err) {
    if (err instanceof PhysicsDomainError) throw new PhysicsDomainError(err.message, err.allowed, pointer);
    throw err;
  }
}

interface InversionSetup {
  em: EmitterInfo;
  solveFor: 'r' | 'mass';
  shift: ShiftReader;
  surface?: number;
}

/**
 * Emitter position in rg for a lapse target: static (closed forms, MTW ch. 31/33) or circular
 * (Brent on the monotone 1/u^t, BPT72). hE: height above the static limit (static only).
 */
function positionRg(s: InversionSetup, t: LapseTarget, z: number, a: number, theta: number): { rRg: number; hE?: number; hHorizon: number; margin: number; stable?: boolean } {
  if (s.em.motion === 'static') {
    if (a === 0) {
      // x = (r - r_s)/r_s = 1/(z (2 + z)): exact for every z (also z >= 1e6).
      const p = staticSchwarzschildPositionFromRedshift(z);
      return { rRg: p.r, hE: 2 * p.x, hHorizon: 2 * p.x, margin: 2 * p.x };
    }
    const p = staticKerrPositionForLapse(t, a, theta);
    return { rRg: p.r, hE: p.h, hHorizon: p.h + staticLimitAboveHorizon(a, theta), margin: p.h };
  }
  const signed = s.em.sign * a;
  const sol = circularOrbitRadiusForLapse(t, signed);
  return { rRg: sol.r, hHorizon: sol.r - (1 + horizonRoot(a)), margin: sol.r - photonOrbit(signed), stable: sol.stable };
}

/**
 * x = [GM (m^3 s^-2) or r (m), a*, theta (rad), ...shift inputs].
 * solve_for "r": lengths in m; solve_for "mass": GM, mass (kg), mass in solar masses, and lengths.
 */
function inversionAt(s: InversionSetup, x: readonly number[]): Outputs {
  const [first, a, theta] = x;
  const z = s.shift.zOf(x.slice(3));
  const t = targetOf(z, s.em.motion, s.shift.pointer, s.em.sign * a);
  const p = positionRg(s, t, z, a, theta);
  const out: Outputs = { z };
  let rgM: number;
  if (s.solveFor === 'r') {
    rgM = first / C / C;
    out.r = p.rRg * rgM;
  } else {
    const rM = first;
    // Static Schwarzschild: GM = r c^2 z (2 + z) / (2 (1+z)^2) (no cancellation); otherwise GM = r c^2 / (r/rg).
    const gm = s.em.motion === 'static' && a === 0 ? gmFromRedshiftSI(rM, z) : (rM / p.rRg) * C * C;
    rgM = gm / C / C;
    out.gm = gm;
    out.mass = gm / G;
    out.mass_solar = gm / GM_SUN;
    out.r = rM;
  }
  out.rg = rgM;
  out.height_above_horizon = p.hHorizon * rgM;
  out.margin = p.margin * rgM;
  if (p.hE !== undefined) out.height_above_static_limit = p.hE * rgM;
  if (p.stable !== undefined) out.stable = p.stable ? 1 : 0;
  if (s.surface !== undefined) out.height_above_surface = out.r - s.surface;
  return out;
}

// ---------------------------------------------------------------------------
// Routes

export async function redshiftRoutes(app: FastifyInstance, opts: { config: Config }): Promise<void> {
  registerCaseRoute<RedshiftCase>(app, opts.config, {
    url: '/v1/redshift',
    summary: 'Gravitational redshift of a static or circularly orbiting emitter',
    description:
      'Redshift at infinity of light from an emitter at rest (1+z = 1/sqrt(-g_tt), outside the static limit) or on a circular equatorial geodesic ' +
      '(1+z = u^t for photons of zero axial angular momentum, i.e. a face-on observer; includes the transverse Doppler shift), in the Schwarzschild or Kerr ' +
      'metric, or the Schwarzschild exterior of a preset body ("weak-field": point mass, no oblateness or rotation). Give the position as r or as a height ' +
      '(above the static limit for static emitters, above the horizon for orbits) to keep full precision next to the horizon. Optionally shifts a rest-frame ' +
      'wavelength, frequency or photon energy. 422 inside the ergosphere (static) or at/inside the photon orbit (circular); orbits inside the ISCO carry a warning. ' +
      'For a circular emitter, `observer_inclination` adds the range of g over the orbital phase seen by a distant observer at that inclination, traced through the Kerr metric on the worker threads (`orbital_phase_range`).',
    tags: ['redshift'],
    caseSchema: RedshiftCase,
    resultSchema: RedshiftResult,
    prepare: (input, ctx) => {
      const { b, em, setup, vars, rest } = prepareForward(input, '');
      const model = modelOf(b);
      const linear = input.uncertainty_method?.kind !== 'monte-carlo';
      const phase = phaseRangeRequest(input, em, b, setup, vars);
      return {
        vars,
        method: input.uncertainty_method,
        compute: (x) => guarded(setup.posPointer, () => forwardAt(setup, x)),
        ...(phase ? { offload: phase.offload } : {}),
        shape: (get, nominal, offloaded) => {
          const z = get('z');
          const omg = get('one_minus_g');
          // 1+z and g are affine in z and 1-g: their spreads come from those (full precision for tiny z).
          const out: Record<string, unknown> = {
            one_plus_z: dimensionless(affine(z, nominal.one_plus_z, 1, 1)),
            z: dimensionless(z),
            g: dimensionless(affine(omg, nominal.g, -1, 1)),
            velocity: dimensional(get('velocity'), 'm.s-1'),
          };
          if (rest) {
            out.observed = dimensional(observedMeasured(get, nominal, rest, linear), rest.unit);
            out.shift = dimensional(get('shift'), rest.unit);
          }
          if (phase && offloaded) out.orbital_phase_range = shapePhaseRange(offloaded as PhaseRangeResult, phase.incDeg, rest);
          shapePosition(out, get, nominal, em, b.preset !== undefined);
          return finiteReply(out, vars, '', setup.posPointer);
        },
        warnings: (nominal, get) => {
          const w = emitterWarnings(em, b, linear)(nominal, get);
          if (phase && vars.some((v) => v.sigma > 0)) {
            w.push({ code: 'phase-range-nominal', message: 'orbital_phase_range is traced at the nominal inputs; the uncertainties apply to the other outputs' });
          }
          return w;
        },
        model,
        references: phase ? [...referencesOf(model, em.motion, false), REFS.cunningham, REFS.cb73] : referencesOf(model, em.motion, false),
      };
    },
  });

  registerCaseRoute<RedshiftInversionCase>(app, opts.config, {
    url: '/v1/redshift/inversion',
    summary: 'Emitter radius or central mass from a measured gravitational redshift',
    description:
      'Inverts the redshift of /v1/redshift. The shift is z, a velocity c z (the convention of white-dwarf gravitational redshifts), or an observed and a ' +
      'rest-frame spectral value. solve_for "r": the emitter radius and its height above the horizon (closed forms for static emitters, with full relative ' +
      'precision also for z >= 1e6; Brent\'s method on the monotone u^t for circular orbits). solve_for "mass": GM and the mass for an emitter at the given r ' +
      '(body optional, for its spin; default 0). Static and circular emitters show every z > 0 at some radius; a blueshift or z = 0 is a 422.',
    tags: ['redshift'],
    caseSchema: RedshiftInversionCase,
    resultSchema: InversionResult,
    prepare: (input, ctx) => {
      const base = ''; // pointers are relative to the case; the case mechanism prefixes /items/N
      const em = readEmitter(input.emitter, joinPointer(base, 'emitter'));
      const shift = readShift(input, base);
      const solveFor = input.solve_for;
      let b: Pick<BodyInfo, 'spin' | 'preset' | 'surfaceRadius' | 'spinPointer'> & { gm?: Uncertain; gmPointer?: string };
      let first: Variable;
      if (solveFor === 'r') {
        if (input.body === undefined) fail(joinPointer(base, 'body'), 'needs the central body (mass, gm or preset) to solve for r');
        if (input.r !== undefined) fail(joinPointer(base, 'r'), 'is only read when solve_for is "mass"; omit it to solve for r');
        const body = readBodyChecked(input.body!, joinPointer(base, 'body'));
        b = body;
        first = { name: body.gmPointer, value: body.gm.value, sigma: body.gm.sigma, lo: 0, hi: Infinity };
      } else {
        const bodyP = joinPointer(base, 'body');
        for (const k of ['mass', 'gm', 'preset'] as const) {
          if (input.body?.[k] !== undefined) fail(joinPointer(bodyP, k), 'solve_for "mass" finds the mass: the body may only carry spin');
        }
        const rP = joinPointer(base, 'r');
        if (input.r === undefined) fail(rP, 'needs the emitter radius r (in metres or another SI length unit) to solve for the mass');
        const rIn = length(input.r, rP);
        if (rIn.relative) fail(joinPointer(rP, 'unit'), `a radius in ${rIn.relative} fixes no mass scale: give r in m, km, solRad, ...`);
        const spinPointer = joinPointer(bodyP, 'spin');
        const spin = scalar(input.body?.spin, 0);
        if (spin.sigma > 2) fail(spinPointer + '/uncertainty', 'must be <= 2 (spin is confined to [-1, 1])');
        b = { spin, spinPointer };
        first = { name: rP, value: rIn.value, sigma: rIn.sigma, lo: 0, hi: Infinity };
      }
      const setup: InversionSetup = { em, solveFor, shift, surface: b.surfaceRadius };
      const vars: Variable[] = [
        first,
        { name: b.spinPointer, value: b.spin.value, sigma: b.spin.sigma, lo: -1, hi: 1, loClosed: true, hiClosed: true },
        { name: em.thetaPointer, value: em.theta.value, sigma: em.theta.sigma, lo: 0, hi: Math.PI, loClosed: true, hiClosed: true },
        ...shift.vars,
      ];
      const model = modelOf(b);
      const linear = input.uncertainty_method?.kind !== 'monte-carlo';
      return {
        vars,
        method: input.uncertainty_method,
        compute: (x) => guarded(shift.pointer, () => inversionAt(setup, x)),
        shape: (get, nominal) => {
          const out: Record<string, unknown> = { z: dimensionless(get('z')) };
          if (solveFor === 'mass') {
            out.gm = dimensional(get('gm'), 'm3.s-2');
            out.mass = dimensional(get('mass'), 'kg');
            out.mass_solar = dimensionless(get('mass_solar'));
          }
          shapePosition(out, get, nominal, em, b.preset !== undefined);
          return finiteReply(out, vars, base, shift.pointer);
        },
        warnings: emitterWarnings(em, b, linear),
        model,
        references: referencesOf(model, em.motion, true),
      };
    },
  });
}
