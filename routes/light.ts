/**
 * POST /v1/light/delay and POST /v1/light/deflection: light propagation past a spherical body.
 * The excess (Shapiro) delay of a signal between two points in the weak-field (PPN) straight-line
 * approximation, and the deflection of a ray, both to second order in the weak field (PPN gamma at
 * first order) and exactly in the Schwarzschild metric.
 *
 * All the physics is in ../physics/light.ts; this module reads the case, declares the uncertain
 * inputs with their physical domains, and shapes the reply.
 */
import type { FastifyInstance } from 'fastify';
import { Type, type Static } from '@sinclair/typebox';
import { C } from '../physics/constants.js';
import { PhysicsDomainError } from '../physics/errors.js';
import { B_CRITICAL, criticalMargin, deflectionExact, deflectionFirstOrder, deflectionSecondOrderGR, shapiroDelay, turningPoint, type DelayGeometry } from '../physics/light.js';
import type { Outputs } from '../physics/uncertainty.js';
import { registerCaseRoute, type Prepared, type Warning } from '../server/cases.js';
import type { Config } from '../server/config.js';
import { VarList, fail, body as readBody, length, scalar, type BodyInfo } from '../server/inputs.js';
import { dimensional, dimensionless, radius } from '../server/outputs.js';
import { Body, LENGTH_UNITS, Provenance, Quantity, QuantityOut, Scalar, ScalarOut, UncertaintyMethod, type QuantityInput } from '../server/schemas.js';

// ---------------------------------------------------------------------------
// Schemas

/** Threshold of the weak-field flag on GM/(c^2 r) at the closest approach (dimensionless). */
const WEAK_FIELD_LIMIT = 1e-3;
const ARCSEC_PER_RAD = 648000 / Math.PI;

const PpnGamma = Scalar(
  'PPN parameter gamma (space curvature produced by unit rest mass), dimensionless, in [-10, 10]; default 1 (general relativity). May carry an uncertainty.',
  { minimum: -10, maximum: 10 },
);

const Length = (description: string, opts: { positive?: boolean } = {}) => Quantity(description, 'm', LENGTH_UNITS, opts);

export const DelayCase = Type.Object(
  {
    body: Body,
    r_emitter: Length('Distance of the emitter from the centre of the body (or in rg = GM/c^2, rs = 2GM/c^2).', { positive: true }),
    r_receiver: Length('Distance of the receiver from the centre of the body (or in rg = GM/c^2, rs = 2GM/c^2).', { positive: true }),
    impact_parameter: Length(
      'Impact parameter b: the distance from the centre of the body to the straight line through emitter and receiver, 0 <= b <= min(r_emitter, r_receiver) (or in rg, rs).',
    ),
    geometry: Type.Optional(
      Type.Unsafe<DelayGeometry>({
        type: 'string',
        enum: ['between', 'outside'],
        description:
          'Where the point of the straight path closest to the body lies: "between" (default) the emitter and the receiver, so the signal passes the body (conjunction), ' +
          'with emitter-receiver distance R = sqrt(r_e^2 - b^2) + sqrt(r_r^2 - b^2); "outside" the segment (both ends on the same side), R = |sqrt(r_e^2 - b^2) - sqrt(r_r^2 - b^2)|.',
      }),
    ),
    ppn_gamma: Type.Optional(PpnGamma),
    uncertainty_method: Type.Optional(UncertaintyMethod),
  },
  { additionalProperties: false, description: 'A signal between two points past one body (weak field, straight-line path).' },
);
type DelayCase = Static<typeof DelayCase>;

