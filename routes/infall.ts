/**
 * POST /v1/infall: a probe falls radially into a Schwarzschild black hole, from rest at start_r
 * or from rest at infinity, and emits a pulse every pulse_interval of its own proper time; a
 * static receiver at observer_r times their arrivals. The reply lists the pulses (emission radius
 * and coordinate time, arrival time and spacing on the receiver's clock, 1 + z), the proper time
 * to the horizon and to the singularity, and the index of the last pulse that ever arrives.
 *
 * All the physics is in ../physics/infall.ts (geometric units rs = 2GM/c^2, rs/c); this module
 * reads the case, plans which pulses to list (index arithmetic: the cost never grows with the
 * length of the fall, only with the pulses listed), declares the uncertain inputs and shapes the
 * reply. A request-level hook refuses timelines over PULSES_MAX (413) before any work.
 *
 * Decisions (documented in the schema):
 *   - The receiver may sit anywhere outside the horizon, also below the clock start: pulses
 *     emitted above it reach it on ingoing light, the others on outgoing light.
 *   - Pulses are numbered k = 0, 1, 2, ...: pulse k is emitted at proper time k pulse_interval
 *     after the clock start (first_pulse_r, default start_r; observer_r for a fall from infinity).
 *     Only pulses emitted outside the horizon are listed (the others never arrive).
 *   - Uncertainties propagate to every output, per pulse too, with the list of pulse indices held
 *     at its nominal value (a perturbed evaluation that would move a listed pulse behind the
 *     horizon is rejected by the propagation: Ridders' steps shrink; Monte Carlo leaves the sample
 *     out and says so in a samples-failed warning, so its statistics are then conditional on every
 *     listed pulse arriving; r_range keeps the listed pulses away from the horizon).
 */
import type { FastifyInstance, FastifyRequest } from 'fastify';
import { Type, type Static } from '@sinclair/typebox';
import { C } from '../physics/constants.js';
import { PhysicsDomainError } from '../physics/errors.js';
import { efoldingTime, makeFall, makeReceiver, planTimeline, pulseTimeline, type Fall, type Receiver, type TimelinePlan } from '../physics/infall.js';
import type { Measured, Outputs, Variable } from '../physics/uncertainty.js';
import { registerCaseRoute, type Prepared, type Warning } from '../server/cases.js';
import type { Config } from '../server/config.js';
import { body as readBody, length, quantity } from '../server/inputs.js';
import { dimensional, dimensionless, radius } from '../server/outputs.js';
import { InputError } from '../server/problems.js';
import { Body, LENGTH_UNITS, Provenance, Quantity, QuantityOut, ScalarOut, UncertaintyMethod, type QuantityInput } from '../server/schemas.js';

// ---------------------------------------------------------------------------
// Schemas

const TIME_UNITS = ['s', 'ms', 'us', 'ns', 'min', 'h', 'd', 'yr'] as const;
const FROM_INFINITY = 'from_rest_at_infinity';

/** Most pulse evaluations (listed pulses x model evaluations) one uncertain request may need. */
const UNCERTAIN_PULSE_WORK_MAX = 200_000;
/** Monte Carlo sample count when none is given (as in server/cases.ts). */
const DEFAULT_SAMPLES = 10000;

const LengthIn = (description: string) => Quantity(`${description} Measured from the centre (Schwarzschild r); or in rg = GM/c^2, rs = 2GM/c^2.`, 'm', LENGTH_UNITS, { positive: true });

const startQuantity = LengthIn('Radius at which the probe is released from rest.');
const StartR = Type.Union([...startQuantity.anyOf, Type.Literal(FROM_INFINITY, { description: 'The probe falls from rest at infinity (specific energy E = 1).' })], {
  description:
    'Where the probe starts: released from rest at this radius (default unit m; or km, ..., rg, rs; > rs = 2GM/c^2; may carry an uncertainty), or the string "from_rest_at_infinity".',
});

