/**
 * POST /v1/line-profile: the profile of an emission line from a thin Keplerian disk around a Kerr
 * hole, seen by a distant observer, by backward ray tracing (physics/raytrace.ts,
 * physics/lineprofile.ts) on the worker-thread pool (server/rays.ts).
 *
 * This module reads and checks the cases, groups them by geometry (spin, inclination, disk radii,
 * accuracy: one trace each, cached), asks the pool for the transfer data and the binned profiles,
 * and shapes the replies. It never traces on the event loop.
 */
import type { FastifyInstance } from 'fastify';
import { Type, type Static } from '@sinclair/typebox';
import { C } from '../physics/constants.js';
import { horizonOuter, isco, photonOrbit } from '../physics/kerr.js';
import { ACCURACY, type Accuracy, type DiskGeometry } from '../physics/lineprofile.js';
import { hzToSpectral, spectralToHz, spectralKind, UnitError } from '../physics/units.js';
import { findNonFinite, isProblem } from '../server/cases.js';
import type { Config } from '../server/config.js';
import { fail, length, lengthInRg, massAsGm, quantity, spectral, type LengthInput } from '../server/inputs.js';
import { InputError, problem, sendProblem, type FieldError, type Problem } from '../server/problems.js';
import { RayServiceError, requestSignal, sendRayServiceError, type CachedTransfer } from '../server/rays.js';
import type { BinJob, BinResult, EmissivitySpec } from '../server/ray-worker.js';
import { CaseOrBatch, LENGTH_UNITS, MASS_UNITS, ProblemSchema, Provenance, Quantity, ResultOrBatch, type QuantityInput } from '../server/schemas.js';
import { lineProfileSvg } from './line-profile-svg.js';

// ---------------------------------------------------------------------------
// Schemas

const ANGLE_UNITS = ['rad', 'deg', 'arcmin', 'arcsec'] as const;
const SPECTRAL_UNITS = ['keV', 'eV', 'J', 'Hz', 'kHz', 'MHz', 'GHz', 'm', 'nm', 'um', 'Angstrom'] as const;
/** Largest inclination, deg: a thin disk seen exactly edge-on has no projected area. */
export const INCLINATION_MAX_DEG = 89;
/** Largest outer radius, rg. */
export const R_OUT_MAX = 1e5;
export const BINS_MAX = 10000;
const TABLE_MAX = 1000;

const RadiusIn = (d: string) => Quantity(`${d} In rg = GM/c^2 by default (the profile is scale-free); rs, or SI lengths when the body has a mass.`, 'rg', LENGTH_UNITS, { positive: true });

const EmissivitySchema = Type.Union(
  [
    Type.Number({ minimum: -10, maximum: 20, description: 'Shorthand for a power law: the index q of eps(r) proportional to r^-q (dimensionless).' }),
    Type.Object(
      {
        kind: Type.Literal('power-law', { description: 'A power law.' }),
        index: Type.Number({ minimum: -10, maximum: 20, description: 'Index q of eps(r) proportional to r^-q (dimensionless); 3 is the usual choice far from the hole.' }),
      },
      { additionalProperties: false, description: 'Power-law emissivity per unit disk area, r^-index.' },
    ),
    Type.Object(
      {
        kind: Type.Literal('broken-power-law', { description: 'A broken power law.' }),
        index_inner: Type.Number({ minimum: -10, maximum: 20, description: 'Index inside the break radius (dimensionless).' }),
        index_outer: Type.Number({ minimum: -10, maximum: 20, description: 'Index outside the break radius (dimensionless).' }),
        break_radius: RadiusIn('Break radius, continuous emissivity across it.'),
      },
      { additionalProperties: false, description: 'Broken power law r^-index_inner inside break_radius, r^-index_outer outside, continuous at the break.' },
    ),
    Type.Object(
      {
        kind: Type.Literal('table', { description: 'A table of values.' }),
        r: Type.Array(Type.Number({ exclusiveMinimum: 0, maximum: 1e300 }), { minItems: 2, maxItems: TABLE_MAX, description: 'Radii, strictly increasing, covering [r_in, r_out].' }),
        unit: Type.Optional(Type.String({ minLength: 1, maxLength: 64, description: 'Unit of r: rg (default), rs, or an SI length when the body has a mass.' })),
        value: Type.Array(Type.Number({ minimum: 0, maximum: 1e300 }), { minItems: 2, maxItems: TABLE_MAX, description: 'Emissivity at each radius (any scale, >= 0).' }),
      },
      { additionalProperties: false, description: 'Tabulated emissivity, interpolated linearly in (log r, log eps) (linearly where a value is 0).' },
    ),
  ],
  { description: 'Emissivity per unit disk area in the gas frame, eps(r): a power-law index, or an object (power law, broken power law, table).' },
);