export const DeflectionCase = Type.Object(
  {
    body: Body,
    impact_parameter: Length(
      'Impact parameter b = L/E of the ray (its distance of closest approach in flat space), measured from the centre of the body (or in rg = GM/c^2, rs = 2GM/c^2). ' +
        'Must exceed sqrt(27) GM/c^2 (a ray with a smaller b is captured) and, for a preset body, its reference radius.',
      { positive: true },
    ),
    ppn_gamma: Type.Optional(PpnGamma),
    uncertainty_method: Type.Optional(UncertaintyMethod),
  },
  { additionalProperties: false, description: 'A light ray from infinity past one body, to infinity.' },
);
type DeflectionCase = Static<typeof DeflectionCase>;

const R = (what: string) => QuantityOut(what, 'm', true);

const DelayResult = Type.Object({
  one_way: QuantityOut(
    'One-way excess (Shapiro) delay, Delta t = (1 + gamma) GM/c^3 ln[(r_e + r_r + R)/(r_e + r_r - R)] (Shapiro 1964; Will 2014), over the straight-line light time R/c.',
    's',
  ),
  round_trip: QuantityOut('Round-trip excess delay, 2 x one_way (the signal retraces its path; the motion of the ends during the light time is neglected).', 's'),
  one_way_small_b: Type.Optional(
    QuantityOut('The b << r form of the one-way delay, (1 + gamma) GM/c^3 ln(4 r_e r_r / b^2), for comparison ("between" geometry only).', 's'),
  ),
  excess_path: QuantityOut('The one-way delay as an excess range, c x one_way.', 'm'),
  distance: QuantityOut('Straight-line emitter-receiver distance R.', 'm'),
  closest_approach: R('Closest approach of the straight path to the centre of the body: b ("between") or the nearer end ("outside").'),
  weak_field_parameter: ScalarOut('GM/(c^2 x closest_approach), dimensionless: the expansion parameter of the weak-field result (flagged above 1e-3).'),
  ppn_factor: ScalarOut('PPN weight (1 + gamma)/2, dimensionless (1 in general relativity).'),
  ...Provenance,
});

const Angle = (description: string) =>
  Type.Object(
    {
      ...QuantityOut(description, 'rad').properties,
      arcsec: Type.Number({ description: 'The value in arcseconds (nominal; the uncertainty scales by the same factor).' }),
    },
    { description },
  );

const DeflectionResult = Type.Object({
  weak_field: Type.Object(
    {
      ...Angle('Weak-field deflection angle to second order.').properties,
      first_order: Type.Number({ description: 'First-order (PPN) term 2 (1 + gamma) GM/(c^2 b), rad (nominal).' }),
      second_order: Type.Number({ description: 'Second-order term (15 pi/4) (GM/(c^2 b))^2 of general relativity (Epstein & Shapiro 1980), rad (nominal); held at its GR value for any gamma.' }),
    },
    {
      description:
        'Weak-field deflection 2 (1 + gamma) GM/(c^2 b) + (15 pi/4) (GM/(c^2 b))^2, rad and arcsec (Will 2014; Epstein & Shapiro 1980). The second-order term is the general-relativity value.',
    },
  ),
  exact: Angle(
    'Exact deflection of a ray in the Schwarzschild metric (general relativity, independent of ppn_gamma): 2 int_0^u0 du / sqrt(1/b^2 - u^2 (1 - 2u)) - pi (u = GM/(c^2 r)), by quadrature; diverges logarithmically as b -> sqrt(27) GM/c^2.',
  ),
  closest_approach: R('Radius r0 of closest approach of the exact Schwarzschild ray (areal radius), the largest root of r^3 - b^2 r + 2 b^2 = 0 in rg.'),
  critical_impact_parameter: R('Critical impact parameter sqrt(27) GM/c^2: rays with a smaller b are captured.'),
  weak_field_parameter: ScalarOut('GM/(c^2 b), dimensionless: the expansion parameter of the weak-field series (flagged above 1e-3).'),
  ppn_factor: ScalarOut('PPN weight (1 + gamma)/2 of the first-order term, dimensionless (1 in general relativity).'),
  ...Provenance,
});

// ---------------------------------------------------------------------------
// Provenance