export const InfallCase = Type.Object(
  {
    body: Body,
    start_r: StartR,
    observer_r: LengthIn('Radius of the static receiver (default unit m), anywhere outside the horizon, above or below the probe.'),
    pulse_interval: Quantity("Interval between pulses on the probe's own clock (proper time).", 's', TIME_UNITS, { positive: true }),
    first_pulse_r: Type.Optional(
      LengthIn(
        "Radius at which the probe's clock reads 0 and it emits pulse 0 (default unit m); rs < first_pulse_r <= start_r. Default: start_r (the release point); for a fall from rest at infinity, observer_r.",
      ),
    ),
    every: Type.Optional(
      Type.Integer({
        minimum: 1,
        maximum: Number.MAX_SAFE_INTEGER,
        description: 'List only every k-th pulse (indices 0, k, 2k, ...), dimensionless; default 1. Arrival intervals still refer to the pulse just before each listed one.',
      }),
    ),
    r_range: Type.Optional(
      Type.Object(
        {
          min: Type.Optional(LengthIn('List only pulses emitted at r >= min (default unit m; default: down to the horizon). No uncertainty.')),
          max: Type.Optional(LengthIn('List only pulses emitted at r <= max (default unit m; default: from the first pulse). No uncertainty.')),
        },
        { additionalProperties: false, description: 'Emission radii of the pulses to list (default unit m): keeps long falls small. Combines with every.' },
      ),
    ),
    uncertainty_method: Type.Optional(UncertaintyMethod),
  },
  {
    additionalProperties: false,
    description:
      "A probe falling radially into a Schwarzschild black hole, pulsing every pulse_interval of its proper time, and a static receiver. Pulse k is emitted k pulse_interval after the first pulse; only pulses emitted outside the horizon are listed. At most PULSES_MAX pulses per request (413 above): use every or r_range for long falls. Input uncertainties propagate to the scalar outputs and to every listed pulse (same pulse indices in every perturbed evaluation).",
  },
);
type InfallCase = Static<typeof InfallCase>;

const PulseOut = Type.Object(
  {
    index: Type.Integer({ description: 'Pulse number k (dimensionless): emitted k pulse_interval after pulse 0.' }),
    proper_time: QuantityOut("Emission time on the probe's clock, k pulse_interval.", 's'),
    emission_r: QuantityOut('Schwarzschild radius of the probe at emission.', 'm', true),
    emission_time: QuantityOut('Schwarzschild coordinate time of emission, counted from the emission of pulse 0.', 's'),
    arrival_time: QuantityOut(
      "Arrival time on the receiver's clock (its proper time, sqrt(1 - rs/r_o) times coordinate time; 0 at the emission of pulse 0), along the radial light ray (tortoise coordinate).",
      's',
    ),
    arrival_interval: Type.Optional(
      QuantityOut("Arrival time of this pulse minus that of pulse k - 1, on the receiver's clock (absent for pulse 0). Tends to (1 + z) pulse_interval as pulse_interval -> 0.", 's'),
    ),
    one_plus_z: ScalarOut(
      '1 + z = nu_emitted/nu_received (dimensionless): the ratio of the photon energies the probe and the receiver measure. Below 1 (blueshift) for light sent inward to a receiver below the probe.',
    ),
  },
  { description: 'One pulse.' },
);

const InfallResult = Type.Object({
  pulses: Type.Array(PulseOut, { description: 'The listed pulses in emission order (every, r_range), all emitted outside the horizon.' }),
  pulse_count: Type.Integer({ description: 'Number of pulses listed (dimensionless).' }),
  last_arriving_index: Type.Integer({ description: 'Index of the last pulse that ever reaches the receiver: the last one emitted before the probe crosses the horizon (nominal inputs; no uncertainty).' }),
  last_emitted_index: Type.Integer({ description: 'Index of the last pulse emitted before the probe reaches r = 0 (nominal inputs; no uncertainty).' }),
  horizon_proper_time: QuantityOut("Probe's proper time from pulse 0 to the horizon crossing.", 's'),
  singularity_proper_time: QuantityOut("Probe's proper time from pulse 0 to r = 0 (from rest at R: pi sqrt(R^3/(8GM)) when pulse 0 is at R).", 's'),
  efolding_time: QuantityOut("Late-time e-folding time of 1 + z on the receiver's clock: 4GM/c^3 sqrt(1 - rs/r_o) (the inverse surface gravity, seen by the receiver).", 's'),
  ...Provenance,
});