const Energies = Type.Union(
  [
    Type.Object(
      {
        min: Type.Number({ exclusiveMinimum: 0, maximum: 1e300, description: 'Lower end of the range, in `unit`.' }),
        max: Type.Number({ exclusiveMinimum: 0, maximum: 1e300, description: 'Upper end of the range, in `unit`.' }),
        bins: Type.Integer({ minimum: 1, maximum: BINS_MAX, description: `Number of bins, 1 to ${BINS_MAX}.` }),
        spacing: Type.Optional(Type.Unsafe<'linear' | 'logarithmic'>({ type: 'string', enum: ['linear', 'logarithmic'], description: '"linear" (default) or "logarithmic" bin widths.' })),
        unit: Type.Optional(Type.String({ minLength: 1, maxLength: 64, description: 'A photon energy, frequency or wavelength unit; default the unit of `rest`.' })),
      },
      { additionalProperties: false, description: 'A regular grid of bins between min and max.' },
    ),
    Type.Object(
      {
        edges: Type.Array(Type.Number({ exclusiveMinimum: 0, maximum: 1e300 }), { minItems: 2, maxItems: BINS_MAX + 1, description: 'Bin edges, strictly increasing, in `unit`.' }),
        unit: Type.Optional(Type.String({ minLength: 1, maxLength: 64, description: 'A photon energy, frequency or wavelength unit; default the unit of `rest`.' })),
      },
      { additionalProperties: false, description: 'Explicit bin edges.' },
    ),
  ],
  { description: 'The spectral bins of the profile (energies, frequencies or wavelengths).' },
);

export const LineProfileCase = Type.Object(
  {
    body: Type.Object(
      {
        spin: Type.Number({ minimum: -1, maximum: 1, description: 'Dimensionless spin a* in [-1, 1]; the disk co-rotates with the hole for a* > 0 (counter-rotates for a* < 0).' }),
        mass: Type.Optional(Quantity('Mass of the hole (optional: the profile is scale-free; with it, radii are also given in metres).', 'kg', MASS_UNITS, { positive: true })),
        gm: Type.Optional(Quantity('Mass parameter GM (optional, instead of mass).', 'm3.s-2', ['m3.s-2', 'km3.s-2'], { positive: true })),
      },
      { additionalProperties: false, description: 'The black hole: its spin, and optionally its mass (or GM).' },
    ),
    inclination: Quantity(`Inclination of the line of sight to the disk's axis, 0 (face-on) to ${INCLINATION_MAX_DEG} deg.`, 'rad', ANGLE_UNITS),
    r_in: Type.Optional(RadiusIn('Inner radius of the disk (default the ISCO; outside the photon orbit, where circular orbits exist; inside the ISCO is flagged).')),
    r_out: RadiusIn(`Outer radius of the disk, above r_in, at most ${R_OUT_MAX} rg.`),
    emissivity: EmissivitySchema,
    rest: Quantity("The line's rest energy, frequency or wavelength (e.g. {\"value\": 6.4, \"unit\": \"keV\"}); a bare number is a wavelength in metres.", 'm', SPECTRAL_UNITS, { positive: true }),
    energies: Energies,
    emission: Type.Optional(
      Type.Unsafe<'isotropic' | 'limb-darkened'>({
        type: 'string',
        enum: ['isotropic', 'limb-darkened'],
        description: 'Angular emission law in the gas frame: "isotropic" (default) or "limb-darkened", I proportional to 1 + 2.06 mu_e (Laor 1991).',
      }),
    ),
    flux: Type.Optional(
      Type.Unsafe<'photon' | 'energy'>({
        type: 'string',
        enum: ['photon', 'energy'],
        description: '"photon" (default): photon counts per bin, weights g^3 I; "energy": energy flux per bin, weights g^4 I.',
      }),
    ),
    accuracy: Type.Optional(
      Type.Unsafe<Accuracy>({
        type: 'string',
        enum: ['fast', 'standard', 'fine'],
        description: `"fast", "standard" (default) or "fine": image-plane grid ${ACCURACY.fast.nRadial}^2, ${ACCURACY.standard.nRadial}^2, ${ACCURACY.fine.nRadial}^2 base rays with ${ACCURACY.fast.depth}/${ACCURACY.standard.depth}/${ACCURACY.fine.depth} levels of refinement, integrator tolerance ${ACCURACY.fast.rtol}, ${ACCURACY.standard.rtol}, ${ACCURACY.fine.rtol}.`,
      }),
    ),
  },
  { additionalProperties: false, description: 'A thin Keplerian disk around a Kerr hole, an emission line and the bins of its observed profile.' },
);
type LineProfileCase = Static<typeof LineProfileCase>;

