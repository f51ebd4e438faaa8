/**
 * Robustness fuzzing of every POST route (property-based, fast-check).
 *
 * The routes are discovered from the app's own OpenAPI document (every path with a `post`
 * operation), and plausible bodies are generated from each route's request schema found there,
 * so a route added later is fuzzed with no change to this file.
 *
 * Body families, per route:
 *   1. random JSON values (anything, not shaped like a case);
 *   2. schema-shaped cases (numbers biased to their bounds, units taken from the schema text);
 *   3. the same cases mutated: wrong types, 1e308, -0, 5e-324, "NaN", "Infinity", a raw 1e999
 *      token, unknown units (including Object.prototype names), negative masses, out-of-range
 *      spin, huge uncertainty, deep nesting (200-1000 levels), long strings, unknown or missing
 *      keys, empty and oversized `items`, Monte Carlo sample counts 0 / huge;
 *   4. raw payloads (not JSON, truncated JSON, binary, UTF-16) under right and wrong content types;
 *   5. cases the route accepts (found by sampling the schema and repairing with the reply's own
 *      field pointers) with numbers moved to nearby and edge values, Monte Carlo on, batched.
 *
 * Invariants checked on every reply (../shared/design/api.md, "Errors"):
 *   - status < 500;
 *   - a 4xx is application/problem+json with string `type`, `title`, `detail`, a `status` equal to
 *     the HTTP status, and `errors` [{pointer, message}] whose pointers are RFC 6901 and point
 *     into the request sent (all but the last token exist; the whole document is "", not "/");
 *   - a 2xx is JSON with no NaN/Infinity token and no `null` anywhere (JSON.stringify writes a
 *     non-finite number as null), every number finite; a batch reply has one slot per item and
 *     `count`; a slot that failed holds {error: problem 4xx};
 *   - no reply carries a stack trace;
 *   - a case that succeeds gives a byte-identical body when sent again (families 2 and 5).
 * Then explicit regressions per route (2 MB body, empty and oversized batches, Monte Carlo
 * sample limits) and minimal reproductions of the bugs this fuzzer found in /v1/radii.
 *
 * Reproduce a failure: the fast-check report prints seed and path. Environment knobs:
 * LAPSE_FUZZ_SEED (base seed), LAPSE_FUZZ_RUNS (total bodies, all routes), LAPSE_FUZZ_TIME_MS
 * (wall-clock budget for all properties).
 */
import { afterAll, describe, expect, it } from 'vitest';
import fc from 'fast-check';
import request from 'supertest';
import type { FastifyInstance, LightMyRequestResponse } from 'fastify';
import { buildApp } from '../server/app.js';
import { makeConfig, type Config } from '../server/config.js';

// ------------------------------------------------------------------ configuration

const BATCH_MAX = 6;
const BODY_LIMIT = 64 * 1024;
const MC_SAMPLES_MAX = 2000;
// Room for one "standard" (or four "fast") line-profile binnings; other routes stay far below it.
const COMPUTE_BUDGET = 130_000;

const CONFIG: Config = makeConfig({
  LOG_LEVEL: 'silent',
  RATE_LIMIT_MAX: 0,
  // Load shedding answers 503 on a busy shared machine; it is not what is fuzzed here.
  MAX_EVENT_LOOP_DELAY_MS: 0,
  BATCH_MAX,
  BODY_LIMIT,
  MC_SAMPLES_MAX,
  COMPUTE_BUDGET,
  // One new "fast" or "standard" line-profile geometry per request at most (fine: 413): fuzzing is
  // not a ray-tracing benchmark.
  RAYS_MAX: 130_000,
});

const BASE_SEED = Number(process.env.LAPSE_FUZZ_SEED ?? 0x1a95e);
/** Total bodies over all routes and families (spread evenly, with a floor per family). */
const TOTAL_RUNS = Number(process.env.LAPSE_FUZZ_RUNS ?? 2400);
const MIN_RUNS_PER_FAMILY = 40;
/**
 * Wall-clock budget for all the properties together, so that the file stays well under a minute
 * when many (or slow) routes exist: a property that reaches its share stops early and passes with
 * the runs done so far (fast-check's interruptAfterTimeLimit).
 */
const TIME_BUDGET_MS = Number(process.env.LAPSE_FUZZ_TIME_MS ?? 35_000);

// ------------------------------------------------------------------ app and route discovery

type Schema = Record<string, unknown>;
interface PostRoute {
  path: string;
  url: string;
  schema: Schema;
}

const app: FastifyInstance = await buildApp(CONFIG);
await app.ready();
const spec = JSON.parse((await app.inject({ method: 'GET', url: '/openapi.json' })).body) as {
  paths: Record<string, Record<string, { requestBody?: { content?: Record<string, { schema?: Schema }> } }>>;
  components?: Record<string, Record<string, Schema>>;
};
const ROUTES: PostRoute[] = Object.entries(spec.paths)
  .filter(([, ops]) => ops.post !== undefined)
  .map(([path, ops]) => ({
    path,
    // Path parameters (none today) get a harmless value.
    url: path.replace(/\{[^}]+\}/g, 'fuzz'),
    schema: ops.post.requestBody?.content?.['application/json']?.schema ?? {},
  }));
const FAMILIES = 5;
const RUNS_PER_FAMILY = Math.max(MIN_RUNS_PER_FAMILY, Math.ceil(TOTAL_RUNS / Math.max(1, ROUTES.length) / FAMILIES));
const MS_PER_PROPERTY = Math.max(500, Math.floor(TIME_BUDGET_MS / Math.max(1, ROUTES.length) / FAMILIES));

afterAll(async () => {
  await app.close();
});

function routeSeed(path: string, family: number): number {
  let h = BASE_SEED ^ (family * 0x9e3779b1);
  for (const ch of path) h = Math.imul(h ^ ch.charCodeAt(0), 0x01000193);
  return h | 0;
}

// ------------------------------------------------------------------ raw JSON tokens

/**
 * JSON.stringify cannot write -0, 1e999 or a 30-digit integer literally; a string holding this
 * marker is replaced by its raw token after serialisation.
 */
const RAW = '\u0001raw:';
const raw = (token: string) => RAW + token;
function serialise(value: unknown): string {
  return JSON.stringify(value).replace(/"\\u0001raw:([^"]*)"/g, '$1');
}

// ------------------------------------------------------------------ schema-shaped generators

