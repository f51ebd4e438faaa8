/**
 * POST /v1/orbits/circular and POST /v1/orbits/circular/inversion: circular equatorial geodesics
 * of the Kerr metric (prograde or retrograde), with their orbital, epicyclic and precession
 * frequencies; and the inverse problems: the radius at which a measured frequency occurs, or the
 * mass for which it occurs at a given radius (the kilohertz-QPO mass bound at the ISCO).
 *
 * All the physics is in ../physics/orbits.ts (and ./kerr.ts) in geometric units; this module reads
 * the case, declares the uncertain inputs with their physical domains, converts with GM/c^2
 * (lengths) and GM/c^3 (times), and shapes the reply.
 */
import type { FastifyInstance } from 'fastify';
import { Type, type Static } from '@sinclair/typebox';
import { C, G, GM_SUN } from '../physics/constants.js';
import { PhysicsDomainError } from '../physics/errors.js';
import { isco } from '../physics/kerr.js';
import {
  type FrequencyKind,
  FREQUENCY_KINDS,
  achievableRange,
  angularFrequencyOf,
  circularOrbit,
  frequencyPeak,
  radiiForFrequency,
} from '../physics/orbits.js';
import { BracketError, RootNotConvergedError } from '../physics/roots.js';
import type { Measured, Outputs, Variable } from '../physics/uncertainty.js';
import { registerCaseRoute, type Prepared, type Warning } from '../server/cases.js';
import type { Config } from '../server/config.js';
import { fail, body as readBody, length, quantity, scalar, type BodyInfo } from '../server/inputs.js';
import { dimensional, dimensionless, radius } from '../server/outputs.js';
import { joinPointer } from '../server/problems.js';
import { Body, LENGTH_UNITS, OrbitDirection, Provenance, Quantity, QuantityOut, ScalarOut, UncertaintyMethod, type QuantityInput } from '../server/schemas.js';

// ---------------------------------------------------------------------------
// Schemas

const FREQUENCY_UNITS = ['Hz', 'kHz', 'MHz', 'mHz', 'uHz', 's-1'] as const;
const RG_UNITS = ['rg', 'rs'] as const;

const ISCO_TEXT = '"isco": the innermost stable circular orbit for this spin and direction (Bardeen, Press & Teukolsky 1972 eq. 2.21).';

/** A radius as a quantity (number or {value, unit, uncertainty}) or the string "isco", as one flat union. */
function RadiusOrIsco(description: string, defaultUnit: string, units: readonly string[]) {
  const q = Quantity(description, defaultUnit, units, { positive: true });
  return Type.Union([...q.anyOf, Type.Unsafe<'isco'>({ type: 'string', enum: ['isco'], description: ISCO_TEXT })], {
    description: `${description} Default unit ${defaultUnit}; accepted units: ${units.join(', ')}; or ${ISCO_TEXT}`,
  });
}

type RadiusInput = QuantityInput | 'isco';

const QUANTITY_TEXT =
  'Which frequency was measured: "orbital" (default; Omega/2 pi), "radial_epicyclic" (Omega_r/2 pi), "vertical_epicyclic" (Omega_theta/2 pi), ' +
  '"periastron_precession" ((Omega - Omega_r)/2 pi) or "nodal_precession" (|Omega - Omega_theta|/2 pi, matched in magnitude), all seen from infinity.';

const QuantityKind = Type.Unsafe<FrequencyKind>({ type: 'string', enum: [...FREQUENCY_KINDS], description: QUANTITY_TEXT });

export const CircularCase = Type.Object(
  {
    body: Body,
    r: RadiusOrIsco(
      'Boyer-Lindquist radius of the circular equatorial orbit (the areal radius for spin 0); must lie outside the circular photon orbit.',
      'm',
      LENGTH_UNITS,
    ),
    direction: Type.Optional(OrbitDirection),
    uncertainty_method: Type.Optional(UncertaintyMethod),
  },
  { additionalProperties: false, description: 'One circular equatorial orbit around one body.' },
);
type CircularCase = Static<typeof CircularCase>;