const RadiusOut = (d: string) =>
  Type.Object(
    {
      rg: Type.Number({ description: `${d} In rg = GM/c^2.` }),
      value: Type.Optional(Type.Number({ description: `${d} In metres (when the body has a mass).` })),
      unit: Type.Optional(Type.Literal('m', { description: 'Unit of value: "m".' })),
    },
    { description: d },
  );

const Spectral = (d: string) =>
  Type.Object({ value: Type.Number({ description: `${d} In \`unit\`.` }), unit: Type.String({ description: 'The unit of the energies (that of the request).' }) }, { description: d });

export const LineProfileResult = Type.Object({
  edges: Type.Object(
    {
      value: Type.Array(Type.Number(), { description: 'Bin edges, n + 1 values, in the order and unit of the request.' }),
      unit: Type.String({ description: 'Unit of the edges.' }),
    },
    { description: 'The bin edges.' },
  ),
  flux: Type.Array(Type.Number(), { description: 'Line flux per bin (photon counts or energy, see `flux_kind`), normalised so that the bins sum to 1 (dimensionless).' }),
  fraction_in_range: Type.Number({ description: "Share of the whole line's flux that falls inside the bins (dimensionless, 0..1)." }),
  g_min: Type.Number({ description: 'Smallest redshift factor g = E_observed/E_emitted over the visible disk (dimensionless).' }),
  g_max: Type.Number({ description: 'Largest g over the visible disk (dimensionless): the blue edge of the line.' }),
  line_range: Type.Object(
    { low: Spectral('Lower end of the line (g_min or g_max applied to the rest value).'), high: Spectral('Upper end of the line.') },
    { description: 'Where the line lies, in the unit of the edges.' },
  ),
  rays: Type.Integer({ description: 'Rays traced for this geometry (whether or not they were traced for this request: the transfer data are cached).' }),
  accuracy: Type.Object(
    {
      level: Type.String({ description: 'The accuracy level used.' }),
      l1_estimate: Type.Number({
        description: 'Estimated L1 error of the normalised profile: its L1 distance to the profile from the half-resolution grid of the same rays (conservative: the error usually falls 2-4x per halving).',
      }),
      integrator_rtol: Type.Number({ description: 'Relative tolerance of the geodesic integrator.' }),
    },
    { description: 'Accuracy of the profile.' },
  ),
  flux_kind: Type.String({ description: '"photon" or "energy".' }),
  disk: Type.Object(
    {
      r_in: RadiusOut('Inner radius of the disk.'),
      r_out: RadiusOut('Outer radius of the disk.'),
      isco: RadiusOut('ISCO of the disk orbits (BPT72 eq. 2.21).'),
    },
    { description: 'The disk.' },
  ),
  spin: Type.Number({ description: 'Spin a* (dimensionless).' }),
  inclination: Type.Object({ value: Type.Number({ description: 'Inclination, rad.' }), unit: Type.Literal('rad', { description: 'Unit of value: "rad".' }), deg: Type.Number({ description: 'Inclination, deg.' }) }, { description: 'Inclination of the line of sight.' }),
  rest: Spectral('The rest value of the line.'),
  ...Provenance,
});