// ---------------------------------------------------------------------------
// Provenance

const REFS = {
  mtw: 'Misner, Thorne & Wheeler 1973, Gravitation, §25.5 (eq. 25.28) and §31.4 (radial free fall, t(eta))',
  rw: 'Regge & Wheeler 1957, Phys. Rev. 108, 1063 (tortoise coordinate)',
  at: 'Ames & Thorne 1968, ApJ 151, 659 (late-time exponential redshift of an infalling source)',
};

// ---------------------------------------------------------------------------
// Reading and planning a case

function fail(pointer: string, message: string, status = 400, detail?: string): never {
  throw new InputError([{ pointer, message }], status, detail);
}

/** A length in metres or in rg (body-relative inputs stay body-relative under a perturbed GM). */
interface LengthVar {
  value: number;
  sigma: number;
  unit: 'm' | 'rg';
}

function readLength(input: QuantityInput, pointer: string): LengthVar {
  const l = length(input, pointer);
  const r =
    l.relative === 'rs'
      ? { value: 2 * l.value, sigma: 2 * l.sigma, unit: 'rg' as const }
      : { value: l.value, sigma: l.sigma, unit: l.relative === 'rg' ? ('rg' as const) : ('m' as const) };
  if (!Number.isFinite(r.value) || !Number.isFinite(r.sigma)) fail(pointer, `gives ${r.value} m, outside the representable range`);
  return r;
}

/** r/rs of a length whose variable is x (m or rg) for a body with rs in metres. */
const rhoOf = (l: LengthVar, x: number, rs: number): number => (l.unit === 'rg' ? x / 2 : x / rs);

interface Plan {
  vars: Variable[];
  /** Positions of the inputs in vars. */
  idx: { gm: number; start?: number; observer: number; first?: number; dt: number };
  start?: LengthVar;
  observer: LengthVar;
  first?: LengthVar;
  preset?: string;
  timeline: TimelinePlan;
  /** Nominal fall, receiver and clock-start radius (r/rs). */
  fall: Fall;
  receiver: Receiver;
  uncertain: boolean;
  /** Model evaluations the propagation will need (as server/cases.ts estimates them). */
  evaluations: number;
}

/** The nominal geometry from the input variables; physics-domain violations are 422s. */
function geometry(p: Pick<Plan, 'idx' | 'start' | 'observer' | 'first'>, x: readonly number[]) {
  const gm = x[p.idx.gm];
  const rs = (2 * gm) / (C * C); // Schwarzschild radius 2GM/c^2, m
  const tUnit = rs / C; // rs/c, s
  const rsText = `rs = 2GM/c^2 = ${rs} m`;
  let rhoStart: number | undefined;
  if (p.start) {
    rhoStart = rhoOf(p.start, x[p.idx.start!], rs);
    if (!(rhoStart > 1)) {
      throw new PhysicsDomainError(`start_r = ${rhoStart} rs is not outside the horizon: the probe must be released outside it`, `start_r > ${rsText}`, '/start_r');
    }
  }
  const rhoObs = rhoOf(p.observer, x[p.idx.observer], rs);
  if (!(rhoObs > 1)) {
    throw new PhysicsDomainError(`observer_r = ${rhoObs} rs is not outside the horizon: no static receiver exists there`, `observer_r > ${rsText}`, '/observer_r');
  }
  for (const [rho, what, pointer] of [
    [rhoStart, 'start_r', '/start_r'],
    [rhoObs, 'observer_r', '/observer_r'],
  ] as const) {
    if (rho !== undefined && !Number.isFinite(rho)) {
      throw new PhysicsDomainError(`${what} is ${rho} rs: too large to represent next to ${rsText}`, `${what} < 1e300 rs`, pointer);
    }
  }
  const rhoClock = p.first ? rhoOf(p.first, x[p.idx.first!], rs) : (rhoStart ?? rhoObs);
  if (p.first && (!(rhoClock > 1) || !Number.isFinite(rhoClock) || (rhoStart !== undefined && !(rhoClock <= rhoStart)))) {
    throw new PhysicsDomainError(
      `first_pulse_r = ${rhoClock} rs is ${rhoClock > 1 ? 'above the release radius start_r: the probe never gets there' : 'not outside the horizon'}`,
      `${rsText} < first_pulse_r <= start_r${rhoStart !== undefined ? ` = ${rhoStart * rs} m` : ''}`,
      '/first_pulse_r',
    );
  }
  const fall = makeFall(rhoStart === undefined ? { kind: 'infinity' } : { kind: 'rest', rho: rhoStart }, rhoClock);
  const receiver = makeReceiver(rhoObs);
  const dtau = x[p.idx.dt] / tUnit; // pulse interval, rs/c
  if (!(dtau > 0) || !Number.isFinite(dtau)) {
    throw new PhysicsDomainError(`pulse_interval is ${dtau} rs/c, outside the representable range`, `0 < pulse_interval < 1e300 rs/c (rs/c = ${tUnit} s)`, '/pulse_interval');
  }
  return { gm, rs, tUnit, fall, receiver, dtau, rhoClock };
}

