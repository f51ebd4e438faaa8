/**
 * Shared TypeBox schemas: every route builds its request and reply schemas from these, so that a
 * quantity, a body or a problem document looks the same everywhere (../shared/design/api.md).
 */
import { Type, type TSchema, type Static } from '@sinclair/typebox';

const finite = { minimum: -1e300, maximum: 1e300 } as const;

/** A finite JSON number (JSON has no NaN/Infinity; the bounds also keep 1e308-style overflow out). */
export const Num = (description: string, extra: Record<string, unknown> = {}) =>
  Type.Number({ ...finite, description, ...extra });

/** A dimensional input: a bare number in the default unit, or {value, unit?, uncertainty?}. */
export function Quantity(description: string, defaultUnit: string, acceptedUnits: readonly string[], opts: { positive?: boolean } = {}) {
  const value = opts.positive
    ? Type.Number({ exclusiveMinimum: 0, maximum: 1e300, description: `Value, in \`unit\` (default ${defaultUnit || 'dimensionless'}).` })
    : Num(`Value, in \`unit\` (default ${defaultUnit || 'dimensionless'}).`);
  return Type.Union(
    [
      opts.positive
        ? Type.Number({ exclusiveMinimum: 0, maximum: 1e300, description: `${description} Bare number: in ${defaultUnit}.` })
        : Num(`${description} Bare number: in ${defaultUnit}.`),
      Type.Object(
        {
          value,
          unit: Type.Optional(Type.String({ minLength: 1, maxLength: 64, description: `VOUnits unit string; accepted here: ${acceptedUnits.join(', ')}. Default ${defaultUnit}.` })),
          uncertainty: Type.Optional(Type.Number({ minimum: 0, maximum: 1e300, description: 'One-sigma standard uncertainty, in the same unit as value.' })),
        },
        { additionalProperties: false, description: `${description} As an object with unit and optional 1-sigma uncertainty.` },
      ),
    ],
    { description: `${description} Default unit ${defaultUnit}; accepted units: ${acceptedUnits.join(', ')}.` },
  );
}

export type QuantityInput = number | { value: number; unit?: string; uncertainty?: number };

/** A dimensionless input that may carry an uncertainty. */
export function Scalar(description: string, range: { minimum: number; maximum: number }) {
  return Type.Union(
    [
      Type.Number({ ...range, description }),
      Type.Object(
        {
          value: Type.Number({ ...range, description: 'Value (dimensionless).' }),
          uncertainty: Type.Optional(Type.Number({ minimum: 0, maximum: 1e300, description: 'One-sigma standard uncertainty (dimensionless).' })),
        },
        { additionalProperties: false },
      ),
    ],
    { description },
  );
}

export type ScalarInput = number | { value: number; uncertainty?: number };

export const MASS_UNITS = ['kg', 'g', 'solMass', 'earthMass', 'jupiterMass'] as const;
export const LENGTH_UNITS = ['m', 'km', 'cm', 'mm', 'um', 'nm', 'Angstrom', 'AU', 'pc', 'kpc', 'solRad', 'rg', 'rs'] as const;

export const Body = Type.Object(
  {
    mass: Type.Optional(Quantity('Mass of the central body.', 'kg', MASS_UNITS, { positive: true })),
    gm: Type.Optional(Quantity('Mass parameter GM of the central body.', 'm3.s-2', ['m3.s-2', 'km3.s-2'], { positive: true })),
    preset: Type.Optional(
      Type.Unsafe<'sun' | 'earth'>({
        type: 'string',
        enum: ['sun', 'earth'],
        description: 'A body with published constants: "sun" (IAU 2015 Resolution B3 nominal GM and radius) or "earth" (IERS Conventions 2010: GM, equatorial radius, J2, W0, L_G).',
      }),
    ),
    spin: Type.Optional(Scalar('Dimensionless Kerr spin a* = cJ/(GM^2) in [-1, 1]; positive means orbits and disks co-rotate with the hole. Default 0.', { minimum: -1, maximum: 1 })),
  },
  {
    additionalProperties: false,
    description: 'The central body: exactly one of mass, gm or preset, and an optional spin.',
  },
);
export type BodyInput = Static<typeof Body> & { angular_momentum?: QuantityInput };

/** A body that may also carry a spin angular momentum (weak-field frame dragging). */
export const RotatingBody = Type.Object(
  {
    ...Body.properties,
    angular_momentum: Type.Optional(
      Quantity(
        'Spin angular momentum J of a weak-field body (planet, star), for frame-dragging (Lense-Thirring) rates; a black hole takes `spin` instead. Not together with spin.',
        'kg.m2.s-1',
        ['kg.m2.s-1', 'kg.m2/s', 'J.s'],
        { positive: true },
      ),
    ),
  },
  {
    additionalProperties: false,
    description: 'The central body: exactly one of mass, gm or preset; a black hole\'s spin, or a weak-field body\'s angular_momentum.',
  },
);

/** Sense of a circular equatorial orbit (signed spin a for prograde, -a for retrograde). */
export const OrbitDirection = Type.Unsafe<'prograde' | 'retrograde'>({
  type: 'string',
  enum: ['prograde', 'retrograde'],
  description:
    'Circular orbits only. "prograde" (default): co-rotating with the hole when spin > 0 (signed spin a); "retrograde": counter-rotating (signed spin -a). A negative spin swaps the senses.',
});