function resolve(s: Schema): Schema {
  let cur = s;
  for (let i = 0; i < 20 && typeof cur.$ref === 'string'; i++) {
    const parts = (cur.$ref as string).replace(/^#\//, '').split('/');
    let node: unknown = spec;
    for (const p of parts) node = (node as Record<string, unknown>)?.[p.replace(/~1/g, '/').replace(/~0/g, '~')];
    if (!node || typeof node !== 'object') return {};
    cur = node as Schema;
  }
  return cur;
}

/** Names every plain object inherits: a lookup table that is not prototype-free finds them. */
const PROTO_NAMES = ['constructor', 'toString', 'valueOf', 'hasOwnProperty', 'isPrototypeOf', 'propertyIsEnumerable', 'toLocaleString', '__proto__', 'kconstructor', 'm.constructor', 'constructor/s'];

const ALL_UNITS = [
  'm', 'km', 'nm', 'cm', 's', 'ms', 'us', 'Hz', 'kHz', 'kg', 'g', 'eV', 'keV', 'J', 'rad', 'Angstrom', 'AU', 'pc',
  'solMass', 'solRad', 'earthMass', 'jupiterMass', 'deg', 'arcsec', 'mas', 'uas', 'min', 'h', 'd', 'yr', 'km/s',
  'm3.s-2', 'km3.s-2', 'rg', 'rs',
];

/** Units a string field accepts, read from its description ("accepted here: a, b. Default ..."). */
function unitsFrom(description: unknown): string[] {
  if (typeof description !== 'string') return [];
  const m = /accepted[^:]*:\s*(.+?)\.(?:\s|$)/.exec(description);
  return m ? m[1].split(/,\s*/).filter(Boolean) : [];
}

function interestingNumbers(lo: number, hi: number, loOpen: boolean, hiOpen: boolean): number[] {
  const candidates = [0, 1, -1, 0.5, 2, 0.998, 0.9999, 10, 100, 1e-10, 1e-3, 6, 1e3, 1e6, 1e10, 1e20, 1e30, 2e30, 1e40, 1e100, 1e-100, 5e-324, 1e300, lo, hi, (lo + hi) / 2, lo + 1, hi - 1];
  return [...new Set(candidates)].filter((x) => Number.isFinite(x) && (loOpen ? x > lo : x >= lo) && (hiOpen ? x < hi : x <= hi));
}

function numberArb(s: Schema, integer: boolean): fc.Arbitrary<number> {
  const loOpen = typeof s.exclusiveMinimum === 'number';
  const hiOpen = typeof s.exclusiveMaximum === 'number';
  const lo = (loOpen ? s.exclusiveMinimum : s.minimum) as number | undefined ?? -1e300;
  const hi = (hiOpen ? s.exclusiveMaximum : s.maximum) as number | undefined ?? 1e300;
  if (integer) {
    const a = Math.max(Math.ceil(loOpen ? lo + 1 : lo), -1e9);
    const b = Math.min(Math.floor(hiOpen ? hi - 1 : hi), 1e9);
    if (a > b) return fc.constant(a);
    // Biased to the low end: sample counts and seeds stay cheap most of the time.
    const picks = [...new Set([a, a + 1, 100, 1000, MC_SAMPLES_MAX, b].filter((x) => x >= a && x <= b))];
    return fc.oneof({ arbitrary: fc.constantFrom(...picks), weight: 3 }, { arbitrary: fc.integer({ min: a, max: Math.min(b, a + 3000) }), weight: 3 }, { arbitrary: fc.integer({ min: a, max: b }), weight: 1 });
  }
  const picks = interestingNumbers(lo, hi, loOpen, hiOpen);
  const any = fc.double({ min: lo, max: hi, minExcluded: loOpen, maxExcluded: hiOpen, noNaN: true, noDefaultInfinity: true });
  return picks.length > 0 ? fc.oneof({ arbitrary: fc.constantFrom(...picks), weight: 3 }, { arbitrary: any, weight: 1 }) : any;
}

function stringArb(s: Schema, parentDescription: unknown): fc.Arbitrary<string> {
  const units = unitsFrom(s.description).length > 0 ? unitsFrom(s.description) : unitsFrom(parentDescription);
  const minLength = typeof s.minLength === 'number' ? s.minLength : 0;
  const maxLength = typeof s.maxLength === 'number' ? Math.min(s.maxLength, 40) : 40;
  const free = fc.string({ minLength, maxLength: Math.max(minLength, maxLength) });
  if (units.length > 0) {
    return fc.oneof(
      { arbitrary: fc.constantFrom(...units), weight: 12 },
      { arbitrary: fc.constantFrom(...ALL_UNITS), weight: 2 },
      { arbitrary: fc.constantFrom(...PROTO_NAMES), weight: 1 },
      { arbitrary: free, weight: 1 },
    );
  }
  return fc.oneof({ arbitrary: free, weight: 6 }, { arbitrary: fc.constantFrom(...PROTO_NAMES), weight: 1 });
}

/** Values that match the schema (mostly; formats and cross-field rules are not known here). */
function fromSchema(input: Schema, depth = 0, parentDescription?: unknown): fc.Arbitrary<unknown> {
  const s = resolve(input);
  if (depth > 8) return fc.constant({});
  if ('const' in s) return fc.constant(s.const);
  if (Array.isArray(s.enum) && s.enum.length > 0) return fc.constantFrom(...(s.enum as unknown[]));
  const union = (s.anyOf ?? s.oneOf) as Schema[] | undefined;
  if (Array.isArray(union) && union.length > 0) return fc.oneof(...union.map((b) => fromSchema(b, depth + 1, s.description)));
  if (Array.isArray(s.allOf) && s.allOf.length > 0) return fromSchema((s.allOf as Schema[])[0], depth + 1, s.description);
  const type = Array.isArray(s.type) ? (s.type as string[])[0] : (s.type as string | undefined);
  switch (type) {
    case 'number':
      return numberArb(s, false);
    case 'integer':
      return numberArb(s, true);
    case 'string':
      return stringArb(s, parentDescription);
    case 'boolean':
      return fc.boolean();
    case 'null':
      return fc.constant(null);
    case 'array': {
      const minLength = typeof s.minItems === 'number' ? s.minItems : 0;
      const maxLength = Math.max(minLength, Math.min(typeof s.maxItems === 'number' ? s.maxItems : 3, 3));
      return fc.array(fromSchema((s.items as Schema) ?? {}, depth + 1), { minLength, maxLength });
    }
    case 'object': {
      const props = (s.properties ?? {}) as Record<string, Schema>;
      const required = new Set((s.required as string[] | undefined) ?? []);
      // Optional members are present one time in three: "exactly one of" rules then hold often.
      const members = Object.entries(props).map(([k, v]) => {
        const value = fromSchema(v, depth + 1);
        return required.has(k) ? value.map((x) => [k, x] as const) : fc.oneof({ arbitrary: fc.constant(undefined), weight: 2 }, { arbitrary: value.map((x) => [k, x] as const), weight: 1 });
      });
      return fc.tuple(...members).map((kvs) => Object.fromEntries(kvs.filter((kv) => kv !== undefined)));
    }
    default:
      return fc.jsonValue({ maxDepth: 2 });
  }
}

// ------------------------------------------------------------------ mutations

function deepNest(levels: number, leaf: unknown, kind: 'object' | 'array'): unknown {
  let v = leaf;
  for (let i = 0; i < levels; i++) v = kind === 'array' ? [v] : { value: v };
  return v;
}

const EVIL_VALUES: unknown[] = [
  1e308, -1e308, 1.7976931348623157e308, 5e-324, -5e-324, 0, -1, -1e30, -2, 2, 1.5, 1e300, 1.0000000001e300,
  9007199254740993, 1e21, 0.1,
  raw('-0'), raw('-0.0e0'), raw('1e999'), raw('-1e999'), raw('1e-999'), raw('1E+308'), raw('123456789012345678901234567890'),
  'NaN', 'Infinity', '-Infinity', '1e999', '', ' ', '1', '0x10', 'null', 'true', 'kg', 'solMass', 'furlong', 'KM', 'km ', 'm3 s-2', 'rg', 'rs', 'monte-carlo',
  '\u0000', '\uD800', '💥', 'a'.repeat(10_000), ...PROTO_NAMES,
  { value: 1, unit: 'constructor' }, { value: 1, unit: 'toString' },
  null, true, false, [], {}, [1], [null], { value: null }, { value: '1' }, { value: 1, unit: 'furlong' }, { value: 1, unit: 'm' },
  { value: -1, unit: 'kg' }, { value: 1, uncertainty: 1e300 }, { value: 1, uncertainty: -1 }, { value: 0.5, uncertainty: 1e300 },
  { value: 1e300, unit: 'solMass', uncertainty: 1e300 }, { value: 5e-324, unit: 'kg' }, { value: 1, unit: 'solMass', uncertainty: raw('-0') },
  { kind: 'monte-carlo', samples: 0 }, { kind: 'monte-carlo', samples: 1e9 }, { kind: 'monte-carlo', samples: MC_SAMPLES_MAX + 1 },
  { kind: 'monte-carlo', samples: 10, seed: -1 }, { kind: 'monte-carlo', samples: 10.5 }, { kind: 'linear', samples: 10 },
  { mass: -1 }, { mass: 0 }, { gm: -1 }, { preset: 'moon' }, { preset: 'sun', spin: 1.0000001 }, { preset: 'sun', spin: -1.5 },
  { mass: { value: 1, unit: 'solMass' }, spin: { value: 1, uncertainty: 2 } }, { mass: 1, gm: 1 },
  deepNest(200, 1, 'object'), deepNest(200, 1, 'array'), deepNest(1000, 'x', 'array'),
  { items: [] }, { items: Array.from({ length: BATCH_MAX + 1 }, () => ({})) },
];
const EXTRA_KEYS = ['extra', '__proto__', 'constructor', 'prototype', '', 'items', 'value', 'unit', 'uncertainty', 'uncertainty_method', 'body', 'k'.repeat(5000)];

type Path = Array<string | number>;

function paths(v: unknown, prefix: Path = [], out: Path[] = []): Path[] {
  out.push(prefix);
  if (out.length > 400) return out;
  if (Array.isArray(v)) v.forEach((x, i) => paths(x, [...prefix, i], out));
  else if (v && typeof v === 'object') for (const k of Object.keys(v)) paths((v as Record<string, unknown>)[k], [...prefix, k], out);
  return out;
}

/** Sets an own property (even "__proto__") without touching prototypes. */
function setOwn(target: Record<string | number, unknown>, key: string | number, value: unknown): void {
  Object.defineProperty(target, key, { value, enumerable: true, writable: true, configurable: true });
}

interface Mutation {
  at: number;
  kind: 'replace' | 'delete' | 'add-key' | 'wrap-items' | 'duplicate-items' | 'nest';
  evil: unknown;
  key: string;
  count: number;
}

const mutationArb: fc.Arbitrary<Mutation> = fc.record({
  at: fc.nat(),
  kind: fc.constantFrom<Mutation['kind']>('replace', 'replace', 'replace', 'replace', 'delete', 'add-key', 'wrap-items', 'duplicate-items', 'nest'),
  evil: fc.oneof({ arbitrary: fc.constantFrom(...EVIL_VALUES), weight: 6 }, { arbitrary: fc.jsonValue({ maxDepth: 2 }), weight: 1 }, { arbitrary: fc.double(), weight: 1 }),
  key: fc.oneof(fc.constantFrom(...EXTRA_KEYS), fc.string({ maxLength: 8 })),
  count: fc.constantFrom(0, 1, BATCH_MAX, BATCH_MAX + 1, BATCH_MAX * 3),
});

function mutate(original: unknown, mutations: Mutation[]): unknown {
  // JSON clones throughout: the values are plain JSON (raw markers are strings), and JSON.parse
  // keeps a "__proto__" key as an own property.
  let root: unknown = JSON.parse(JSON.stringify(original));
  for (const m of mutations) {
    const all = paths(root);
    const path = all[m.at % all.length];
    const get = (p: Path) => p.reduce<unknown>((o, k) => (o as Record<string | number, unknown>)[k], root);
    const set = (p: Path, v: unknown) => {
      if (p.length === 0) root = v;
      else setOwn(get(p.slice(0, -1)) as Record<string | number, unknown>, p[p.length - 1], v);
    };
    const here = get(path);
    switch (m.kind) {
      case 'replace':
        set(path, m.evil);
        break;
      case 'delete': {
        if (path.length === 0) break;
        const parent = get(path.slice(0, -1));
        const key = path[path.length - 1];
        if (Array.isArray(parent)) parent.splice(key as number, 1);
        else delete (parent as Record<string, unknown>)[key as string];
        break;
      }
      case 'add-key':
        if (here && typeof here === 'object' && !Array.isArray(here)) setOwn(here as Record<string, unknown>, m.key, m.evil);
        else set(path, { [m.key]: here });
        break;
      case 'wrap-items':
        set(path, { items: Array.from({ length: m.count }, () => here) });
        break;
      case 'duplicate-items':
        if (Array.isArray(here)) set(path, Array.from({ length: m.count }, (_, i) => here[i % Math.max(1, here.length)] ?? here));
        else set(path, [here, here]);
        break;
      case 'nest':
        set(path, deepNest(m.count === 0 ? 200 : 50 * m.count, here, m.count % 2 === 0 ? 'array' : 'object'));
        break;
    }
    // Evil values are shared constants and a value may now appear twice: keep the tree a tree.
    root = JSON.parse(JSON.stringify(root));
  }
  return root;
}

// ------------------------------------------------------------------ reply invariants

const STACK_RE = /(?:^|\s)at (?:.* \()?(?:file:\/\/|node:|\/)[^\s)]*:\d+(?::\d+)?|\.(?:ts|js|mjs|cjs):\d+:\d+|node_modules\//;
const POINTER_RE = /^(?:\/(?:[^~/]|~[01])*)*$/;

/** Every number finite and no null anywhere (JSON.stringify writes NaN and Infinity as null). */
function badValues(v: unknown, at = ''): string[] {
  if (v === null) return [`${at || '/'} is null`];
  if (typeof v === 'number') return Number.isFinite(v) ? [] : [`${at || '/'} is ${v}`];
  if (Array.isArray(v)) return v.flatMap((x, i) => badValues(x, `${at}/${i}`));
  if (v && typeof v === 'object') return Object.entries(v).flatMap(([k, x]) => badValues(x, `${at}/${k}`));
  return [];
}

const NOT_SENT = Symbol('not sent');

/** The tokens of an RFC 6901 pointer ("" is the whole document). */
function tokens(pointer: string): string[] {
  return pointer === '' ? [] : pointer.slice(1).split('/').map((t) => t.replace(/~1/g, '/').replace(/~0/g, '~'));
}

function lookup(doc: unknown, toks: string[]): unknown {
  let cur: unknown = doc;
  for (const t of toks) {
    if (cur === null || typeof cur !== 'object' || !Object.prototype.hasOwnProperty.call(cur, t)) return NOT_SENT;
    cur = (cur as Record<string, unknown>)[t];
  }
  return cur;
}

/**
 * A field error must point into the request that was sent: everything but the last token must
 * exist (the last may name a missing required member). An empty last token ("/", "/items/0/")
 * names a member called "" and must exist too: the whole document is "", not "/".
 */
function pointerProblem(pointer: string, sentBody: unknown): string | undefined {
  const toks = tokens(pointer);
  if (toks.length === 0) return undefined;
  if (lookup(sentBody, toks.slice(0, -1)) === NOT_SENT) return `the parent of ${JSON.stringify(pointer)} is not in the request`;
  if (toks[toks.length - 1] === '' && lookup(sentBody, toks) === NOT_SENT) {
    return `${JSON.stringify(pointer)} names a member "" that the request does not have (the whole document is "", a batch item is "/items/N")`;
  }
  return undefined;
}

function expectProblem(doc: unknown, status: number | undefined, where: string, sentBody: unknown = NOT_SENT): void {
  expect(doc, `${where}: problem document is an object`).toBeTypeOf('object');
  const p = doc as Record<string, unknown>;
  expect(typeof p.type, `${where}: type`).toBe('string');
  expect(typeof p.title, `${where}: title`).toBe('string');
  expect(typeof p.detail, `${where}: detail`).toBe('string');
  expect(Number.isInteger(p.status), `${where}: status is an integer`).toBe(true);
  if (status !== undefined) expect(p.status, `${where}: status field equals HTTP status`).toBe(status);
  expect((p.status as number) >= 400 && (p.status as number) < 500, `${where}: problem status ${String(p.status)} is 4xx`).toBe(true);
  if (p.errors !== undefined) {
    expect(Array.isArray(p.errors), `${where}: errors is an array`).toBe(true);
    for (const e of p.errors as Array<Record<string, unknown>>) {
      expect(typeof e.message, `${where}: errors[].message`).toBe('string');
      expect(typeof e.pointer, `${where}: errors[].pointer`).toBe('string');
      expect(POINTER_RE.test(e.pointer as string), `${where}: errors[].pointer ${JSON.stringify(e.pointer)} is an RFC 6901 pointer`).toBe(true);
      if (sentBody !== NOT_SENT) expect(pointerProblem(e.pointer as string, sentBody), `${where}: errors[].pointer`).toBeUndefined();
    }
  }
}

interface Sent {
  route: string;
  payload: string | Buffer;
  contentType?: string;
}

function describeSent(s: Sent): string {
  const text = typeof s.payload === 'string' ? s.payload : `<${s.payload.length} bytes: ${s.payload.subarray(0, 40).toString('hex')}>`;
  return `POST ${s.route} content-type=${JSON.stringify(s.contentType)} body=${text.length > 300 ? `${text.slice(0, 300)}... (${text.length} chars)` : text}`;
}

/** The invariants every reply must satisfy; `items` is the batch length sent, when known. */
function checkReply(res: LightMyRequestResponse, sent: Sent, items?: number): void {
  const where = describeSent(sent);
  let sentBody: unknown = NOT_SENT;
  if (typeof sent.payload === 'string') {
    try {
      sentBody = JSON.parse(sent.payload);
    } catch {
      // not JSON: pointers cannot be checked against it
    }
  }
  const text = res.body;
  expect(res.statusCode, `${where}\n-> ${res.statusCode} ${text.slice(0, 500)}`).toBeLessThan(500);
  expect(STACK_RE.test(text), `${where}\n-> reply contains a stack trace: ${text.slice(0, 500)}`).toBe(false);
  const ct = String(res.headers['content-type'] ?? '');
  if (res.statusCode >= 400) {
    expect(ct, `${where}\n-> ${res.statusCode} content type`).toMatch(/^application\/problem\+json(;|$)/);
    let doc: unknown;
    expect(() => (doc = JSON.parse(text)), `${where}\n-> problem is JSON: ${text.slice(0, 300)}`).not.toThrow();
    expectProblem(doc, res.statusCode, `${where}\n-> ${text.slice(0, 500)}`, sentBody);
    return;
  }
  expect(res.statusCode, `${where}\n-> unexpected status`).toBeGreaterThanOrEqual(200);
  expect(ct, `${where}\n-> 2xx content type`).toMatch(/^application\/json(;|$)/);
  // Tokens outside strings: NaN/Infinity would make the body invalid JSON or a lie.
  const outsideStrings = text.replace(/"(?:[^"\\]|\\.)*"/g, '""');
  expect(/NaN|Infinity/.test(outsideStrings), `${where}\n-> NaN/Infinity token in ${text.slice(0, 500)}`).toBe(false);
  let doc: unknown;
  expect(() => (doc = JSON.parse(text)), `${where}\n-> 2xx body is JSON`).not.toThrow();
  expect(badValues(doc), `${where}\n-> non-finite or null values in ${text.slice(0, 800)}`).toEqual([]);
  const reply = doc as Record<string, unknown>;
  if (Array.isArray(reply.items)) {
    expect(reply.count, `${where}\n-> count equals items length`).toBe(reply.items.length);
    if (items !== undefined) expect(reply.items.length, `${where}\n-> one slot per item sent`).toBe(items);
    reply.items.forEach((slot, i) => {
      if (slot && typeof slot === 'object' && 'error' in slot) expectProblem((slot as { error: unknown }).error, undefined, `${where}\n-> items[${i}].error`, sentBody);
    });
  } else {
    expect('error' in reply, `${where}\n-> single-case 2xx holds an error`).toBe(false);
  }
}