export const CircularInversionCase = Type.Object(
  {
    body: Type.Optional(
      Type.Object(
        { ...Body.properties },
        {
          additionalProperties: false,
          description:
            'The central body. Solving for r (no r given): exactly one of mass, gm or preset, and an optional spin. Solving for the mass (r given): spin only (default 0).',
        },
      ),
    ),
    frequency: Quantity('The measured frequency (cycles per unit time, not angular), seen from infinity.', 'Hz', FREQUENCY_UNITS, { positive: true }),
    quantity: Type.Optional(QuantityKind),
    r: Type.Optional(
      RadiusOrIsco(
        'Give r to solve for the mass instead of the radius: the orbit\'s Boyer-Lindquist radius in units of the (unknown) body, rg = GM/c^2 or rs = 2GM/c^2. ' +
          'With "isco" and a frequency that decreases outward (all but the radial epicyclic one), the mass found is the largest for which the frequency can come from a stable orbit.',
        'rg',
        RG_UNITS,
      ),
    ),
    direction: Type.Optional(OrbitDirection),
    branch: Type.Optional(
      Type.Unsafe<'inner' | 'outer'>({
        type: 'string',
        enum: ['inner', 'outer'],
        description:
          'radial_epicyclic and vertical_epicyclic only, solving for r: which of two radii `r` reports when the frequency is reached twice (it rises to a peak and falls again). ' +
          '"outer" (default): beyond the peak, where the frequency falls with r like the orbital one and tends to it far out; "inner": between the ISCO (radial) or the photon orbit (vertical) and the peak. `roots` always lists both.',
      }),
    ),
    uncertainty_method: Type.Optional(UncertaintyMethod),
  },
  {
    additionalProperties: false,
    description: 'A measured orbital, epicyclic or precession frequency, to be turned into the orbit radius (body given) or the central mass (r given in rg).',
  },
);
type CircularInversionCase = Static<typeof CircularInversionCase>;

const R = (what: string) => QuantityOut(what, 'm', true);
const Hz = (what: string) => QuantityOut(what, 'Hz');

const CircularResult = Type.Object({
  r: R('Radius of the orbit (Boyer-Lindquist r).'),
  direction: Type.String({ description: '"prograde" or "retrograde", as requested.' }),
  isco: R('Radius of the innermost stable circular orbit for this spin and direction (BPT72 eq. 2.21).'),
  angular_frequency: QuantityOut('Orbital angular velocity seen from infinity, Omega = dphi/dt = c^3/(GM (r^(3/2) + a)) with r in rg and a the signed spin (BPT72 eq. 2.16).', 'rad.s-1'),
  frequency: Hz('Orbital frequency Omega/(2 pi) seen from infinity.'),
  period_coordinate: QuantityOut('Orbital period in coordinate time (seen from infinity), 2 pi/Omega.', 's'),
  period_proper: QuantityOut('Orbital period in the proper time of the orbiting body, 2 pi/(Omega u^t) (BPT72 §II).', 's'),
  speed_local: QuantityOut('Orbital speed measured in the locally non-rotating frame (BPT72 eq. 3.10); c at the photon orbit.', 'm.s-1'),
  beta_local: ScalarOut('speed_local / c (dimensionless, 0 < beta_local < 1).'),
  energy: ScalarOut('Specific energy E = -u_t per unit rest mass (BPT72 eq. 2.12), dimensionless, in units of c^2 (E < 1: bound).'),
  binding_energy: ScalarOut('1 - E (dimensionless, units of c^2), computed without cancellation: the fraction of rest-mass energy released by matter spiralling in from rest at infinity to this orbit (> 0 for bound orbits).'),
  angular_momentum: ScalarOut('Specific angular momentum L = u_phi per unit rest mass (BPT72 eq. 2.13), dimensionless, in units of GM/c; measured along the orbit\'s own sense (positive for both directions).'),
  angular_momentum_si: QuantityOut('The specific angular momentum L in SI: L (GM/c).', 'm2.s-1'),
  radial_epicyclic_frequency: Type.Optional(
    Hz(
      'Radial epicyclic frequency Omega_r/(2 pi), Omega_r^2 = Omega^2 (1 - 6/r + 8a r^(-3/2) - 3a^2/r^2) (Okazaki, Kato & Fukue 1987; r in rg). ' +
        'Present only for stable orbits (r >= r_isco, where Omega_r^2 >= 0; 0 at the ISCO). Inside the ISCO Omega_r is imaginary: this field and periastron_precession_frequency are omitted and radial_growth_rate is given instead.',
    ),
  ),
  radial_growth_rate: Type.Optional(
    QuantityOut(
      'Only inside the ISCO (stable = false): sqrt(-Omega_r^2), the e-folding rate (in coordinate time) of a small radial displacement of the unstable orbit.',
      's-1',
    ),
  ),
  vertical_epicyclic_frequency: Hz('Vertical epicyclic frequency Omega_theta/(2 pi), Omega_theta^2 = Omega^2 (1 - 4a r^(-3/2) + 3a^2/r^2) (Kato 1990; r in rg). Equals the orbital frequency for spin 0.'),
  periastron_precession_frequency: Type.Optional(
    Hz('Periastron precession frequency (Omega - Omega_r)/(2 pi) (Stella & Vietri 1998). Present only for stable orbits (r >= r_isco), like radial_epicyclic_frequency; equals the orbital frequency at the ISCO.'),
  ),
  nodal_precession_frequency: Hz(
    'Nodal (Lense-Thirring) precession frequency (Omega - Omega_theta)/(2 pi) (Stella & Vietri 1998): 0 for spin 0, > 0 for an orbit co-rotating with the hole, < 0 (the node regresses) for a counter-rotating one.',
  ),
  stable: Type.Boolean({ description: 'r >= r_isco (BPT72 eq. 2.21): stable against radial perturbations.' }),
  bound: Type.Boolean({ description: 'E < 1, i.e. r > r_mb (BPT72 eq. 2.19).' }),
  ...Provenance,
});