function evaluationsFor(vars: Variable[], method: InfallCase['uncertainty_method']): number {
  const n = vars.filter((v) => v.sigma > 0).length;
  if (n === 0) return 1;
  return method?.kind === 'monte-carlo' ? (method.samples ?? DEFAULT_SAMPLES) : 1 + 60 * n;
}

/** Reads a case and plans its timeline (no pulse is computed). Throws InputError or PhysicsDomainError. */
function planCase(input: InfallCase): Plan {
  const b = readBody(input.body, '/body');
  if (b.spin.value !== 0 || b.spin.sigma > 0) fail(b.spinPointer, 'must be 0 or absent: this route uses the Schwarzschild metric (no spin)');
  const vars: Variable[] = [];
  const add = (v: Variable) => vars.push(v) - 1;
  const gm = add({ name: b.gmPointer, value: b.gm.value, sigma: b.gm.sigma, lo: 0, hi: Infinity });
  const rsNominal = (2 * b.gm.value) / (C * C); // 2GM/c^2, m
  if (!(rsNominal > 0) || !Number.isFinite(rsNominal)) fail(b.gmPointer, `gives rs = 2GM/c^2 = ${rsNominal} m, outside the representable range`);
  // Domains of the lengths at the nominal GM: outside the horizon (2 in rg).
  const lo = (l: LengthVar) => (l.unit === 'rg' ? 2 : rsNominal);
  const start = input.start_r === FROM_INFINITY ? undefined : readLength(input.start_r, '/start_r');
  const observer = readLength(input.observer_r, '/observer_r');
  const first = input.first_pulse_r === undefined ? undefined : readLength(input.first_pulse_r, '/first_pulse_r');
  const idx: Plan['idx'] = { gm, observer: -1, dt: -1 };
  if (start) idx.start = add({ name: '/start_r', value: start.value, sigma: start.sigma, lo: lo(start), hi: Infinity });
  idx.observer = add({ name: '/observer_r', value: observer.value, sigma: observer.sigma, lo: lo(observer), hi: Infinity });
  if (first) {
    // Up to the release radius, expressed in first_pulse_r's own unit.
    const startM = start ? (start.unit === 'rg' ? (start.value * rsNominal) / 2 : start.value) : Infinity;
    const hi = first.unit === 'rg' ? (2 * startM) / rsNominal : startM;
    idx.first = add({ name: '/first_pulse_r', value: first.value, sigma: first.sigma, lo: lo(first), hi, hiClosed: true });
  }
  const dt = quantity(input.pulse_interval, '/pulse_interval', 'time');
  if (!(dt.value > 0) || !Number.isFinite(dt.value) || !Number.isFinite(dt.sigma)) fail('/pulse_interval', `gives ${dt.value} s, outside the representable range (0, 1e300] s`);
  idx.dt = add({ name: '/pulse_interval', value: dt.value, sigma: dt.sigma, lo: 0, hi: Infinity });

  const x0 = vars.map((v) => v.value);
  const unit = (2 * b.gm.value) / (C * C * C); // rs/c, s
  if (!Number.isFinite(dt.value / unit)) fail('/pulse_interval', `gives ${dt.value / unit} rs/c (rs/c = ${unit} s): outside the representable range`);
  const geo = geometry({ idx, start, observer, first }, x0);
  const { fall, dtau, tUnit } = geo;
  if (!Number.isFinite(fall.singularityTau * tUnit)) {
    throw new PhysicsDomainError(`the fall lasts longer than the representable range of proper time`, 'a fall shorter than 1e300 s (start_r and first_pulse_r at most ~1e200 rs)', start ? '/start_r' : '/observer_r');
  }
  const ratio = fall.singularityTau / dtau;
  if (!(ratio <= Number.MAX_SAFE_INTEGER)) {
    fail('/pulse_interval', `is too short for this fall: the probe would emit ${ratio.toExponential(3)} pulses before r = 0, more than 2^53 - 1 (pulse indices would not be exact); the fall lasts ${fall.singularityTau * tUnit} s of proper time`);
  }
  // r_range: emission heights x = r/rs - 1 at the nominal GM.
  const heightOf = (q: QuantityInput | undefined, pointer: string): number | undefined => {
    if (q === undefined) return undefined;
    const l = readLength(q, pointer);
    if (l.sigma > 0) fail(`${pointer}/uncertainty`, 'r_range selects pulses and takes no uncertainty');
    return l.unit === 'rg' ? l.value / 2 - 1 : l.value / rsNominal - 1;
  };
  const xMin = heightOf(input.r_range?.min, '/r_range/min');
  const xMax = heightOf(input.r_range?.max, '/r_range/max');
  if (xMin !== undefined && xMax !== undefined && !(xMin <= xMax)) fail('/r_range/min', 'must not exceed r_range.max');
  const timeline = planTimeline(fall, dtau, input.every ?? 1, xMin, xMax);
  const uncertain = vars.some((v) => v.sigma > 0);
  return {
    vars,
    idx,
    start,
    observer,
    first,
    preset: b.preset,
    timeline,
    fall,
    receiver: geo.receiver,
    uncertain,
    evaluations: evaluationsFor(vars, input.uncertainty_method),
  };
}