async function post(sent: Sent): Promise<LightMyRequestResponse> {
  const headers: Record<string, string> = {};
  if (sent.contentType !== undefined) headers['content-type'] = sent.contentType;
  return app.inject({ method: 'POST', url: sent.route, headers, payload: sent.payload });
}

function itemsSent(body: unknown): number | undefined {
  if (body && typeof body === 'object' && !Array.isArray(body) && Array.isArray((body as { items?: unknown }).items)) return (body as { items: unknown[] }).items.length;
  return undefined;
}

// ------------------------------------------------------------------ raw payloads

const CONTENT_TYPES: Array<string | undefined> = [
  'application/json', 'application/json; charset=utf-8', 'application/json; charset=utf-16', 'application/json; charset=latin1',
  'APPLICATION/JSON', 'application/problem+json', 'application/vnd.api+json', 'application/json-patch+json', 'text/plain',
  'text/json', 'application/x-www-form-urlencoded', 'multipart/form-data; boundary=xyz', 'application/octet-stream', '*/*',
  'application/json, text/plain', 'application/json;', 'json', '', ';;;', undefined,
];

const RAW_FRAGMENTS = [
  '', ' ', '{', '}', '[', '{"items":', '{"items":[', '{"body":', 'null', 'true', 'false', '0', '-0', '1e999', 'NaN', 'Infinity', '"x"', '[]', '[{}]', '{}',
  '{"items":[]}', '{"body":{"mass":1}}garbage', '{"body":{"mass":1}}{"body":{"mass":1}}', '\uFEFF{"body":{"mass":1}}', '{"body":{"mass":1,}}',
  "{'body':{'mass':1}}", '{"body":{"mass":01}}', '{"body":{"mass":.5}}', '{"body":{"mass":+1}}', '{"body":{"mass":0x10}}', '{"body":/*c*/{"mass":1}}',
  '{"body":{"mass":1,"mass":-1}}', '{"__proto__":{"polluted":1},"body":{"mass":1}}', '{"constructor":{"prototype":{"polluted":1}}}',
  '{"body":{"mass":"\\ud800"}}', '{"body":{"mass":1}}\n{"body":{"mass":2}}', `{"body":${'['.repeat(5000)}${']'.repeat(5000)}}`,
  `${'{"a":'.repeat(3000)}1${'}'.repeat(3000)}`,
];