const RootOut = Type.Object(
  {
    r: R('A radius at which the frequency takes the measured value.'),
    stable: Type.Boolean({ description: 'r >= r_isco (BPT72 eq. 2.21).' }),
    bound: Type.Boolean({ description: 'E < 1, i.e. r > r_mb (BPT72 eq. 2.19).' }),
  },
  { description: 'One solution.' },
);

const InversionResult = Type.Object({
  quantity: Type.String({ description: 'The frequency that was matched (see the request field).' }),
  direction: Type.String({ description: '"prograde" or "retrograde".' }),
  r: R(
    'The orbit radius: the solution (solving for r; with two solutions, the one chosen by `branch`), or the given radius in metres for the mass found (solving for the mass).',
  ),
  branch: Type.Optional(
    Type.String({ description: 'Solving for r: "single" when one radius matches, else "inner" or "outer" (which of the two `r` is; see the request field branch).' }),
  ),
  roots: Type.Optional(Type.Array(RootOut, { description: 'Solving for r: every radius at which the frequency matches, in ascending order (one or two).' })),
  frequency_max: Type.Optional(
    QuantityOut(
      'Solving for r: the largest value this frequency takes on its domain for this body: at the photon orbit (orbital, vertical without a peak, nodal; not reached), at the ISCO (periastron) or at the peak (radial, vertical with a peak).',
      'Hz',
    ),
  ),
  gm: Type.Optional(QuantityOut('Solving for the mass: mass parameter GM = c^3 w(r, a)/(2 pi nu), w the dimensionless angular frequency at r (in rg).', 'm3.s-2')),
  mass: Type.Optional(QuantityOut('Solving for the mass: GM/G (CODATA 2018 G).', 'kg')),
  mass_solar: Type.Optional(ScalarOut('Solving for the mass: GM/GM_sun with the nominal solar GM (IAU 2015 Resolution B3), dimensionless.')),
  upper_bound: Type.Optional(
    Type.Boolean({
      description:
        'Solving for the mass: true when r is "isco" and the frequency decreases outward over all stable orbits (orbital; periastron and nodal precession; vertical unless it peaks outside the ISCO, spin >~ 0.9524): a frequency from any stable orbit then implies M <= this mass.',
    }),
  ),
  stable: Type.Boolean({ description: 'The orbit at r is stable, r >= r_isco (BPT72 eq. 2.21).' }),
  bound: Type.Boolean({ description: 'The orbit at r is bound, E < 1 (BPT72 eq. 2.19).' }),
  ...Provenance,
});

// ---------------------------------------------------------------------------
// Provenance

const REFS = {
  bpt: 'Bardeen, Press & Teukolsky 1972, ApJ 178, 347',
  okf: 'Okazaki, Kato & Fukue 1987, PASJ 39, 457',
  kato: 'Kato 1990, PASJ 42, 99',
  sv: 'Stella & Vietri 1998, ApJ 492, L59',
  brent: 'Brent 1973, Algorithms for Minimization without Derivatives, ch. 4',
};

function referencesFor(kind: FrequencyKind | 'all', solved: boolean): string[] {
  const refs = [REFS.bpt];
  if (kind === 'all' || kind === 'radial_epicyclic' || kind === 'periastron_precession') refs.push(REFS.okf);
  if (kind === 'all' || kind === 'vertical_epicyclic' || kind === 'nodal_precession') refs.push(REFS.kato);
  if (kind === 'all' || kind === 'periastron_precession' || kind === 'nodal_precession') refs.push(REFS.sv);
  if (solved && kind !== 'orbital' && kind !== 'all') refs.push(REFS.brent);
  return refs;
}

// ---------------------------------------------------------------------------
// Helpers

const TWO_PI = 2 * Math.PI;
const LABEL: Record<FrequencyKind, string> = {
  orbital: 'orbital frequency',
  radial_epicyclic: 'radial epicyclic frequency',
  vertical_epicyclic: 'vertical epicyclic frequency',
  periastron_precession: 'periastron precession frequency',
  nodal_precession: 'nodal precession frequency',
};

/** Number for messages: 6 significant digits. */
function fmt(x: number): string {
  return Number.isFinite(x) ? String(Number(x.toPrecision(6))) : String(x);
}

/** The radius in rg and metres, for messages. */
function both(rRg: number, rgM: number): string {
  return `${fmt(rRg)} GM/c^2 = ${fmt(rRg * rgM)} m`;
}