/** Per-request limits, checked before any pulse is computed: PULSES_MAX, and the propagation work. */
function checkLimits(request: FastifyRequest, config: Config): void {
  const body = request.body as InfallCase | { items: InfallCase[] };
  const batch = 'items' in body && Array.isArray(body.items);
  const inputs = batch ? (body as { items: InfallCase[] }).items : [body as InfallCase];
  const workMax = Math.min(config.COMPUTE_BUDGET, UNCERTAIN_PULSE_WORK_MAX);
  let pulses = 0;
  let work = 0;
  for (let i = 0; i < inputs.length; i++) {
    let plan: Plan;
    try {
      plan = planCase(inputs[i]);
    } catch {
      continue; // the case is answered with its own 400/422 by the route
    }
    const pointer = `${batch ? `/items/${i}` : ''}/pulse_interval`;
    const n = plan.timeline.selection.count;
    pulses += n;
    if (pulses > config.PULSES_MAX) {
      fail(
        pointer,
        `the timeline lists ${n} pulses${batch ? `; with the cases before it this request asks for ${pulses}` : ''}, over PULSES_MAX = ${config.PULSES_MAX}: use a longer pulse_interval, every, or r_range`,
        413,
        `this request asks for ${pulses}${batch ? ' or more' : ''} pulses; the limit is ${config.PULSES_MAX} (PULSES_MAX): use a longer pulse_interval, every (every k-th pulse) or r_range (pulses within a range of radii)`,
      );
    }
    if (plan.uncertain) {
      work += n * plan.evaluations;
      if (work > workMax) {
        fail(
          pointer,
          `propagating uncertainties to ${n} pulses takes about ${n * plan.evaluations} pulse evaluations; the limit per request is ${workMax}: list fewer pulses (every, r_range) or use fewer Monte Carlo samples`,
          413,
          `uncertainty propagation over the listed pulses needs about ${work} pulse evaluations; the limit is ${workMax} (min of COMPUTE_BUDGET and ${UNCERTAIN_PULSE_WORK_MAX}): list fewer pulses (every, r_range) or use fewer Monte Carlo samples`,
        );
      }
    }
  }
}