const REFS = {
  shapiro: 'Shapiro 1964, Phys. Rev. Lett. 13, 789 (excess delay)',
  will: 'Will 2014, Living Rev. Relativity 17, 4 (PPN delay and deflection, section 3.4)',
  epstein: 'Epstein & Shapiro 1980, Phys. Rev. D 22, 2947 (second-order deflection)',
  chandra: 'Chandrasekhar 1983, The Mathematical Theory of Black Holes, section 20 (Schwarzschild null geodesics)',
};

// ---------------------------------------------------------------------------
// Reading inputs

interface LengthVar {
  idx: number;
  unit: 'm' | 'rg';
  pointer: string;
}

/** A length that may be body-relative: its variable is in metres or in rg. */
function readLength(input: QuantityInput, pointer: string): { value: number; sigma: number; unit: 'm' | 'rg' } {
  const l = length(input, pointer);
  const v = l.relative === 'rs' ? { value: 2 * l.value, sigma: 2 * l.sigma, unit: 'rg' as const } : { value: l.value, sigma: l.sigma, unit: l.relative === 'rg' ? ('rg' as const) : ('m' as const) };
  if (!Number.isFinite(v.value) || !Number.isFinite(v.sigma)) fail(pointer, `gives ${v.value} ${v.unit}, outside the representable range`);
  return v;
}

/** The value of a length variable in metres for GM/c^2 = rg metres; a domain error when it does not fit a double. */
function metres(x: readonly number[], v: LengthVar, rg: number): number {
  const m = v.unit === 'rg' ? x[v.idx] * rg : x[v.idx];
  if (!(m >= 0 && m < Infinity)) {
    throw new PhysicsDomainError(`${x[v.idx]} GM/c^2 is ${m} m, outside the representable range for GM/c^2 = ${rg} m`, 'lengths between 0 and 1e300 m when converted to metres', v.pointer);
  }
  return m;
}

function bodyVar(b: BodyInfo, vars: VarList): number {
  return vars.add({ name: b.gmPointer, value: b.gm.value, sigma: b.gm.sigma, lo: 0, hi: Infinity });
}

function ppnVar(input: DelayCase['ppn_gamma'], vars: VarList): number {
  const s = scalar(input, 1);
  return vars.add({ name: '/ppn_gamma', value: s.value, sigma: s.sigma, lo: -Infinity, hi: Infinity });
}

function noSpinFlags(b: BodyInfo): Warning[] {
  if (b.spin.value === 0 && b.spin.sigma === 0) return [];
  return [{ code: 'spin-not-modelled', message: "the body's spin is not used here: the field is that of a non-rotating spherical body (frame dragging and the Kerr terms are not included)" }];
}

function weakFieldFlag(x: number, what: string): Warning[] {
  if (!(x > WEAK_FIELD_LIMIT)) return [];
  return [
    {
      code: 'weak-field-formula',
      message: `${what} = ${x.toExponential(2)} > ${WEAK_FIELD_LIMIT}: a weak-field (post-Newtonian) result, with relative errors of order ${what}`,
    },
  ];
}

// ---------------------------------------------------------------------------
// POST /v1/light/delay