const REFS = {
  cunningham: 'Cunningham 1975, ApJ 202, 788 (disk redshift factor g and transfer of the disk emission)',
  bardeen: 'Cunningham & Bardeen 1973, ApJ 183, 237 (image-plane coordinates and constants of motion)',
  carter: 'Carter 1968, Phys. Rev. 174, 1559 (separable Kerr geodesics, Carter constant)',
  mino: 'Mino 2003, Phys. Rev. D 67, 084027 (Mino time)',
  dopri: 'Dormand & Prince 1980, J. Comput. Appl. Math. 6, 19 (adaptive RK5(4) integrator)',
  bpt: 'Bardeen, Press & Teukolsky 1972, ApJ 178, 347 (Keplerian orbits, ISCO)',
  fabian: 'Fabian, Rees, Stella & White 1989, MNRAS 238, 729 (disk line profiles)',
  laor: 'Laor 1991, ApJ 376, 90 (line profiles around rotating holes, limb darkening)',
};

// ---------------------------------------------------------------------------
// Reading a case

interface Plan {
  geometry: DiskGeometry;
  job: BinJob;
  /** Edges as given, their unit, and whether g runs opposite to them (wavelengths). */
  edges: number[];
  unit: string;
  reversed: boolean;
  restValue: number;
  restUnit: string;
  restHz: number;
  rgMetres?: number;
  warnings: Array<{ code: string; message: string }>;
}

class CaseDomainError extends Error {
  constructor(
    readonly pointer: string,
    message: string,
  ) {
    super(message);
  }
}

const fmt = (x: number) => Number(x.toPrecision(6)).toString();

function noUncertainty(input: QuantityInput | undefined, pointer: string): void {
  if (input && typeof input === 'object' && input.uncertainty !== undefined && input.uncertainty > 0) {
    fail(`${pointer}/uncertainty`, 'uncertainties are not propagated through line profiles: trace the ends of the range as a batch instead');
  }
}

function radiusRg(input: QuantityInput, pointer: string, gm: number | undefined): number {
  noUncertainty(input, pointer);
  // default unit rg: a bare number (or an object without unit) is in GM/c^2
  const given = typeof input === 'number' ? { value: input, unit: 'rg' } : { ...input, unit: input.unit ?? 'rg' };
  const l: LengthInput = length(given, pointer);
  if (!l.relative && gm === undefined) fail(typeof input === 'object' ? `${pointer}/unit` : pointer, 'is in metres, which needs the body\'s mass (or gm); give it in rg or rs, or give the mass');
  const v = lengthInRg(l, gm ?? 1).value;
  if (!Number.isFinite(v) || !(v > 0)) fail(pointer, `gives ${v} rg, outside the representable range`);
  return v;
}

function spectralUnitOk(unit: string, pointer: string): void {
  try {
    spectralKind(unit);
  } catch (err) {
    if (err instanceof UnitError) fail(pointer, `${err.message}; accepted: a photon energy (eV, keV, J), a frequency (Hz, kHz, MHz, GHz) or a wavelength (m, nm, Angstrom, ...)`);
    throw err;
  }
}