// ---------------------------------------------------------------------------
// The case

const PULSE_KEYS = ['proper_time', 'emission_r', 'emission_time', 'arrival_time', 'arrival_interval', 'one_plus_z'] as const;

function prepareInfall(input: InfallCase, config: Config): Prepared {
  const plan = planCase(input);
  const sel = plan.timeline.selection;
  // Also guarded per request by the preHandler hook (before any work).
  if (sel.count > config.PULSES_MAX) fail('/pulse_interval', `the timeline lists ${sel.count} pulses, over PULSES_MAX = ${config.PULSES_MAX}`, 413);

  /** Everything at inputs x: scalars in SI, and the timeline in SI columns. */
  const evaluate = (x: readonly number[]) => {
    const geo = geometry(plan, x);
    const tl = pulseTimeline(geo.fall, geo.receiver, geo.dtau, sel);
    const u = geo.tUnit;
    const scalars: Outputs = {
      rg: geo.rs / 2, // GM/c^2, m
      horizon_proper_time: geo.fall.horizonTau * u,
      singularity_proper_time: geo.fall.singularityTau * u,
      efolding_time: efoldingTime(geo.receiver) * u, // 4GM/c^3 sqrt(1 - rs/r_o), s
    };
    return { scalars, tl, u, rs: geo.rs };
  };

  const compute = (x: readonly number[]): Outputs => {
    const { scalars, tl, u, rs } = evaluate(x);
    if (!plan.uncertain) return scalars;
    const out: Outputs = { ...scalars };
    for (let j = 0; j < sel.count; j++) {
      const k = tl.index[j];
      out[`p${k}_proper_time`] = k * x[plan.idx.dt]; // k pulse_interval, s (exactly: no rounding noise for the derivatives)
      out[`p${k}_emission_r`] = tl.rho[j] * rs;
      out[`p${k}_emission_time`] = tl.emission[j] * u;
      out[`p${k}_arrival_time`] = tl.arrival[j] * u;
      if (k > 0) out[`p${k}_arrival_interval`] = tl.interval[j] * u;
      out[`p${k}_one_plus_z`] = tl.onePlusZ[j];
    }
    return out;
  };

  const shape = (get: (key: string) => Measured, nominal: Outputs): Record<string, unknown> => {
    const rg = nominal.rg;
    let pulses: Array<Record<string, unknown>>;
    if (plan.uncertain) {
      pulses = [];
      for (let j = 0; j < sel.count; j++) {
        const k = sel.first + j * sel.step;
        const m = (key: (typeof PULSE_KEYS)[number]) => get(`p${k}_${key}`);
        const pulse: Record<string, unknown> = {
          index: k,
          proper_time: dimensional(m('proper_time'), 's'),
          emission_r: radius(m('emission_r'), rg),
          emission_time: dimensional(m('emission_time'), 's'),
          arrival_time: dimensional(m('arrival_time'), 's'),
        };
        if (k > 0) pulse.arrival_interval = dimensional(m('arrival_interval'), 's');
        pulse.one_plus_z = dimensionless(m('one_plus_z'));
        pulses.push(pulse);
      }
    } else {
      const x0 = plan.vars.map((v) => v.value);
      const { tl, u, rs } = evaluate(x0);
      pulses = new Array(sel.count);
      for (let j = 0; j < sel.count; j++) {
        const k = tl.index[j];
        const pulse: Record<string, unknown> = {
          index: k,
          proper_time: { value: k * x0[plan.idx.dt], unit: 's' },
          emission_r: { value: tl.rho[j] * rs, unit: 'm', rg: 2 * tl.rho[j] },
          emission_time: { value: tl.emission[j] * u, unit: 's' },
          arrival_time: { value: tl.arrival[j] * u, unit: 's' },
        };
        if (k > 0) pulse.arrival_interval = { value: tl.interval[j] * u, unit: 's' };
        pulse.one_plus_z = tl.onePlusZ[j];
        pulses[j] = pulse;
      }
    }
    return {
      pulses,
      pulse_count: sel.count,
      last_arriving_index: plan.timeline.lastArriving,
      last_emitted_index: plan.timeline.lastEmitted,
      horizon_proper_time: dimensional(get('horizon_proper_time'), 's'),
      singularity_proper_time: dimensional(get('singularity_proper_time'), 's'),
      efolding_time: dimensional(get('efolding_time'), 's'),
    };
  };

  const warnings = (nominal: Outputs, get: (key: string) => Measured): Warning[] => {
    const w: Warning[] = [];
    if (plan.preset) {
      w.push({ code: 'not-a-black-hole', message: `the ${plan.preset} is not a black hole: this is the fall into a black hole of the same mass` });
    }
    if (plan.fall.rhoClock > plan.receiver.rho) {
      w.push({
        code: 'probe-passes-receiver',
        message: 'the probe starts above the receiver: pulses emitted above observer_r reach it on ingoing light (blueshifted, 1 + z < 1, as the probe approaches), the later ones on outgoing light',
      });
    }
    if (sel.count === 0) w.push({ code: 'no-pulses-listed', message: 'no pulse emitted outside the horizon matches r_range and every' });
    const sigmaH = get('horizon_proper_time').uncertainty;
    if (sel.count > 0 && sigmaH !== undefined && sigmaH > 0) {
      const lastTau = (sel.first + (sel.count - 1) * sel.step) * plan.vars[plan.idx.dt].value;
      if (nominal.horizon_proper_time - lastTau < 3 * sigmaH) {
        w.push({
          code: 'pulses-near-horizon-uncertain',
          message: `some listed pulses are emitted within 3 sigma (${3 * sigmaH} s of proper time) of the horizon crossing: their arrival times and redshifts are far from linear in the inputs, and perturbed inputs may put them behind the horizon`,
        });
      }
    }
    return w;
  };

  return {
    vars: plan.vars,
    method: input.uncertainty_method,
    compute,
    shape,
    warnings,
    model: 'schwarzschild',
    references: [REFS.mtw, REFS.rw, REFS.at],
  };
}