const rawPayloadArb: fc.Arbitrary<string | Buffer> = fc.oneof(
  { arbitrary: fc.constantFrom(...RAW_FRAGMENTS), weight: 4 },
  { arbitrary: fc.string({ maxLength: 200, unit: 'binary' }), weight: 2 },
  { arbitrary: fc.json({ maxDepth: 3 }).chain((j) => fc.nat({ max: j.length }).map((n) => j.slice(0, n))), weight: 2 },
  { arbitrary: fc.uint8Array({ maxLength: 300 }).map((a) => Buffer.from(a)), weight: 1 },
  { arbitrary: fc.json({ maxDepth: 3 }).map((j) => Buffer.from(j, 'utf16le')), weight: 1 },
);

// ------------------------------------------------------------------ accepted cases

/** The schemas (all union branches) that can describe the value at `toks` below `root`. */
function schemasAt(root: Schema, toks: string[]): Schema[] {
  const expand = (x: Schema): Schema[] => {
    const r = resolve(x);
    const union = (r.anyOf ?? r.oneOf) as Schema[] | undefined;
    return Array.isArray(union) ? union.flatMap(expand) : [r];
  };
  let level = expand(root);
  for (const t of toks) {
    level = level.flatMap((x) => {
      const props = x.properties as Record<string, Schema> | undefined;
      if (props && Object.hasOwn(props, t)) return expand(props[t]);
      if (x.type === 'array' && x.items && /^\d+$/.test(t)) return expand(x.items as Schema);
      return [];
    });
  }
  return level;
}