function prepare(input: LineProfileCase): Plan {
  const warnings: Plan['warnings'] = [];
  const a = input.body.spin;
  if (input.body.mass !== undefined && input.body.gm !== undefined) fail('/body', 'give at most one of mass and gm');
  let gm: number | undefined;
  if (input.body.mass !== undefined) {
    noUncertainty(input.body.mass, '/body/mass');
    gm = massAsGm(input.body.mass, '/body/mass').value;
  } else if (input.body.gm !== undefined) {
    noUncertainty(input.body.gm, '/body/gm');
    gm = quantity(input.body.gm, '/body/gm', 'gm').value;
  }
  noUncertainty(input.inclination, '/inclination');
  const inc = quantity(input.inclination, '/inclination', 'angle').value;
  if (!(inc >= 0 && inc <= (INCLINATION_MAX_DEG * Math.PI) / 180)) {
    fail('/inclination', `must lie in [0, ${INCLINATION_MAX_DEG}] deg = [0, ${fmt((INCLINATION_MAX_DEG * Math.PI) / 180)}] rad (0 = face-on; a thin disk seen edge-on has no area); got ${fmt((inc * 180) / Math.PI)} deg`);
  }
  const rIsco = isco(a);
  const rIn = input.r_in === undefined ? rIsco : radiusRg(input.r_in, '/r_in', gm);
  const rOut = radiusRg(input.r_out, '/r_out', gm);
  if (!(rOut <= R_OUT_MAX)) fail('/r_out', `must be at most ${R_OUT_MAX} rg; got ${fmt(rOut)} rg`);

  // emissivity
  let emissivity: EmissivitySpec;
  const e = input.emissivity;
  if (typeof e === 'number') emissivity = { kind: 'power-law', index: e };
  else if (e.kind === 'power-law') emissivity = { kind: 'power-law', index: e.index };
  else if (e.kind === 'broken-power-law') emissivity = { kind: 'broken-power-law', indexInner: e.index_inner, indexOuter: e.index_outer, rBreak: radiusRg(e.break_radius, '/emissivity/break_radius', gm) };
  else {
    if (e.r.length !== e.value.length) fail('/emissivity/value', `must have as many entries as r (${e.r.length}); got ${e.value.length}`);
    const unit = e.unit ?? 'rg';
    const rs = e.r.map((r, i) => radiusRg({ value: r, unit }, `/emissivity/r/${i}`, gm));
    for (let i = 1; i < rs.length; i++) if (!(rs[i] > rs[i - 1])) fail(`/emissivity/r/${i}`, 'radii must be strictly increasing');
    if (!e.value.some((v) => v > 0)) fail('/emissivity/value', 'must have at least one positive value');
    emissivity = { kind: 'table', r: rs, value: e.value };
  }

  // rest and bins
  const rest = spectral(input.rest, '/rest');
  const unit = input.energies.unit ?? rest.unit;
  spectralUnitOk(unit, '/energies/unit');
  let edges: number[];
  if ('edges' in input.energies) {
    edges = input.energies.edges;
    for (let i = 1; i < edges.length; i++) if (!(edges[i] > edges[i - 1])) fail(`/energies/edges/${i}`, 'edges must be strictly increasing');
  } else {
    const { min, max, bins } = input.energies;
    if (!(max > min)) fail('/energies/max', `must be greater than min (${min})`);
    const log = input.energies.spacing === 'logarithmic';
    edges = Array.from({ length: bins + 1 }, (_, i) => (log ? min * Math.pow(max / min, i / bins) : min + ((max - min) * i) / bins));
    edges[0] = min;
    edges[bins] = max;
  }
  const gRaw = edges.map((x) => spectralToHz(x, unit) / rest.hz.value); // g = nu_observed / nu_rest
  const reversed = gRaw[gRaw.length - 1] < gRaw[0];
  const gEdges = reversed ? gRaw.slice().reverse() : gRaw;
  if (!gEdges.every((g) => Number.isFinite(g) && g > 0)) fail('/energies', 'gives bin edges that are not finite positive multiples of the rest value');
  for (let i = 1; i < gEdges.length; i++) if (!(gEdges[i] > gEdges[i - 1])) fail('/energies', 'bins narrower than double precision can resolve relative to the rest value');

  // the disk's physical domain (422 per case)
  const rPlus = horizonOuter(a);
  const rPh = photonOrbit(a);
  if (!(rIn > rPlus)) throw new CaseDomainError('/r_in', `r_in = ${fmt(rIn)} rg is not outside the horizon (r_+ = ${fmt(rPlus)} rg); allowed: r_in > ${fmt(rPh)} rg (the photon orbit, inside which no circular orbit exists)`);
  if (!(rIn > rPh)) throw new CaseDomainError('/r_in', `no circular orbit exists at r_in = ${fmt(rIn)} rg, inside the photon orbit r_ph = ${fmt(rPh)} rg (BPT72 eq. 2.18); allowed: r_in > ${fmt(rPh)} rg`);
  if (!(rOut > rIn)) throw new CaseDomainError('/r_out', `r_out = ${fmt(rOut)} rg must be greater than r_in = ${fmt(rIn)} rg`);
  if (emissivity.kind === 'table') {
    const t = emissivity;
    if (t.r[0] > rIn * (1 + 1e-12) || t.r[t.r.length - 1] < rOut * (1 - 1e-12)) {
      fail('/emissivity/r', `the table must cover the disk, [${fmt(rIn)}, ${fmt(rOut)}] rg; it covers [${fmt(t.r[0])}, ${fmt(t.r[t.r.length - 1])}] rg`);
    }
  }
  if (rIn < rIsco * (1 - 1e-12)) {
    warnings.push({
      code: 'inside-isco',
      message: `r_in = ${fmt(rIn)} rg is inside the ISCO (${fmt(rIsco)} rg): gas there is taken on circular Keplerian orbits, which are unstable (real gas plunges)`,
    });
  }
  const geometry: DiskGeometry = { a, inclination: inc, rIn, rOut, accuracy: input.accuracy ?? 'standard' };
  return {
    geometry,
    job: { emissivity, law: input.emission === 'limb-darkened' ? 'limb-darkened' : 'isotropic', power: input.flux === 'energy' ? 4 : 3, gEdges },
    edges,
    unit,
    reversed,
    restValue: rest.value,
    restUnit: rest.unit,
    restHz: rest.hz.value,
    rgMetres: gm === undefined ? undefined : gm / (C * C),
    warnings,
  };
}