function prepareDelay(input: DelayCase): Prepared {
  const vars = new VarList();
  const b = readBody(input.body, '/body');
  const preset = b.preset;
  const iGm = bodyVar(b, vars);
  const geometry: DelayGeometry = input.geometry ?? 'between';
  const rgNominal = b.gm.value / C / C; // GM/c^2, m
  const inMetres = (v: { value: number; unit: 'm' | 'rg' }) => (v.unit === 'rg' ? v.value * rgNominal : v.value);

  const eIn = readLength(input.r_emitter, '/r_emitter');
  const rIn = readLength(input.r_receiver, '/r_receiver');
  const bIn = readLength(input.impact_parameter, '/impact_parameter');
  if (!(bIn.value >= 0)) fail('/impact_parameter', `must be >= 0 (a distance from the centre of the body); got ${bIn.value}`);
  // Domains at the nominal inputs (in each variable's own unit): b <= min(r_e, r_r).
  const minR = Math.min(inMetres(eIn), inMetres(rIn));
  const bM = inMetres(bIn);
  const toUnit = (m: number, unit: 'm' | 'rg') => (unit === 'rg' ? m / rgNominal : m);
  const E: LengthVar = { unit: eIn.unit, pointer: '/r_emitter', idx: vars.add({ name: '/r_emitter', value: eIn.value, sigma: eIn.sigma, lo: toUnit(bM, eIn.unit), hi: Infinity, loClosed: true }) };
  const Rv: LengthVar = { unit: rIn.unit, pointer: '/r_receiver', idx: vars.add({ name: '/r_receiver', value: rIn.value, sigma: rIn.sigma, lo: toUnit(bM, rIn.unit), hi: Infinity, loClosed: true }) };
  const B: LengthVar = { unit: bIn.unit, pointer: '/impact_parameter', idx: vars.add({ name: '/impact_parameter', value: bIn.value, sigma: bIn.sigma, lo: 0, hi: toUnit(minR, bIn.unit), loClosed: true, hiClosed: true }) };
  const iGamma = ppnVar(input.ppn_gamma, vars);

  const compute = (x: readonly number[]): Outputs => {
    const gm = x[iGm];
    const rg = gm / C / C; // GM/c^2, m
    const rE = metres(x, E, rg);
    const rR = metres(x, Rv, rg);
    const bb = metres(x, B, rg);
    if (!(bb <= rE && bb <= rR)) {
      throw new PhysicsDomainError(
        `no straight path at impact parameter b = ${bb} m reaches both the emitter (${rE} m from the centre) and the receiver (${rR} m)`,
        `0 <= b <= min(r_emitter, r_receiver) = ${Math.min(rE, rR)} m`,
        '/impact_parameter',
      );
    }
    const nearer = rE <= rR ? E : Rv;
    const closest = geometry === 'between' ? bb : Math.min(rE, rR);
    const closestPointer = geometry === 'between' ? '/impact_parameter' : nearer.pointer;
    if (preset) {
      const R0 = b.surfaceRadius!;
      if (!(closest >= R0)) {
        throw new PhysicsDomainError(
          `the straight path comes within ${closest} m of the centre of the ${preset}, inside its reference radius ${R0} m`,
          `a closest approach (${geometry === 'between' ? 'b' : 'the nearer end'}) >= ${R0} m (outside the body)`,
          closestPointer,
        );
      }
    } else if (geometry === 'between') {
      const bc = B_CRITICAL * rg;
      if (!(bb > bc)) {
        throw new PhysicsDomainError(
          `a ray with impact parameter b = ${bb} m passes inside the photon sphere and is captured`,
          `b > sqrt(27) GM/c^2 = ${bc} m (Chandrasekhar 1983, section 20)`,
          '/impact_parameter',
        );
      }
    } else if (!(closest > 2 * rg)) {
      throw new PhysicsDomainError(
        `an end of the path lies at ${closest} m, inside the Schwarzschild radius`,
        `r_emitter and r_receiver > 2 GM/c^2 = ${2 * rg} m`,
        nearer.pointer,
      );
    }
    const gamma = x[iGamma];
    const d = shapiroDelay(gm, rE, rR, bb, gamma, geometry); // (1+gamma) GM/c^3 ln[(re+rr+R)/(re+rr-R)] (Shapiro 1964; Will 2014), s
    const out: Outputs = {
      rg,
      one_way: d.oneWay,
      round_trip: 2 * d.oneWay, // s
      excess_path: C * d.oneWay, // m
      distance: d.distance,
      closest,
      wf: rg / closest, // GM/(c^2 r_min)
      ppn: (1 + gamma) / 2,
    };
    if (geometry === 'between') out.small_b = d.smallB;
    return out;
  };

  return {
    vars: vars.list,
    method: input.uncertainty_method,
    compute,
    shape: (get, nominal) => {
      const reply: Record<string, unknown> = {
        one_way: dimensional(get('one_way'), 's'),
        round_trip: dimensional(get('round_trip'), 's'),
      };
      if (geometry === 'between') reply.one_way_small_b = dimensional(get('small_b'), 's');
      reply.excess_path = dimensional(get('excess_path'), 'm');
      reply.distance = dimensional(get('distance'), 'm');
      reply.closest_approach = radius(get('closest'), nominal.rg);
      reply.weak_field_parameter = dimensionless(get('wf'));
      reply.ppn_factor = dimensionless(get('ppn'));
      return reply;
    },
    warnings: (nominal) => [...weakFieldFlag(nominal.wf, 'GM/(c^2 r) at the closest approach'), ...noSpinFlags(b)],
    model: 'weak-field',
    references: [REFS.shapiro, REFS.will],
  };
}