/**
 * Runs physics for one model evaluation, re-raising its domain errors as errors about a request
 * field (pointers relative to the case) and refusing non-finite outputs.
 */
function guarded(pointers: Record<string, string>, fallback: string, fn: () => Outputs): Outputs {
  let out: Outputs;
  try {
    out = fn();
  } catch (err) {
    if (err instanceof PhysicsDomainError) {
      if (err.parameter?.startsWith('/')) throw err;
      throw new PhysicsDomainError(err.message, err.allowed, pointers[err.parameter ?? ''] ?? fallback);
    }
    if (err instanceof BracketError || err instanceof RootNotConvergedError) {
      throw new PhysicsDomainError(`the radius could not be resolved in double precision for these inputs (${err.message})`, 'frequencies resolvable in double precision', fallback);
    }
    throw err;
  }
  for (const k in out) {
    if (!Number.isFinite(out[k])) {
      throw new PhysicsDomainError(
        `the ${k.replace(/_/g, ' ')} of this orbit is not representable as a double for these inputs (overflow or underflow)`,
        'inputs whose results are finite doubles (r up to ~1e200 GM/c^2, GM between ~1e-280 and 1e300 m^3 s^-2)',
        fallback,
      );
    }
  }
  return out;
}

interface BodyPlan {
  info: BodyInfo;
  iGm: number;
  iSpin: number;
}

function readBodyPlan(input: CircularCase['body'], vars: Variable[]): BodyPlan {
  const info = readBody(input, '/body');
  if (info.preset !== undefined && (info.spin.value !== 0 || info.spin.sigma > 0)) {
    fail(info.spinPointer, 'a preset body is treated as spherical and non-rotating (Schwarzschild exterior): omit spin, or give the body by mass or gm for a Kerr hole');
  }
  vars.push({ name: info.gmPointer, value: info.gm.value, sigma: info.gm.sigma, lo: 0, hi: Infinity });
  vars.push({ name: info.spinPointer, value: info.spin.value, sigma: info.spin.sigma, lo: -1, hi: 1, loClosed: true, hiClosed: true });
  return { info, iGm: vars.length - 2, iSpin: vars.length - 1 };
}

function modelOf(spin: { value: number; sigma: number }): string {
  return spin.value !== 0 || spin.sigma > 0 ? 'kerr' : 'schwarzschild';
}

function presetWarnings(info: BodyInfo, rM: number): Warning[] {
  if (info.preset === undefined) return [];
  const w: Warning[] = [
    {
      code: 'point-mass-exterior',
      message: `the ${info.preset} is treated as a spherical, non-rotating mass (exact Schwarzschild exterior): its oblateness (J2) and rotation, which dominate the nodal and periastron precession of real orbits around it, are not included`,
    },
  ];
  if (rM < (info.surfaceRadius ?? 0)) {
    w.push({
      code: 'below-reference-surface',
      message: `r = ${fmt(rM)} m is inside the reference radius of the ${info.preset} (${info.surfaceRadius} m): the exterior field used here does not hold inside the body`,
    });
  }
  return w;
}

function stabilityWarnings(stable: boolean, bound: boolean, label: string): Warning[] {
  const w: Warning[] = [];
  if (!stable) {
    w.push({
      code: 'inside-isco',
      message: `${label} is inside the innermost stable circular orbit (BPT72 eq. 2.21): it exists but is radially unstable (Omega_r^2 < 0)`,
    });
  }
  if (!bound) {
    w.push({ code: 'unbound', message: `${label} has E >= 1 (inside the marginally bound orbit, BPT72 eq. 2.19): a small outward push lets the body escape to infinity` });
  }
  return w;
}

/** True when the propagated value's 1-sigma interval (or Monte Carlo 16-84 % range) straddles 0. */
function straddlesZero(m: Measured): boolean {
  if (m.p16 !== undefined && m.p84 !== undefined) return m.p16 < 0 && m.p84 > 0;
  return m.uncertainty !== undefined && m.uncertainty > Math.abs(m.value);
}

// ---------------------------------------------------------------------------
// POST /v1/orbits/circular

/** Where the orbit is: "isco", or a radius variable in rg or in metres. */
interface RadiusPlan {
  isco: boolean;
  unit: 'rg' | 'm';
  idx: number;
}