// ---------------------------------------------------------------------------
// Shaping a reply

function shape(plan: Plan, t: CachedTransfer, res: BinResult): Record<string, unknown> {
  const g = plan.geometry;
  const inRange = res.flux.reduce((s, x) => s + x, 0);
  let flux = inRange > 0 ? res.flux.map((x) => x / inRange) : res.flux.map(() => 0);
  if (plan.reversed) flux = flux.slice().reverse();
  const warnings = [...plan.warnings];
  const fraction = res.total > 0 ? Math.min(1, inRange / res.total) : 0;
  if (res.total > 0 && fraction < 0.999) {
    warnings.push({
      code: inRange > 0 ? 'line-outside-bins' : 'line-not-in-bins',
      message: `${fmt(100 * (1 - fraction))} % of the line's flux falls outside the bins (the line spans g = ${fmt(t.gMin)} to ${fmt(t.gMax)}); flux is normalised over the bins`,
    });
  }
  if (res.total === 0) warnings.push({ code: 'no-flux', message: 'the disk emits nothing visible for this emissivity' });
  const toUnit = (gv: number) => hzToSpectral(gv * plan.restHz, plan.unit);
  const ends = [toUnit(t.gMin), toUnit(t.gMax)].sort((x, y) => x - y);
  const rOut = (rg: number) => (plan.rgMetres === undefined ? { rg } : { rg, value: rg * plan.rgMetres, unit: 'm' as const });
  const refs = [REFS.cunningham, REFS.bardeen, REFS.carter, REFS.mino, REFS.dopri, REFS.bpt, REFS.fabian];
  if (plan.job.law === 'limb-darkened' || g.a !== 0) refs.push(REFS.laor);
  const reply: Record<string, unknown> = {
    edges: { value: plan.edges, unit: plan.unit },
    flux,
    fraction_in_range: fraction,
    g_min: t.gMin,
    g_max: t.gMax,
    line_range: { low: { value: ends[0], unit: plan.unit }, high: { value: ends[1], unit: plan.unit } },
    rays: t.rays,
    accuracy: { level: g.accuracy, l1_estimate: res.l1Coarse, integrator_rtol: ACCURACY[g.accuracy].rtol },
    flux_kind: plan.job.power === 4 ? 'energy' : 'photon',
    disk: { r_in: rOut(g.rIn), r_out: rOut(g.rOut), isco: rOut(isco(g.a)) },
    spin: g.a,
    inclination: { value: g.inclination, unit: 'rad', deg: (g.inclination * 180) / Math.PI },
    rest: { value: plan.restValue, unit: plan.restUnit },
    model: g.a === 0 ? 'schwarzschild' : 'kerr',
    references: refs,
  };
  if (warnings.length > 0) reply.warnings = warnings;
  return reply;
}

