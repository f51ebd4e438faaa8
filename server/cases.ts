/**
 * The shared mechanism behind every computation route: one case or a batch, input reading with
 * field pointers, uncertainty propagation (none, linear or Monte Carlo), per-item physics errors,
 * warnings, and a guarantee that no reply carries NaN or Infinity.
 */
import type { FastifyInstance } from 'fastify';
import type { TSchema } from '@sinclair/typebox';
import { propagateLinear, propagateMonteCarlo, type Measured, type Model, type Outputs, type Variable } from '../physics/uncertainty.js';
import type { Config } from './config.js';
import { CaseOrBatch, ResultOrBatch, ProblemSchema, type UncertaintyMethodInput } from './schemas.js';
import { InputError, physicsProblem, problem, sendProblem, type FieldError, type Problem } from './problems.js';
import { RayServiceError, requestSignal, sendRayServiceError } from './rays.js';

export interface Warning {
  code: string;
  message: string;
}

/** What a route makes of one case: its uncertain inputs, the model, and how to shape the reply. */
export interface Prepared {
  /** Inputs that may carry uncertainty, in the order the model takes them. */
  vars: Variable[];
  /** Flat numeric outputs as functions of the inputs (SI or dimensionless). */
  compute: Model;
  /**
   * Builds the case reply from measured outputs; `nominal` holds the outputs at the nominal inputs,
   * `offloaded` the result of `offload` when the case asked for one.
   */
  shape: (get: (key: string) => Measured, nominal: Outputs, offloaded?: unknown) => Record<string, unknown>;
  /**
   * A compute-heavy part (ray tracing) to run on the worker threads before the case is shaped: an
   * exported function of a worker-side module (server/ray-worker.ts), its arguments, and the rays
   * it may trace (counted against RAYS_MAX).
   */
  offload?: { module: string; name: string; args: unknown[]; rays: number };
  /** Flags that depend on the result: nominal outputs, and measured ones (with uncertainties). */
  warnings?: (nominal: Outputs, get: (key: string) => Measured) => Warning[];
  method?: UncertaintyMethodInput;
  /** The metric or approximation used ("kerr", "schwarzschild", "weak-field"). */
  model: string;
  /** Short citations of the published methods used. */
  references: string[];
}

export interface CaseContext {
  /**
   * RFC 6901 pointer of this case in the request body ("" or "/items/3"), for messages only:
   * pointers in errors thrown by `prepare`/`compute` are relative to the case and get prefixed.
   */
  pointer: string;
  config: Config;
}

export interface CaseRoute<C> {
  url: string;
  summary: string;
  description: string;
  tags: string[];
  caseSchema: TSchema;
  resultSchema: TSchema;
  prepare: (input: C, ctx: CaseContext) => Prepared;
  /**
   * Other representations of a single-case reply, by media type (e.g. "image/svg+xml"): chosen
   * when the request's Accept header names the type; the function gets the JSON reply object.
   */
  renderers?: Record<string, (result: Record<string, unknown>) => string>;
}

const DEFAULT_SAMPLES = 10000;

/** Samples a prepared case will cost (1 when no Monte Carlo). */
function cost(p: Prepared): number {
  const uncertain = p.vars.some((v) => v.sigma > 0);
  if (!uncertain) return 1;
  if (p.method?.kind === 'monte-carlo') return p.method.samples ?? DEFAULT_SAMPLES;
  return 1 + 60 * p.vars.filter((v) => v.sigma > 0).length; // Ridders: typically 8-40 evaluations
}

/** Finds the first non-finite number in a reply, as a pointer relative to it. */
export function findNonFinite(value: unknown, path = ''): string | undefined {
  if (typeof value === 'number') return Number.isFinite(value) ? undefined : path || '/';
  if (value && typeof value === 'object') {
    if (Array.isArray(value)) {
      for (let i = 0; i < value.length; i++) {
        const hit = findNonFinite(value[i], `${path}/${i}`);
        if (hit) return hit;
      }
    } else {
      for (const k in value) {
        const hit = findNonFinite((value as Record<string, unknown>)[k], `${path}/${k}`);
        if (hit) return hit;
      }
    }
  }
  return undefined;
}

/** A value JSON.stringify wrote as null: only a non-finite number can produce one in our replies. */
const NULL_VALUE = /[:[,]null[,\]}]/;

/**
 * Runs one prepared case; returns the reply as JSON text, or a problem (422) for a physics failure.
 * Serializing here (once per case) lets a batch reply be joined from its items' text, and lets the
 * non-finite check scan text instead of walking every reply object.
 */
export function runCase(p: Prepared, pointer: string, offloaded?: unknown): string | Problem {
  try {
    const vars = p.vars;
    let uncertain = false;
    const x = new Array<number>(vars.length);
    for (let i = 0; i < vars.length; i++) {
      x[i] = vars[i].value;
      if (vars[i].sigma > 0) uncertain = true;
    }
    let nominal: Outputs;
    let get: (k: string) => Measured;
    let notes: Warning[] | undefined;
    if (!uncertain) {
      const out = p.compute(x);
      nominal = out;
      get = (k) => ({ value: out[k] });
    } else {
      const res =
        p.method?.kind === 'monte-carlo'
          ? propagateMonteCarlo(p.compute, vars, p.method.samples ?? DEFAULT_SAMPLES, p.method.seed ?? 1)
          : propagateLinear(p.compute, vars);
      nominal = {};
      for (const k in res.values) nominal[k] = res.values[k].value;
      get = (k) => res.values[k];
      notes = res.notes;
    }
    const reply = p.shape(get, nominal, offloaded);
    reply.model = p.model;
    reply.references = p.references;
    const flags = p.warnings?.(nominal, get);
    if ((flags && flags.length > 0) || (notes && notes.length > 0)) reply.warnings = [...(flags ?? []), ...(notes ?? [])];
    const json = JSON.stringify(reply);
    if (NULL_VALUE.test(json)) {
      const bad = findNonFinite(reply);
      if (bad) {
        return problem(422, `the result ${bad} is not a finite number for these inputs`, [{ pointer, message: `gives a non-finite ${bad}` }], 'non-finite-result');
      }
    }
    return json;
  } catch (err) {
    const prob = physicsProblem(err, pointer);
    if (prob) return prob;
    throw err;
  }
}