// ---------------------------------------------------------------------------
// POST /v1/light/deflection

function prepareDeflection(input: DeflectionCase): Prepared {
  const vars = new VarList();
  const b = readBody(input.body, '/body');
  const preset = b.preset;
  const iGm = bodyVar(b, vars);
  const rgNominal = b.gm.value / C / C; // GM/c^2, m
  const bIn = readLength(input.impact_parameter, '/impact_parameter');
  // Domain of b at the nominal GM: outside a preset body, or beyond the critical impact parameter.
  const loM = preset ? b.surfaceRadius! : B_CRITICAL * rgNominal;
  const B: LengthVar = {
    unit: bIn.unit,
    pointer: '/impact_parameter',
    idx: vars.add({ name: '/impact_parameter', value: bIn.value, sigma: bIn.sigma, lo: bIn.unit === 'rg' ? loM / rgNominal : loM, hi: Infinity, loClosed: !!preset }),
  };
  const iGamma = ppnVar(input.ppn_gamma, vars);
  const gammaIn = scalar(input.ppn_gamma, 1);

  const compute = (x: readonly number[]): Outputs => {
    const gm = x[iGm];
    const rg = gm / C / C; // GM/c^2, m
    const bM = metres(x, B, rg);
    const q = B.unit === 'rg' ? 1 / x[B.idx] : rg / bM; // GM/(c^2 b)
    if (preset) {
      const R0 = b.surfaceRadius!;
      if (!(bM >= R0)) {
        throw new PhysicsDomainError(`a ray with impact parameter b = ${bM} m would hit the ${preset} (reference radius ${R0} m)`, `b >= ${R0} m (a ray passing outside the body)`, '/impact_parameter');
      }
    }
    if (!(criticalMargin(q) > 0)) {
      throw new PhysicsDomainError(
        `a ray with impact parameter b = ${1 / q} GM/c^2 = ${bM} m is captured by the black hole (it has no turning point outside the photon sphere)`,
        `b > sqrt(27) GM/c^2 = ${B_CRITICAL * rg} m (the critical impact parameter; Chandrasekhar 1983, section 20)`,
        '/impact_parameter',
      );
    }
    const gamma = x[iGamma];
    const first = deflectionFirstOrder(q, gamma); // 2 (1+gamma) GM/(c^2 b) (Will 2014), rad
    const second = deflectionSecondOrderGR(q); // (15 pi/4)(GM/(c^2 b))^2 (Epstein & Shapiro 1980), rad
    const tp = turningPoint(q);
    return {
      rg,
      weak: first + second,
      first,
      second,
      exact: deflectionExact(q), // Schwarzschild orbit equation by quadrature (Chandrasekhar 1983, section 20), rad
      r0: tp.r0OverB * bM, // r0 = (r0/b) b, m
      bcrit: B_CRITICAL * rg, // sqrt(27) GM/c^2, m
      wf: q,
      ppn: (1 + gamma) / 2,
    };
  };

  const angle = (m: ReturnType<typeof dimensional>) => ({ ...m, arcsec: m.value * ARCSEC_PER_RAD });
  return {
    vars: vars.list,
    method: input.uncertainty_method,
    compute,
    shape: (get, nominal) => ({
      weak_field: { ...angle(dimensional(get('weak'), 'rad')), first_order: nominal.first, second_order: nominal.second },
      exact: angle(dimensional(get('exact'), 'rad')),
      closest_approach: radius(get('r0'), nominal.rg),
      critical_impact_parameter: radius(get('bcrit'), nominal.rg),
      weak_field_parameter: dimensionless(get('wf')),
      ppn_factor: dimensionless(get('ppn')),
    }),
    warnings: (nominal) => {
      const w = weakFieldFlag(nominal.wf, 'GM/(c^2 b)');
      if (w.length > 0) w[0].message += '; use `exact` here';
      if (gammaIn.value !== 1 || gammaIn.sigma > 0) {
        w.push({
          code: 'exact-is-general-relativity',
          message: '`exact` is the Schwarzschild (general relativity) deflection and does not depend on ppn_gamma; in `weak_field` gamma enters the first-order term only (the second-order term is held at its GR value)',
        });
      }
      return [...w, ...noSpinFlags(b)];
    },
    model: 'schwarzschild',
    references: [REFS.will, REFS.epstein, REFS.chandra],
  };
}