// ---------------------------------------------------------------------------

export async function lineProfileRoutes(app: FastifyInstance, opts: { config: Config }): Promise<void> {
  const config = opts.config;
  const rays = app.lapse.rays;
  app.post(
    '/v1/line-profile',
    {
      schema: {
        summary: 'Emission-line profile of a thin Keplerian disk around a Kerr hole, by ray tracing',
        description:
          'The observed profile of an emission line (e.g. the iron K line at 6.4 keV) from a geometrically thin Keplerian disk in the equatorial plane of a Kerr hole, ' +
          'seen by a distant observer at inclination i: photons are traced backward from the image plane (Cunningham & Bardeen 1973 constants of motion, Carter 1968) ' +
          'with an adaptive Dormand-Prince integrator in Mino time and u = 1/r, on a polar image grid logarithmic in radius and refined where the disk edge, image order ' +
          'or the redshift g change; each image cell carries g^3 eps(r) I(mu_e) (photon flux; g^4 for energy flux; Cunningham 1975), spread over the g range of its corners. ' +
          'The reply has the bin edges, the flux per bin (summing to 1 over the bins), the share of the line inside the bins, g_min and g_max, the rays traced and an error estimate. ' +
          'Transfer data are cached per (spin, inclination, r_in, r_out, accuracy): new emissivities, rest values or bins for a cached geometry cost milliseconds. ' +
          `Ray tracing runs on worker threads; a request may trace at most RAYS_MAX rays (413), bin at most COMPUTE_BUDGET rays and cells (413; about ${Math.floor(20000000 / ACCURACY.standard.maxRays)} "standard" profiles at the default) and must finish within RAY_TIMEOUT_MS (503). ` +
          'With `Accept: image/svg+xml` a single case is answered with an SVG plot of the profile.',
        tags: ['line-profile'],
        produces: ['application/json', 'image/svg+xml'],
        body: CaseOrBatch(LineProfileCase, config.BATCH_MAX),
        response: { 200: ResultOrBatch(LineProfileResult), '4xx': ProblemSchema, '5xx': ProblemSchema },
      },
    },
    async (request, reply) => {
      const body = request.body as Record<string, unknown>;
      const batch = Array.isArray((body as { items?: unknown }).items);
      const inputs = batch ? (body.items as LineProfileCase[]) : [body as LineProfileCase];
      const errors: FieldError[] = [];
      const slots: Array<Plan | Problem> = inputs.map((input, i) => {
        const base = batch ? `/items/${i}` : '';
        try {
          return prepare(input);
        } catch (err) {
          if (err instanceof InputError) {
            if (errors.length < 100) errors.push(...err.errors.map((e) => ({ ...e, pointer: base + e.pointer })));
            return problem(400);
          }
          if (err instanceof CaseDomainError) return problem(422, err.message, [{ pointer: base + err.pointer, message: err.message }]);
          if (err instanceof RangeError) return problem(422, err.message, [{ pointer: base, message: err.message }]);
          throw err;
        }
      });
      if (errors.length > 0) throw new InputError(errors);

      // Group by geometry; new geometries cost rays against the budget.
      const groups = new Map<string, { geometry: DiskGeometry; members: number[] }>();
      slots.forEach((s, i) => {
        if (isProblem(s)) return;
        const key = JSON.stringify(s.geometry);
        const grp = groups.get(key) ?? { geometry: s.geometry, members: [] };
        grp.members.push(i);
        groups.set(key, grp);
      });
      // Binning reads every ray and cell of its geometry once per case: count it against COMPUTE_BUDGET.
      let binning = 0;
      for (const grp of groups.values()) binning += grp.members.length * ACCURACY[grp.geometry.accuracy].maxRays;
      if (binning > config.COMPUTE_BUDGET) {
        throw new InputError(
          [],
          413,
          `binning these profiles reads about ${binning} rays and cells; the limit is ${config.COMPUTE_BUDGET} (COMPUTE_BUDGET): split the batch (about ${Math.floor(config.COMPUTE_BUDGET / ACCURACY.standard.maxRays)} "standard" profiles fit in one request)`,
        );
      }
      let needed = 0;
      for (const grp of groups.values()) if (!rays.has(grp.geometry)) needed += ACCURACY[grp.geometry.accuracy].maxRays;
      if (needed > config.RAYS_MAX) {
        throw new InputError(
          [],
          413,
          `this request may trace up to ${needed} rays (${groups.size} geometries not cached); the limit is ${config.RAYS_MAX} (RAYS_MAX): split the batch, use a lower accuracy, or reuse geometries`,
        );
      }

      // Cancellation: the client going away or the time limit aborts the pool tasks.
      const signal = requestSignal(reply, config);
      const results: Array<Record<string, unknown> | Problem> = slots.map((s) => s as Problem);
      try {
        await Promise.all(
          [...groups.values()].map(async (grp) => {
            let t: CachedTransfer;
            try {
              t = (await rays.transfer(grp.geometry, signal)).transfer;
            } catch (err) {
              if (err instanceof RayServiceError && err.reason === 'budget') {
                for (const i of grp.members) {
                  const msg = `this geometry needs more than ${err.limit} rays at accuracy "${grp.geometry.accuracy}" (near-edge-on views of large disks refine heavily); use a lower accuracy or a smaller r_out`;
                  results[i] = problem(422, msg, [{ pointer: batch ? `/items/${i}` : '', message: msg }], 'ray-budget');
                }
                return;
              }
              throw err;
            }
            if (!(t.gMax > 0)) {
              // no ray of the grid saw the disk: far thinner than the grid's finest cell
              for (const i of grp.members) {
                const msg = `no ray of the "${grp.geometry.accuracy}" image grid reaches this disk (r_in = ${fmt(grp.geometry.rIn)} to r_out = ${fmt(grp.geometry.rOut)} rg is thinner than its finest cell); use accuracy "standard" or "fine", or a wider disk`;
                results[i] = problem(422, msg, [{ pointer: `${batch ? `/items/${i}` : ''}/r_out`, message: msg }], 'disk-not-resolved');
              }
              return;
            }
            const binned = await rays.bin(t, grp.members.map((i) => (slots[i] as Plan).job), signal);
            grp.members.forEach((i, k) => {
              const out = shape(slots[i] as Plan, t, binned[k]);
              const bad = findNonFinite(out);
              const base = batch ? `/items/${i}` : '';
              results[i] = bad ? problem(422, `the result ${bad} is not a finite number for these inputs`, [{ pointer: base, message: `gives a non-finite ${bad}` }], 'non-finite-result') : out;
            });
          }),
        );
      } catch (err) {
        if (err instanceof RayServiceError) return sendRayServiceError(reply, request, err);
        throw err;
      }
      if (!batch) {
        const only = results[0];
        if (isProblem(only)) return sendProblem(reply, only, request);
        const accept = request.headers.accept;
        if (accept && accept.includes('image/svg+xml')) return reply.type('image/svg+xml').send(lineProfileSvg(only));
        return reply.type('application/json; charset=utf-8').send(JSON.stringify(only));
      }
      const parts = results.map((r) => JSON.stringify(isProblem(r) ? { error: r } : r));
      return reply.type('application/json; charset=utf-8').send(`{"items":[${parts.join(',')}],"count":${parts.length}}`);
    },
  );
}