function readRadius(input: RadiusInput, pointer: string, vars: Variable[], loRg: number, rgM: number, allowMetres: boolean): RadiusPlan {
  if (input === 'isco') return { isco: true, unit: 'rg', idx: -1 };
  const l = length(input, pointer);
  let unit: 'rg' | 'm' = 'm';
  let value = l.value;
  let sigma = l.sigma;
  if (l.relative === 'rs') {
    unit = 'rg';
    value *= 2;
    sigma *= 2;
  } else if (l.relative === 'rg') {
    unit = 'rg';
  } else if (!allowMetres) {
    fail(typeof input === 'number' ? pointer : joinPointer(pointer, 'unit'), 'solving for the mass, r must be in units of the body: rg (GM/c^2) or rs (2GM/c^2), or "isco"; a length in metres fixes no mass scale');
  }
  if (!Number.isFinite(value) || !Number.isFinite(sigma)) fail(pointer, `gives r = ${value} ${unit}, outside the representable range`);
  // The domain is the open region outside the photon orbit (for the nominal body); samples beyond it are redrawn.
  const lo = unit === 'rg' ? loRg : loRg * rgM;
  vars.push({ name: pointer, value, sigma, lo, hi: Infinity });
  return { isco: false, unit, idx: vars.length - 1 };
}

function prepareForward(input: CircularCase): Prepared {
  const vars: Variable[] = [];
  const b = readBodyPlan(input.body, vars);
  const dir = input.direction === 'retrograde' ? -1 : 1;
  const direction = dir > 0 ? 'prograde' : 'retrograde';
  const aNominal = dir * b.info.spin.value;
  const rgNominal = b.info.gm.value / C / C; // GM/c^2, m
  // Nominal photon orbit as the edge of r's domain (BPT72 eq. 2.18).
  const rPhNominal = circularOrbitEdge(aNominal);
  const pos = readRadius(input.r as RadiusInput, '/r', vars, rPhNominal, rgNominal, true);
  const spinPointer = b.info.spinPointer;

  const compute = (x: readonly number[]): Outputs =>
    guarded({ r: '/r' }, pos.isco ? spinPointer : '/r', () => {
      const gm = x[b.iGm];
      const a = dir * x[b.iSpin]; // signed spin: > 0 when the orbit co-rotates (BPT72)
      const rgM = gm / C / C; // GM/c^2, m
      const tg = rgM / C; // GM/c^3, s
      let rRg: number;
      if (pos.isco) {
        rRg = isco(a); // BPT72 eq. 2.21, rg
      } else {
        const v = x[pos.idx];
        rRg = pos.unit === 'rg' ? v : v / rgM;
        if (!Number.isFinite(rRg)) {
          throw new PhysicsDomainError(`r = ${fmt(v)} m is beyond the representable range in units of GM/c^2 = ${fmt(rgM)} m`, 'r up to ~1e200 GM/c^2', '/r');
        }
      }
      const o = circularOrbit(rRg, a);
      const omega = o.omega / tg; // Omega (c^3/GM) -> rad/s
      return {
        rg: rgM,
        r: rRg * rgM, // m
        isco: o.isco * rgM, // m
        isco_margin: (rRg - o.isco) * rgM, // m
        omega,
        frequency: omega / TWO_PI, // Hz
        period_coordinate: (TWO_PI / o.omega) * tg, // s
        period_proper: o.properPeriod * tg, // 2 pi r^(3/4) sqrt(D) GM/c^3 (BPT72 §II), s
        speed_local: o.speedLocal * C, // m/s
        beta_local: o.speedLocal,
        energy: o.energy,
        binding_energy: o.bindingEnergy,
        angular_momentum: o.angularMomentum,
        angular_momentum_si: o.angularMomentum * rgM * C, // L GM/c, m^2/s
        nu_r: o.omegaRadial / tg / TWO_PI, // Hz
        growth: o.radialGrowthRate / tg, // s^-1
        nu_theta: o.omegaVertical / tg / TWO_PI, // Hz
        nu_per: o.omegaPeriastron / tg / TWO_PI, // Hz
        nu_nod: o.omegaNodal / tg / TWO_PI, // Hz
        stable: o.stable ? 1 : 0,
        bound: o.bound ? 1 : 0,
      };
    });

  return {
    vars,
    method: input.uncertainty_method,
    compute,
    shape: (get, nominal) => {
      const rgM = nominal.rg;
      const stable = nominal.stable === 1;
      const out: Record<string, unknown> = {
        r: radius(get('r'), rgM),
        direction,
        isco: radius(get('isco'), rgM),
        angular_frequency: dimensional(get('omega'), 'rad.s-1'),
        frequency: dimensional(get('frequency'), 'Hz'),
        period_coordinate: dimensional(get('period_coordinate'), 's'),
        period_proper: dimensional(get('period_proper'), 's'),
        speed_local: dimensional(get('speed_local'), 'm.s-1'),
        beta_local: dimensionless(get('beta_local')),
        energy: dimensionless(get('energy')),
        binding_energy: dimensionless(get('binding_energy')),
        angular_momentum: dimensionless(get('angular_momentum')),
        angular_momentum_si: dimensional(get('angular_momentum_si'), 'm2.s-1'),
      };
      if (stable) out.radial_epicyclic_frequency = dimensional(get('nu_r'), 'Hz');
      else out.radial_growth_rate = dimensional(get('growth'), 's-1');
      out.vertical_epicyclic_frequency = dimensional(get('nu_theta'), 'Hz');
      if (stable) out.periastron_precession_frequency = dimensional(get('nu_per'), 'Hz');
      out.nodal_precession_frequency = dimensional(get('nu_nod'), 'Hz');
      out.stable = stable;
      out.bound = nominal.bound === 1;
      return out;
    },
    warnings: (nominal, get) => {
      const stable = nominal.stable === 1;
      const w = stabilityWarnings(stable, nominal.bound === 1, 'the orbit');
      if (!stable) {
        w[0] = {
          code: 'inside-isco',
          message:
            'the orbit is inside the innermost stable circular orbit (BPT72 eq. 2.21): it exists but is radially unstable (Omega_r^2 < 0), so radial_epicyclic_frequency and periastron_precession_frequency are omitted and radial_growth_rate is given',
        };
      }
      if (!pos.isco && straddlesZero(get('isco_margin'))) {
        w.push({
          code: 'isco-within-uncertainty',
          message:
            'the uncertainty of r - r_isco reaches across the ISCO: for samples inside it the radial epicyclic frequency is taken as 0 (and the periastron precession as the orbital frequency), and near the ISCO it varies like sqrt(r - r_isco), so its linear uncertainty is unreliable; use uncertainty_method monte-carlo',
        });
      }
      w.push(...presetWarnings(b.info, nominal.r));
      return w;
    },
    model: modelOf(b.info.spin),
    references: referencesFor('all', false),
  };
}