/**
 * Cases each route answers with 200 (smallest first), found with no route-specific knowledge:
 * sample the single-case branch of the request schema, and repair a rejected sample using the
 * field pointers of the reply (an optional field the reply objects to is dropped or re-drawn, a
 * required one re-drawn), a few steps each. They seed the "perturbed" family and the regressions.
 */
async function acceptedCases(route: PostRoute): Promise<unknown[]> {
  const s = resolve(route.schema);
  const union = (s.anyOf ?? s.oneOf) as Schema[] | undefined;
  const caseSchema = union?.find((b) => !('items' in ((resolve(b).properties as object) ?? {}))) ?? s;
  const seed = routeSeed(route.path, 99);
  const samples = fc.sample(fromSchema(caseSchema), { seed, numRuns: 120 });
  const accepted: unknown[] = [];
  const seen = new Set<string>();
  const deadline = Date.now() + 4000;
  let draw = 0;
  for (const sample of samples) {
    let c = JSON.parse(serialise(sample)) as Record<string, unknown>;
    for (let step = 0; step < 12 && accepted.length < 40 && Date.now() < deadline; step++) {
      const payload = serialise(c);
      const res = await post({ route: route.url, payload, contentType: 'application/json' });
      if (res.statusCode === 200) {
        if (!seen.has(payload)) accepted.push(c);
        seen.add(payload);
        break;
      }
      const errors = ((JSON.parse(res.body) as { errors?: Array<{ pointer?: unknown }> }).errors ?? []).map((e) => String(e.pointer ?? ''));
      const targets = errors.filter((p) => POINTER_RE.test(p) && p !== '' && lookup(c, tokens(p).slice(0, -1)) !== NOT_SENT);
      if (targets.length === 0) break;
      for (const p of targets) {
        const toks = tokens(p);
        const parent = lookup(c, toks.slice(0, -1)) as Record<string, unknown>;
        const key = toks[toks.length - 1];
        const optional = schemasAt(caseSchema, toks.slice(0, -1)).every((x) => !((x.required as string[] | undefined) ?? []).includes(key));
        const options = schemasAt(caseSchema, toks);
        draw++;
        if ((optional && draw % 2 === 0) || options.length === 0) {
          if (Array.isArray(parent)) parent.splice(Number(key), 1);
          else delete parent[key];
        } else {
          parent[key] = JSON.parse(serialise(fc.sample(fc.oneof(...options.map((o) => fromSchema(o))), { seed: seed + draw, numRuns: 1 })[0]));
        }
      }
      c = JSON.parse(serialise(c)) as Record<string, unknown>;
    }
    if (accepted.length >= 40 || Date.now() > deadline) break;
  }
  accepted.sort((a, b) => serialise(a).length - serialise(b).length);
  return accepted;
}