export const UncertaintyMethod = Type.Object(
  {
    kind: Type.Unsafe<'linear' | 'monte-carlo'>({
      type: 'string',
      enum: ['linear', 'monte-carlo'],
      description: '"linear": first-order propagation (default); "monte-carlo": sampling, which also reports p16, p50 and p84.',
    }),
    samples: Type.Optional(Type.Integer({ minimum: 10, maximum: 10000000, description: 'Monte Carlo sample count (default 10000; at most MC_SAMPLES_MAX).' })),
    seed: Type.Optional(Type.Integer({ minimum: 0, maximum: 4294967295, description: 'Monte Carlo seed (default 1): the same seed gives the same reply.' })),
  },
  { additionalProperties: false, description: 'How input uncertainties are propagated to the outputs.' },
);
export type UncertaintyMethodInput = Static<typeof UncertaintyMethod>;

export const Warning = Type.Object(
  {
    code: Type.String({ description: 'Stable machine-readable code.' }),
    message: Type.String({ description: 'What the flag means for this result.' }),
  },
  { description: 'A flag on a computed result.' },
);

export const ProblemSchema = Type.Object(
  {
    type: Type.String({ description: 'URI reference naming the problem type.' }),
    title: Type.String({ description: 'Short summary of the problem type.' }),
    status: Type.Integer({ description: 'HTTP status code.' }),
    detail: Type.Optional(Type.String({ description: 'What went wrong with this request and what is allowed.' })),
    instance: Type.Optional(Type.String({ description: 'The request path.' })),
    request_id: Type.Optional(Type.String({ description: 'The request id (also in the x-request-id header).' })),
    errors: Type.Optional(
      Type.Array(
        Type.Object({
          pointer: Type.String({ description: 'RFC 6901 JSON pointer to the offending field of the request body.' }),
          message: Type.String({ description: 'What is wrong with it and what is allowed.' }),
        }),
        { description: 'The offending fields.' },
      ),
    ),
  },
  { description: 'RFC 9457 problem details.' },
);

/** Uncertain dimensionless output: a plain number, or an object when uncertain. */
export const ScalarOut = (description: string) =>
  Type.Union(
    [
      Type.Number({ description }),
      Type.Object({
        value: Type.Number({ description }),
        uncertainty: Type.Optional(Type.Number({ description: 'One-sigma uncertainty.' })),
        p16: Type.Optional(Type.Number({ description: 'Monte Carlo 15.87th percentile.' })),
        p50: Type.Optional(Type.Number({ description: 'Monte Carlo median.' })),
        p84: Type.Optional(Type.Number({ description: 'Monte Carlo 84.13th percentile.' })),
      }),
    ],
    { description },
  );

/** Dimensional output: value in SI with its unit, optional uncertainty, Monte Carlo percentiles and rg. */
export const QuantityOut = (description: string, unit: string, withRg = false) =>
  Type.Object(
    {
      value: Type.Number({ description: `${description} In ${unit}.` }),
      unit: Type.String({ description: `Unit of value (VOUnits): "${unit}".` }),
      uncertainty: Type.Optional(Type.Number({ description: `One-sigma uncertainty, ${unit}.` })),
      p16: Type.Optional(Type.Number({ description: `Monte Carlo 15.87th percentile, ${unit}.` })),
      p50: Type.Optional(Type.Number({ description: `Monte Carlo median, ${unit}.` })),
      p84: Type.Optional(Type.Number({ description: `Monte Carlo 84.13th percentile, ${unit}.` })),
      ...(withRg ? { rg: Type.Number({ description: 'The value in units of the gravitational radius GM/c^2 (nominal).' }) } : {}),
    },
    { description },
  );

/** Fields every case reply carries. */
export const Provenance = {
  model: Type.String({ description: 'The metric or approximation used: "kerr", "schwarzschild" or "weak-field".' }),
  references: Type.Array(Type.String(), { description: 'Short citations of the published methods used.' }),
  warnings: Type.Optional(Type.Array(Warning, { description: 'Flags on the result (results are still computed).' })),
};

/** Request body: one case, or a batch {items: [case, ...]}. */
export function CaseOrBatch<T extends TSchema>(caseSchema: T, batchMax: number) {
  return Type.Union(
    [
      caseSchema,
      Type.Object(
        { items: Type.Array(caseSchema, { minItems: 1, maxItems: batchMax, description: `1 to ${batchMax} cases (BATCH_MAX).` }) },
        { additionalProperties: false, description: 'A batch of cases, answered in the same order.' },
      ),
    ],
    { description: 'One case, or a batch {"items": [...]}.' },
  );
}

/** Reply: one case result, or a batch whose slots hold a result or {"error": problem}. */
export function ResultOrBatch<T extends TSchema>(resultSchema: T) {
  return Type.Union([
    resultSchema,
    Type.Object({
      items: Type.Array(Type.Union([resultSchema, Type.Object({ error: ProblemSchema })]), { description: 'Results in request order; a case that failed on physics holds {"error": problem}.' }),
      count: Type.Integer({ description: 'Number of items.' }),
    }),
  ]);
}