/** Inner edge (excluded) of circular orbits, rg: the photon orbit (BPT72 eq. 2.18). */
function circularOrbitEdge(a: number): number {
  return achievableRange('orbital', a).domain.lo;
}

// ---------------------------------------------------------------------------
// POST /v1/orbits/circular/inversion

function prepareInversion(input: CircularInversionCase): Prepared {
  const vars: Variable[] = [];
  const kind: FrequencyKind = input.quantity ?? 'orbital';
  const dir = input.direction === 'retrograde' ? -1 : 1;
  const direction = dir > 0 ? 'prograde' : 'retrograde';
  const solveMass = input.r !== undefined;
  const twoBranch = kind === 'radial_epicyclic' || kind === 'vertical_epicyclic';
  if (input.branch !== undefined && (!twoBranch || solveMass)) {
    fail('/branch', solveMass ? 'applies only when solving for r (omit r)' : `applies only to quantity "radial_epicyclic" or "vertical_epicyclic" (the ${LABEL[kind]} is monotonic in r: one radius at most)`);
  }

  // Body: solving for r needs its mass; solving for the mass it may carry only spin.
  let info: BodyInfo | undefined;
  let iGm = -1;
  let iSpin: number;
  let spin: { value: number; sigma: number };
  let spinPointer = '/body/spin';
  if (!solveMass) {
    if (input.body === undefined) fail('/body', 'is required to solve for r (mass, gm or preset, and spin); or give r in rg to solve for the mass');
    const b = readBodyPlan(input.body!, vars);
    info = b.info;
    iGm = b.iGm;
    iSpin = b.iSpin;
    spin = info.spin;
    spinPointer = info.spinPointer;
  } else {
    for (const k of ['mass', 'gm', 'preset'] as const) {
      if (input.body?.[k] !== undefined) fail(`/body/${k}`, 'with r given the mass is what is solved for: the body may carry only spin (omit r to solve for the radius instead)');
    }
    spin = scalar(input.body?.spin, 0);
    if (spin.sigma > 2) fail('/body/spin/uncertainty', 'must be <= 2 (spin is confined to [-1, 1])');
    vars.push({ name: spinPointer, value: spin.value, sigma: spin.sigma, lo: -1, hi: 1, loClosed: true, hiClosed: true });
    iSpin = vars.length - 1;
  }
  const f = quantity(input.frequency, '/frequency', 'frequency');
  if (!Number.isFinite(f.value) || !Number.isFinite(f.sigma) || !(f.value > 0)) fail('/frequency', `gives ${f.value} Hz, outside the representable range (0, 1e300]`);
  vars.push({ name: '/frequency', value: f.value, sigma: f.sigma, lo: 0, hi: Infinity });
  const iF = vars.length - 1;
  const aNominal = dir * spin.value;

  const model = modelOf(spin);
  const label = `the ${LABEL[kind]}`;
  const sense = `${direction} orbits, spin ${spin.value}`;

  if (solveMass) {
    const rIn = input.r as RadiusInput;
    const domNominal = achievableRange(kind, aNominal).domain;
    const pos = readRadius(rIn, '/r', vars, domNominal.lo, 1, false);
    if (!pos.isco) {
      const v = vars[pos.idx];
      if (domNominal.loClosed) v.loClosed = true;
    }
    // Frequencies that decrease outward over r >= r_isco make the mass at the ISCO an upper bound.
    const peakV = kind === 'vertical_epicyclic' ? frequencyPeak(kind, aNominal) : undefined;
    const upperBound = pos.isco && kind !== 'radial_epicyclic' && !(peakV && peakV.r > isco(aNominal));
    const compute = (x: readonly number[]): Outputs =>
      guarded({ r: '/r', frequency: '/frequency' }, '/r', () => {
        const a = dir * x[iSpin];
        const rRg = pos.isco ? isco(a) : x[pos.idx]; // BPT72 eq. 2.21
        const w = angularFrequencyOf(kind, rRg, a); // c^3/(GM), physics/orbits.ts
        if (!(w > 0)) {
          if (kind === 'nodal_precession') {
            throw new PhysicsDomainError('there is no nodal precession around a non-rotating body (Omega_theta = Omega for spin 0)', 'spin != 0', spinPointer);
          }
          throw new PhysicsDomainError(
            `${label} vanishes at r = ${fmt(rRg)} GM/c^2 (the ISCO), so no mass gives a non-zero value there`,
            'r > r_isco (the radial epicyclic frequency is 0 at the ISCO and peaks further out)',
            '/r',
          );
        }
        // nu = w c^3/(2 pi GM)  =>  GM = w c^3/(2 pi nu), m^3 s^-2
        const gm = (w * C * C * C) / (TWO_PI * x[iF]);
        const rgM = gm / C / C; // GM/c^2, m
        const o = circularOrbit(rRg, a);
        return {
          gm,
          mass: gm / G, // kg (CODATA 2018 G)
          mass_solar: gm / GM_SUN, // IAU 2015 B3 nominal
          rg: rgM,
          r: rRg * rgM, // m
          stable: o.stable ? 1 : 0,
          bound: o.bound ? 1 : 0,
        };
      });
    return {
      vars,
      method: input.uncertainty_method,
      compute,
      shape: (get, nominal) => ({
        quantity: kind,
        direction,
        gm: dimensional(get('gm'), 'm3.s-2'),
        mass: dimensional(get('mass'), 'kg'),
        mass_solar: dimensionless(get('mass_solar')),
        r: radius(get('r'), nominal.rg),
        upper_bound: upperBound,
        stable: nominal.stable === 1,
        bound: nominal.bound === 1,
      }),
      warnings: (nominal) => stabilityWarnings(nominal.stable === 1, nominal.bound === 1, 'the orbit at r'),
      model,
      references: referencesFor(kind, false),
    };
  }

  // Solving for r.
  const b = info!;
  const branchWanted = input.branch ?? 'outer';
  let nominalCount = -1;
  const compute = (x: readonly number[]): Outputs =>
    guarded({ frequency: '/frequency', r: '/frequency' }, '/frequency', () => {
      const gm = x[iGm];
      const a = dir * x[iSpin];
      const rgM = gm / C / C; // GM/c^2, m
      const tg = rgM / C; // GM/c^3, s
      const nu = x[iF];
      const w = TWO_PI * nu * tg; // dimensionless angular frequency, c^3/(GM)
      const range = achievableRange(kind, a);
      const reachable = w > 0 && Number.isFinite(w) && (range.maxAttained ? w <= range.max : w < range.max);
      if (!reachable) {
        const maxHz = range.max / tg / TWO_PI;
        const where =
          range.peak && range.rMax === range.peak.r
            ? `its peak, at r = ${both(range.rMax, rgM)}`
            : range.maxAttained
              ? `the ISCO, r = ${both(range.rMax, rgM)}`
              : `the circular photon orbit r = ${both(range.rMax, rgM)}, not reached by timelike orbits`;
        if (!(range.max > 0)) {
          throw new PhysicsDomainError(`no circular orbit shows ${label} around a non-rotating body (Omega_theta = Omega for spin 0)`, 'spin != 0', spinPointer);
        }
        throw new PhysicsDomainError(
          `no circular orbit (${sense}) around this body has ${label} ${fmt(nu)} Hz`,
          `0 < frequency ${range.maxAttained ? '<=' : '<'} ${fmt(maxHz)} Hz (the maximum, at ${where})`,
          '/frequency',
        );
      }
      const { roots } = radiiForFrequency(kind, w, a, range); // Brent on each monotone piece (physics/orbits.ts)
      if (nominalCount < 0) nominalCount = roots.length;
      else if (roots.length !== nominalCount) throw new RangeError('the number of solutions changes within the uncertainty');
      const pick = roots.length === 2 ? (branchWanted === 'inner' ? 0 : 1) : 0;
      const rMs = isco(a);
      const out: Outputs = { rg: rgM, r: roots[pick] * rgM, max: range.max / tg / TWO_PI, pick };
      roots.forEach((rr, i) => {
        const o = circularOrbit(rr, a);
        out[`root_${i}`] = rr * rgM; // m
        out[`stable_${i}`] = rr >= rMs ? 1 : 0;
        out[`bound_${i}`] = o.bound ? 1 : 0;
      });
      return out;
    });
  const bodyCertain = !(vars[iGm].sigma > 0) && !(vars[iSpin].sigma > 0);
  const pickedFlag = (nominal: Outputs, which: 'stable' | 'bound') => nominal[`${which}_${nominal.pick}`] === 1;
  return {
    vars,
    method: input.uncertainty_method,
    compute,
    shape: (get, nominal) => {
      const rgM = nominal.rg;
      const n = nominal.root_1 !== undefined ? 2 : 1;
      const roots = [];
      for (let i = 0; i < n; i++) roots.push({ r: radius(get(`root_${i}`), rgM), stable: nominal[`stable_${i}`] === 1, bound: nominal[`bound_${i}`] === 1 });
      return {
        quantity: kind,
        direction,
        r: radius(get('r'), rgM),
        branch: n === 1 ? 'single' : nominal.pick === 0 ? 'inner' : 'outer',
        roots,
        // Depends on the body only: without uncertain GM or spin it is exact (no sampling noise).
        frequency_max: dimensional(bodyCertain ? { value: nominal.max } : get('max'), 'Hz'),
        stable: pickedFlag(nominal, 'stable'),
        bound: pickedFlag(nominal, 'bound'),
      };
    },
    warnings: (nominal) => {
      const w = stabilityWarnings(pickedFlag(nominal, 'stable'), pickedFlag(nominal, 'bound'), 'the orbit at r');
      if (nominal.root_1 !== undefined) {
        const rg = nominal.rg;
        w.push({
          code: 'two-radii',
          message: `${label} takes this value at two radii, r = ${fmt(nominal.root_0 / rg)} and ${fmt(nominal.root_1 / rg)} GM/c^2 (it rises to a peak and falls again): r reports the ${nominal.pick === 0 ? 'inner' : 'outer'} one (request field branch); roots lists both`,
        });
      } else if (input.branch !== undefined) {
        w.push({ code: 'single-radius', message: `${label} takes this value at one radius only (beyond the rising part of the curve): branch "${input.branch}" has no other solution to choose` });
      }
      w.push(...presetWarnings(b, nominal.r));
      return w;
    },
    model,
    references: referencesFor(kind, true),
  };
}