const ACCEPTED = new Map<string, unknown[]>();
for (const r of ROUTES) ACCEPTED.set(r.path, await acceptedCases(r));

/** Numbers near a given one, and the edges where formulas break (|a*| -> 1, x -> 0, overflow). */
function nearby(x: number): number[] {
  return [
    -x, x * (1 + 2 ** -52), x * (1 - 2 ** -52), x * 2, x / 2, x * 1e3, x / 1e3, x * 1e100, x / 1e100, x + 1e-300,
    0, 1, -1, 1 - 2 ** -53, -(1 - 2 ** -53), 0.998, 0.99999999, -0.99999999, 1e-8, 5e-324, 2.2250738585072014e-308, 1e300, 1e-300,
  ];
}

interface Perturbation {
  at: number;
  pick: number;
}

/** Replaces numeric leaves of an accepted case by nearby or edge values. */
function perturb(c: unknown, ps: Perturbation[]): unknown {
  const root = JSON.parse(serialise(c)) as unknown;
  const numeric = paths(root).filter((p) => p.length > 0 && typeof p.reduce<unknown>((o, k) => (o as Record<string | number, unknown>)[k], root) === 'number');
  for (const { at, pick } of ps) {
    if (numeric.length === 0) break;
    const path = numeric[at % numeric.length];
    const parent = path.slice(0, -1).reduce<unknown>((o, k) => (o as Record<string | number, unknown>)[k], root) as Record<string | number, unknown>;
    const key = path[path.length - 1];
    const near = nearby(parent[key] as number).filter(Number.isFinite);
    parent[key] = near[pick % near.length];
  }
  return root;
}

function perturbedArb(route: PostRoute): fc.Arbitrary<unknown> {
  const corpus = ACCEPTED.get(route.path) ?? [];
  if (corpus.length === 0) return fromSchema(route.schema);
  const one = fc.tuple(fc.constantFrom(...corpus), fc.array(fc.record({ at: fc.nat(), pick: fc.nat() }), { minLength: 1, maxLength: 3 })).map(([c, ps]) => perturb(c, ps));
  const mc = fc.record({ kind: fc.constant('monte-carlo'), samples: fc.integer({ min: 10, max: MC_SAMPLES_MAX }), seed: fc.nat() });
  const withMethod = fc.tuple(one, mc).map(([c, m]) => (c && typeof c === 'object' && !Array.isArray(c) && JSON.stringify(route.schema).includes('"uncertainty_method"') ? { ...c, uncertainty_method: m } : c));
  const batch = fc.array(fc.oneof(one, withMethod), { minLength: 1, maxLength: BATCH_MAX }).map((items) => ({ items }));
  return fc.oneof({ arbitrary: one, weight: 3 }, { arbitrary: withMethod, weight: 2 }, { arbitrary: batch, weight: 2 });
}

// ------------------------------------------------------------------ tests