export function isProblem(x: unknown): x is Problem {
  return typeof x === 'object' && x !== null && 'status' in x && 'type' in x && 'title' in x;
}

/** Registers POST `url` taking one case or a batch. */
export function registerCaseRoute<C>(app: FastifyInstance, config: Config, route: CaseRoute<C>): void {
  app.post(
    route.url,
    {
      schema: {
        summary: route.summary,
        description: route.description,
        tags: route.tags,
        ...(route.renderers ? { produces: ['application/json', ...Object.keys(route.renderers)] } : {}),
        body: CaseOrBatch(route.caseSchema, config.BATCH_MAX),
        response: {
          200: ResultOrBatch(route.resultSchema),
          '4xx': ProblemSchema,
          '5xx': ProblemSchema,
        },
      },
    },
    async (request, reply) => {
      const body = request.body as Record<string, unknown>;
      const batch = Array.isArray((body as { items?: unknown }).items);
      const inputs = (batch ? (body.items as C[]) : [body as C]);
      const errors: FieldError[] = [];
      let inputStatus = 400; // the gravest input error decides (413 over 400)
      // Every case is read first, so that all input errors of a batch come back in one 400.
      const slots: Array<{ p: Prepared; pointer: string } | Problem> = inputs.map((input, i) => {
        const pointer = batch ? `/items/${i}` : '';
        try {
          return { p: route.prepare(input, { pointer, config }), pointer };
        } catch (err) {
          if (err instanceof InputError) {
            // Routes point relative to their case; a batch item's pointers get its /items/N.
            if (errors.length < 100) errors.push(...err.errors.map((e) => ({ ...e, pointer: pointer + e.pointer })));
            if (err.status > inputStatus) inputStatus = err.status;
            return problem(400);
          }
          const prob = physicsProblem(err, pointer);
          if (prob) return prob;
          throw err;
        }
      });
      if (errors.length > 0) throw new InputError(errors, inputStatus);
      let total = 0;
      for (const slot of slots) {
        if (isProblem(slot)) continue;
        const m = slot.p.method;
        if (m?.kind === 'monte-carlo' && (m.samples ?? DEFAULT_SAMPLES) > config.MC_SAMPLES_MAX) {
          throw new InputError([{ pointer: `${slot.pointer}/uncertainty_method/samples`, message: `must be <= ${config.MC_SAMPLES_MAX} (MC_SAMPLES_MAX)` }]);
        }
        total += cost(slot.p);
      }
      if (total > config.COMPUTE_BUDGET) {
        throw new InputError([], 413, `this request needs about ${total} model evaluations; the limit is ${config.COMPUTE_BUDGET} (COMPUTE_BUDGET): split the batch or use fewer Monte Carlo samples`);
      }
      // Compute-heavy parts run on the worker threads first (never on the event loop).
      const offloaded = new Map<number, unknown>();
      const heavy = slots.map((slot, i) => [slot, i] as const).filter(([slot]) => !isProblem(slot) && slot.p.offload);
      if (heavy.length > 0) {
        const rays = heavy.reduce((n, [slot]) => n + (slot as { p: Prepared }).p.offload!.rays, 0);
        if (rays > config.RAYS_MAX) {
          throw new InputError([], 413, `this request may trace up to ${rays} rays; the limit is ${config.RAYS_MAX} (RAYS_MAX): split the batch`);
        }
        const signal = requestSignal(reply, config);
        try {
          await Promise.all(
            heavy.map(async ([slot, i]) => {
              const o = (slot as { p: Prepared }).p.offload!;
              offloaded.set(i, await app.lapse.rays.call(o.module, o.name, o.args, signal));
            }),
          );
        } catch (err) {
          if (err instanceof RayServiceError) return sendRayServiceError(reply, request, err);
          throw err;
        }
      }
      const results = slots.map((slot, i) => (isProblem(slot) ? slot : runCase(slot.p, slot.pointer, offloaded.get(i))));
      if (!batch) {
        const only = results[0];
        if (typeof only !== 'string') return sendProblem(reply, only, request);
        const accept = request.headers.accept;
        const media = accept && route.renderers ? Object.keys(route.renderers).find((m) => accept.includes(m)) : undefined;
        if (media) return reply.type(media).send(route.renderers![media](JSON.parse(only) as Record<string, unknown>));
        return reply.type('application/json; charset=utf-8').send(only);
      }
      const parts = results.map((r) => (typeof r === 'string' ? r : JSON.stringify({ error: r })));
      return reply.type('application/json; charset=utf-8').send(`{"items":[${parts.join(',')}],"count":${parts.length}}`);
    },
  );
}