// ---------------------------------------------------------------------------
// Registration

export async function orbitsCircularRoutes(app: FastifyInstance, opts: { config: Config }): Promise<void> {
  registerCaseRoute<CircularCase>(app, opts.config, {
    url: '/v1/orbits/circular',
    summary: 'Circular equatorial orbit: frequencies, periods, speed, energy and angular momentum',
    description:
      'A circular equatorial geodesic of the Kerr metric (Schwarzschild for spin 0; the exact Schwarzschild exterior of a preset body), prograde or retrograde: ' +
      'orbital angular velocity and frequency seen from infinity, coordinate and proper periods, speed in the locally non-rotating frame, specific energy and ' +
      'angular momentum (Bardeen, Press & Teukolsky 1972), radial and vertical epicyclic frequencies (Okazaki, Kato & Fukue 1987; Kato 1990), and the periastron ' +
      'and nodal precession frequencies (Stella & Vietri 1998). Between the photon orbit and the ISCO the orbit is unstable: the radial epicyclic and periastron ' +
      'precession frequencies are then omitted and the growth rate of radial perturbations is given, with a warning. At or inside the photon orbit: 422.',
    tags: ['orbits'],
    caseSchema: CircularCase,
    resultSchema: CircularResult,
    prepare: (input) => prepareForward(input),
  });

  registerCaseRoute<CircularInversionCase>(app, opts.config, {
    url: '/v1/orbits/circular/inversion',
    summary: 'Orbit radius, or central mass, from a measured orbital, epicyclic or precession frequency',
    description:
      'Without r: the radius of the circular equatorial orbit around the given body at which the chosen frequency (quantity) equals the measured one: closed form ' +
      'r^(3/2) = c^3/(GM Omega) - a (in rg) for the orbital frequency, Brent\'s method on each monotone piece of the curve otherwise. The radial epicyclic frequency ' +
      '(0 at the ISCO, peaking further out) and, for spin >~ 0.75, the vertical one are reached at two radii: both are listed in roots and branch picks r. ' +
      'With r in rg (or "isco"): the mass for which the frequency occurs at that radius; at the ISCO this is the usual upper bound on the mass from a kilohertz QPO. ' +
      'A frequency no orbit reaches is a 422 stating the achievable range.',
    tags: ['orbits'],
    caseSchema: CircularInversionCase,
    resultSchema: InversionResult,
    prepare: (input) => prepareInversion(input),
  });
}