describe('route discovery', () => {
  it('finds the POST routes in /openapi.json, each with a request schema', () => {
    expect(ROUTES.length).toBeGreaterThan(0);
    expect(ROUTES.map((r) => r.path)).toContain('/v1/radii');
    for (const r of ROUTES) expect(Object.keys(r.schema).length, `${r.path} has a request body schema`).toBeGreaterThan(0);
  });

  it('the invariant checker rejects bad replies (it can fail)', () => {
    const sent: Sent = { route: '/x', payload: '{}', contentType: 'application/json' };
    const fake = (statusCode: number, body: string, ct: string) => ({ statusCode, body, headers: { 'content-type': ct } }) as unknown as LightMyRequestResponse;
    expect(() => checkReply(fake(200, '{"a":null}', 'application/json'), sent)).toThrow();
    expect(() => checkReply(fake(200, '{"a":1e999}', 'application/json'), sent)).toThrow();
    expect(() => checkReply(fake(200, '{"a":NaN}', 'application/json'), sent)).toThrow();
    expect(() => checkReply(fake(400, '{"type":"t","title":"t","status":422,"detail":"d"}', 'application/problem+json'), sent)).toThrow();
    expect(() => checkReply(fake(400, '{"type":"t","title":"t","status":400,"detail":"d"}', 'application/json'), sent)).toThrow();
    expect(() => checkReply(fake(400, '{"type":"t","title":"t","status":400,"detail":"at f (/srv/a.js:1:2)"}', 'application/problem+json'), sent)).toThrow();
    expect(() => checkReply(fake(500, '{"type":"t","title":"t","status":500,"detail":"d"}', 'application/problem+json'), sent)).toThrow();
    expect(() => checkReply(fake(200, '{"items":[{"a":1}],"count":1}', 'application/json'), sent, 2)).toThrow();
    expect(() => checkReply(fake(400, '{"type":"t","title":"t","status":400,"detail":"d","errors":[{"pointer":"a/b","message":"m"}]}', 'application/problem+json'), sent)).toThrow();
    expect(() => checkReply(fake(422, '{"type":"t","title":"t","status":422,"detail":"d","errors":[{"pointer":"/","message":"m"}]}', 'application/problem+json'), sent)).toThrow();
    expect(() => checkReply(fake(400, '{"type":"t","title":"t","status":400,"detail":"d","errors":[{"pointer":"/a/b/c","message":"m"}]}', 'application/problem+json'), sent)).toThrow();
    // and accepts good ones
    checkReply(fake(400, '{"type":"t","title":"t","status":400,"detail":"d","errors":[{"pointer":"/body","message":"is required"},{"pointer":"","message":"m"}]}', 'application/problem+json'), sent);
    checkReply(fake(200, '{"items":[{"a":1},{"error":{"type":"t","title":"t","status":422,"detail":"d"}}],"count":2}', 'application/json'), sent, 2);
    checkReply(fake(400, '{"type":"t","title":"t","status":400,"detail":"d","errors":[{"pointer":"/items/0/a~1b/c","message":"m"}]}', 'application/problem+json'), { ...sent, payload: '{"items":[{"a/b":{}}]}' });
  });
});

describe.each(ROUTES)('fuzz POST $path', (route) => {
  const bodyArb = fromSchema(route.schema);
  const opts = (family: number) => ({ seed: routeSeed(route.path, family), numRuns: RUNS_PER_FAMILY, plugins: [fc.interruptAfterTimeLimit(MS_PER_PROPERTY)] });

  it('random JSON values', async () => {
    const arb = fc.oneof(
      fc.jsonValue({ maxDepth: 4 }),
      fc.record({ items: fc.array(fc.jsonValue({ maxDepth: 3 }), { maxLength: BATCH_MAX + 2 }) }),
      fc.record({ body: fc.jsonValue({ maxDepth: 3 }) }),
      fc.dictionary(fc.constantFrom(...EXTRA_KEYS.slice(0, 11)), fc.jsonValue({ maxDepth: 3 }), { noNullPrototype: true }),
    );
    await fc.assert(
      fc.asyncProperty(arb, async (body) => {
        const sent = { route: route.url, payload: serialise(body), contentType: 'application/json' };
        checkReply(await post(sent), sent, itemsSent(body));
      }),
      opts(1),
    );
  });

  it('schema-shaped cases: invariants hold, and a success replays byte-identically', async () => {
    await fc.assert(
      fc.asyncProperty(bodyArb, async (body) => {
        const sent = { route: route.url, payload: serialise(body), contentType: 'application/json' };
        const res = await post(sent);
        checkReply(res, sent, itemsSent(body));
        if (res.statusCode === 200) {
          const again = await post(sent);
          expect(again.body, `${describeSent(sent)}\n-> same request, different reply`).toBe(res.body);
        }
      }),
      opts(2),
    );
  });

  it('plausible-but-wrong cases (mutated)', async () => {
    const arb = fc.tuple(bodyArb, fc.array(mutationArb, { minLength: 1, maxLength: 3 })).map(([b, ms]) => mutate(b, ms));
    await fc.assert(
      fc.asyncProperty(arb, async (body) => {
        const payload = serialise(body);
        const sent = { route: route.url, payload, contentType: 'application/json' };
        checkReply(await post(sent), sent, payload.length > BODY_LIMIT ? undefined : itemsSent(body));
      }),
      opts(3),
    );
  });

  it('accepted cases with numbers moved to nearby and edge values, Monte Carlo on, batched', async () => {
    await fc.assert(
      fc.asyncProperty(perturbedArb(route), async (body) => {
        const sent = { route: route.url, payload: serialise(body), contentType: 'application/json' };
        const res = await post(sent);
        checkReply(res, sent, itemsSent(body));
        if (res.statusCode === 200) {
          const again = await post(sent);
          expect(again.body, `${describeSent(sent)}\n-> same request, different reply`).toBe(res.body);
        }
      }),
      opts(5),
    );
  });

  it('raw payloads and content types', async () => {
    const arb = fc.tuple(fc.oneof(rawPayloadArb, bodyArb.map(serialise)), fc.constantFrom(...CONTENT_TYPES));
    await fc.assert(
      fc.asyncProperty(arb, async ([payload, contentType]) => {
        const sent = { route: route.url, payload, contentType };
        checkReply(await post(sent), sent);
      }),
      opts(4),
    );
  });

  describe('explicit regressions', () => {
    const valid: unknown = ACCEPTED.get(route.path)?.[0];

    it('some schema samples are accepted (so the fuzzing reaches the physics)', () => {
      expect(ACCEPTED.get(route.path)?.length ?? 0, `no sampled case of ${route.path} was answered 200`).toBeGreaterThan(0);
    });

    it('2 MB body over a 64 KiB BODY_LIMIT -> 413 problem (over a real socket, with and without content-length)', async () => {
      const filler = JSON.stringify({ items: Array.from({ length: 40_000 }, () => valid ?? {}) });
      const big = filler.length >= 2_000_000 ? filler : filler + ' '.repeat(2_000_000 - filler.length);
      expect(big.length).toBeGreaterThanOrEqual(2_000_000);
      const agent = request(app.server);
      const res = await agent.post(route.url).set('content-type', 'application/json').send(big);
      expect(res.status).toBe(413);
      expect(res.headers['content-type']).toMatch(/^application\/problem\+json/);
      expectProblem(JSON.parse(res.text), 413, 'content-length');
      // Same over inject with a chunked stream (no content-length).
      const { Readable } = await import('node:stream');
      const chunked = await app.inject({ method: 'POST', url: route.url, headers: { 'content-type': 'application/json', 'transfer-encoding': 'chunked' }, payload: Readable.from([big.slice(0, 1_000_000), big.slice(1_000_000)]) });
      expect(chunked.statusCode).toBe(413);
      expectProblem(chunked.json(), 413, 'chunked');
    });

    it('{"items": []} -> 400 problem pointing at /items', async () => {
      const res = await post({ route: route.url, payload: '{"items":[]}', contentType: 'application/json' });
      expect(res.statusCode).toBe(400);
      const doc = res.json();
      expectProblem(doc, 400, 'empty items');
      expect((doc.errors as Array<{ pointer: string }>).map((e) => e.pointer)).toContain('/items');
    });

    it(`exactly BATCH_MAX (${BATCH_MAX}) items -> 200 with one slot each (or 413 naming a per-request budget)`, async (ctx) => {
      if (valid === undefined) ctx.skip();
      const body = { items: Array.from({ length: BATCH_MAX }, () => valid) };
      const sent = { route: route.url, payload: serialise(body), contentType: 'application/json' };
      const res = await post(sent);
      if (res.statusCode === 413) {
        // A request-level budget (COMPUTE_BUDGET, PULSES_MAX, RAYS_MAX) may be reached before BATCH_MAX.
        checkReply(res, sent);
        expect(res.json().detail).toMatch(/COMPUTE_BUDGET|PULSES_MAX|RAYS_MAX/);
        return;
      }
      expect(res.statusCode).toBe(200);
      checkReply(res, sent, BATCH_MAX);
    });

    it(`BATCH_MAX + 1 (${BATCH_MAX + 1}) valid items -> 413 problem naming the limit (api.md: "413: body or batch too large")`, async (ctx) => {
      if (valid === undefined) ctx.skip();
      const body = { items: Array.from({ length: BATCH_MAX + 1 }, () => valid) };
      const sent = { route: route.url, payload: serialise(body), contentType: 'application/json' };
      const res = await post(sent);
      checkReply(res, sent);
      expect(res.json().detail, 'the problem names the batch limit').toMatch(new RegExp(`\\b${BATCH_MAX}\\b`));
      expect(res.statusCode, `batch over BATCH_MAX answered ${res.statusCode}: ${res.body}`).toBe(413);
    });

    it('Monte Carlo samples 0 and above MC_SAMPLES_MAX -> 400 naming uncertainty_method/samples', async (ctx) => {
      if (valid === undefined || typeof valid !== 'object' || Array.isArray(valid)) ctx.skip();
      const caseSchema = JSON.stringify(route.schema);
      if (!caseSchema.includes('"uncertainty_method"')) ctx.skip();
      for (const samples of [0, MC_SAMPLES_MAX + 1, 1e9]) {
        const body = { ...(valid as object), uncertainty_method: { kind: 'monte-carlo', samples } };
        const sent = { route: route.url, payload: serialise(body), contentType: 'application/json' };
        const res = await post(sent);
        checkReply(res, sent);
        expect(res.statusCode, `samples=${samples}`).toBe(400);
        expect(res.json().errors.map((e: { pointer: string }) => e.pointer)).toContain('/uncertainty_method/samples');
      }
    });
  });
});