// ---------------------------------------------------------------------------

export async function lightRoutes(app: FastifyInstance, opts: { config: Config }): Promise<void> {
  registerCaseRoute<DelayCase>(app, opts.config, {
    url: '/v1/light/delay',
    summary: 'Shapiro (excess) time delay of a signal passing a body (weak field, PPN)',
    description:
      'Excess light-travel time of a signal between an emitter and a receiver at distances r_e and r_r from a spherical body, along the straight line at impact parameter b: ' +
      'Delta t = (1 + gamma) GM/c^3 ln[(r_e + r_r + R)/(r_e + r_r - R)] with R the emitter-receiver distance (Shapiro 1964; PPN form, Will 2014), one-way and round trip, ' +
      'with the b << r form (1 + gamma) GM/c^3 ln(4 r_e r_r / b^2) for comparison. `geometry` says whether the path passes the body ("between", default) or not ("outside"). ' +
      'A path that enters a preset body, or (other bodies) whose impact parameter is inside sqrt(27) GM/c^2, is a 422. Results with GM/(c^2 r) > 1e-3 at the closest approach are flagged (weak-field-formula). ' +
      "Not included: the body's spin and oblateness, the motion of the ends, and the bending of the path (a higher-order effect).",
    tags: ['light'],
    caseSchema: DelayCase,
    resultSchema: DelayResult,
    prepare: (input) => prepareDelay(input),
  });

  registerCaseRoute<DeflectionCase>(app, opts.config, {
    url: '/v1/light/deflection',
    summary: 'Deflection of a light ray by a body: weak field (PPN) and exact Schwarzschild',
    description:
      'Total deflection of a ray coming from and going to infinity with impact parameter b past a spherical body: the weak-field series 2 (1 + gamma) GM/(c^2 b) + (15 pi/4)(GM/(c^2 b))^2 ' +
      '(Will 2014; Epstein & Shapiro 1980; the second-order term is the general-relativity value), and the exact Schwarzschild deflection by quadrature of the orbit equation ' +
      '(Chandrasekhar 1983, section 20), which diverges logarithmically as b approaches sqrt(27) GM/c^2. In rad and arcsec, with the radius of closest approach. ' +
      'b at or below sqrt(27) GM/c^2 (capture), or inside a preset body, is a 422. The body\'s spin is not modelled.',
    tags: ['light'],
    caseSchema: DeflectionCase,
    resultSchema: DeflectionResult,
    prepare: (input) => prepareDeflection(input),
  });
}