export async function infallRoutes(app: FastifyInstance, opts: { config: Config }): Promise<void> {
  // Scoped to this plugin: refuse oversized timelines (413) before any case is computed.
  app.addHook('preHandler', async (request) => checkLimits(request, opts.config));
  registerCaseRoute<InfallCase>(app, opts.config, {
    url: '/v1/infall',
    summary: 'Pulse timeline of a probe falling into a Schwarzschild black hole',
    description:
      'A probe falls radially from rest at start_r (or from rest at infinity) and emits a pulse every pulse_interval of its proper time; a static receiver at observer_r ' +
      '(anywhere outside the horizon) times the arrivals. Each listed pulse has its emission radius, proper time and coordinate time, its arrival time and the spacing ' +
      "since the previous pulse on the receiver's clock, and 1 + z. The reply also gives the proper time to the horizon and to r = 0, and the index of the last pulse " +
      'that ever arrives. Closed forms: the cycloid (MTW eq. 25.28) and t(eta) (MTW §31.4), the E = 1 fall, and radial light along the tortoise coordinate. ' +
      'Uncertainties propagate to every output, per pulse too, with the listed pulse indices held at their nominal values (a Monte Carlo sample that would put a listed ' +
      'pulse behind the horizon is left out and counted in a samples-failed warning: use r_range to keep listed pulses away from the horizon); at most PULSES_MAX pulses per request ' +
      '(413 above; every and r_range keep long falls small).',
    tags: ['infall'],
    caseSchema: InfallCase,
    resultSchema: InfallResult,
    prepare: (input, ctx) => prepareInfall(input, ctx.config),
  });
}