// ------------------------------------------------------------------ reproductions

/** Minimal reproductions of failures this fuzzer found, so each is visible on its own. */
describe.runIf(ROUTES.some((r) => r.path === '/v1/radii'))('reproductions (POST /v1/radii)', () => {
  async function send(body: string) {
    const sent: Sent = { route: '/v1/radii', payload: body, contentType: 'application/json' };
    const res = await post(sent);
    return { res, sent, doc: JSON.parse(res.body) as { status: number; errors?: Array<{ pointer: string; message: string }> } };
  }

  it.each(['constructor', 'toString', 'valueOf', 'hasOwnProperty'])('unit "%s" (an Object.prototype name) is an unknown unit: 400 at /body/mass/unit, not 500', async (unit) => {
    const { res, doc } = await send(JSON.stringify({ body: { mass: { value: 1, unit } } }));
    expect(res.statusCode, res.body).toBe(400);
    expect(doc.errors?.map((e) => e.pointer)).toEqual(['/body/mass/unit']);
  });

  it('an unknown member named "a/b~c" is pointed at as /body/a~1b~0c (RFC 6901 escaping)', async () => {
    const { res, sent, doc } = await send('{"body":{"mass":1,"a/b~c":1}}');
    expect(res.statusCode).toBe(400);
    expect(doc.errors?.map((e) => e.pointer)).toEqual(['/body/a~1b~0c']);
    checkReply(res, sent);
  });

  it.each([
    ['an unknown unit', { body: { mass: { value: 1, unit: 'furlong' } } }, '/items/1/body/mass/unit'],
    ['a spin uncertainty above 2', { body: { mass: 1, spin: { value: 0, uncertainty: 3 } } }, '/items/1/body/spin/uncertainty'],
    ['two of mass, gm and preset', { body: { mass: 1, gm: 1 } }, '/items/1/body'],
  ])('in a batch, %s is pointed at inside its item', async (_what, bad, pointer) => {
    const { res, doc } = await send(JSON.stringify({ items: [{ body: { mass: 1 } }, bad] }));
    expect(res.statusCode, res.body).toBe(400);
    expect(doc.errors?.map((e) => e.pointer)).toEqual([pointer]);
  });

  it('a single case with no physical result points at the case as "" (or a field), never "/" (a member named "")', async () => {
    const { res, sent, doc } = await send('{"body":{"mass":2.2250738585072014e-308}}');
    expect(res.statusCode).toBeGreaterThanOrEqual(400);
    expect(res.statusCode).toBeLessThan(500);
    expect(doc.errors?.map((e) => e.pointer)).not.toContain('/');
    checkReply(res, sent);
  });

  it('gm that overflows after unit conversion (1e300 km3.s-2) is a 400 at /body/gm, as the same overflow through mass is', async () => {
    const viaMass = await send(JSON.stringify({ body: { mass: { value: 1e300, unit: 'solMass' } } }));
    expect(viaMass.res.statusCode, viaMass.res.body).toBe(400);
    expect(viaMass.doc.errors?.map((e) => e.pointer)).toEqual(['/body/mass']);
    const viaGm = await send(JSON.stringify({ body: { gm: { value: 1e300, unit: 'km3.s-2' } } }));
    expect(viaGm.res.statusCode, viaGm.res.body).toBe(400);
    expect(viaGm.doc.errors?.map((e) => e.pointer)).toEqual(['/body/gm']);
  });
});
