/**
 * `npm run bench`: throughput and latency of the Lapse service, measured with autocannon.
 *
 * Layout on a 2-core machine:
 *   - the server (scripts/bench-server.ts: the real app plus POST /bench/bare) runs as a child
 *     process started with `taskset -c 1`;
 *   - the load generator (autocannon, programmatic API) runs in this process, which re-executes
 *     itself under `taskset -c 0` first. Re-exec (rather than a separate load-generator child)
 *     pins every thread of the process from birth (main thread, libuv pool, V8 GC/compiler threads)
 *     and keeps autocannon in-process, so its result objects and per-response events arrive
 *     directly, with no serialising across a pipe. The re-exec'd process starts the server with its
 *     own `taskset -c 1`, which replaces the inherited mask. Without taskset (or with fewer than two
 *     usable cores, or --no-pin) both run unpinned and the results say so.
 *
 * Scenarios run alternately (bare, radii, bare, radii, ...) for N rounds after a warm-up of each;
 * per scenario the report gives the MEDIAN over rounds of requests/s, p50 and p99 latency (and
 * cases/s), then ratios of median requests/s, e.g. radii / bare against a target of >= 0.9.
 * Every response must be a 200: any other status, connection error or timeout fails the run
 * (exit code 1); each scenario's reply is also checked once before the load (a batch must come
 * back with every item a result). The results also go to bench-results.json (not committed).
 *
 * Besides req/s the table shows the server's CPU use during the runs (from /proc) and requests per
 * second of server CPU time: when other processes share the server's core, req/s drops but the
 * CPU cost per request moves much less, so the ratio of that column is the steadier comparison.
 * Latency percentiles are computed from every response time (autocannon's own histogram rounds
 * to whole milliseconds; its figures are kept in the JSON too).
 *
 * Options (flag, or environment variable):
 *   --rounds N            BENCH_ROUNDS           alternating rounds (default 5)
 *   --duration S          BENCH_DURATION         seconds per single-case run (default 5)
 *   --batch-duration S    BENCH_BATCH_DURATION   seconds per batch run (default 3)
 *   --warmup S            BENCH_WARMUP           warm-up seconds per scenario (default 2; 0 = none)
 *   --connections N       BENCH_CONNECTIONS      connections for single-case runs (default 10)
 *   --batch-connections N BENCH_BATCH_CONNECTIONS  connections for batch runs (default 2)
 *   --scenarios a,b,...   BENCH_SCENARIOS        scenarios to run, in this order ("all" for every
 *                                                one; default: those marked default)
 *   --out FILE            BENCH_OUT              JSON results (default <repo>/bench-results.json)
 *   --no-pin              BENCH_NO_PIN=1         do not pin to cores
 *   --no-line-profile     BENCH_NO_LINE_PROFILE=1  skip the line-profile measurements (a fresh
 *                                                unpinned server after the scenarios; see
 *                                                scripts/bench-line-profile.ts)
 *   --strict              BENCH_STRICT=1         also exit 2 when a ratio is below its target
 *   --compiled            BENCH_COMPILED=1       serve a tsc build (compiled first, ~15-30 s, into
 *                                                node_modules/.cache/lapse-bench/build) instead of
 *                                                the sources under tsx, whose esbuild keepNames
 *                                                transform adds a __name() call per closure created
 * *   --list                                       list the scenarios and exit
 *   --print-body NAME                            print a scenario's request body (for curl etc.)
 *
 * Adding a scenario (e.g. a 10 000-case inversion batch) is one entry in SCENARIOS below, plus,
 * if it should be compared with a baseline, one entry in COMPARISONS.
 */
import { spawn, spawnSync, type ChildProcess } from 'node:child_process';
import { createRequire } from 'node:module';
import { readFileSync, writeFileSync } from 'node:fs';
import { constants, cpus, loadavg } from 'node:os';
import { dirname, extname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { createInterface } from 'node:readline';
import { parseArgs } from 'node:util';
import type { EventEmitter } from 'node:events';
import { benchLineProfile, type LineProfileBench } from './bench-line-profile.js';

// ---------------------------------------------------------------------------------------------
// autocannon 9 ships no type declarations (and adding @types/autocannon is not allowed here): the
// part of its documented API this script uses, typed by hand.

interface AcHistogram {
  average: number;
  mean: number;
  stddev: number;
  min: number;
  max: number;
  total?: number;
  p50: number;
  p90: number;
  p99: number;
  p99_9: number;
}
interface AcResult {
  duration: number; // seconds
  errors: number;
  timeouts: number;
  mismatches: number;
  non2xx: number;
  resets: number;
  statusCodeStats: Record<string, { count: number }>;
  latency: AcHistogram & { totalCount: number };
  requests: AcHistogram & { sent: number };
  throughput: AcHistogram;
}
interface AcOptions {
  url: string;
  method: string;
  headers: Record<string, string>;
  body?: string;
  connections: number;
  duration: number;
  pipelining: number;
  timeout: number;
  title?: string;
}
interface AcInstance extends EventEmitter {
  stop(): void;
}
type Autocannon = (opts: AcOptions, cb: (err: Error | null, result: AcResult) => void) => AcInstance;

const autocannon = createRequire(import.meta.url)('autocannon') as Autocannon;

// ---------------------------------------------------------------------------------------------
// Scenarios.

type Json = unknown;

interface Scenario {
  /** Identifier, used by --scenarios and as the key in the JSON results. */
  name: string;
  description: string;
  path: string;
  /** The request body (built once, sent by every request). */
  body: () => Json;
  /** 'single' runs use --duration/--connections; 'batch' runs use the batch settings. */
  kind: 'single' | 'batch';
  /** Cases per request, for cases/s. */
  cases: number;
  /** Per-scenario overrides of the kind's defaults. */
  connections?: number;
  durationSec?: number;
  /** Whether it runs when --scenarios is not given. */
  byDefault: boolean;
  /** Checks one reply before the load starts; returns a message when it is wrong. */
  check: (status: number, reply: Json) => string | undefined;
}

interface Comparison {
  name: string;
  /** subject / baseline of median requests/s. */
  subject: string;
  baseline: string;
  /** Minimum ratio; undefined for an informational ratio. */
  target?: number;
}

const SINGLE_CASE = { body: { mass: { value: 8, unit: 'solMass' }, spin: 0.7 } };

/** A small deterministic generator (xorshift32), so the batch is the same on every run. */
function prng(seed: number): () => number {
  let s = seed >>> 0 || 1;
  return () => {
    s ^= s << 13;
    s >>>= 0;
    s ^= s >>> 17;
    s ^= s << 5;
    s >>>= 0;
    return s / 4294967296;
  };
}

/** `n` varied radii cases: every input form of the body (mass in several units, gm, presets,
 * bare numbers and objects), spins across (-1, 1), and about one case in ten with uncertainties
 * (linear propagation, ~61 model evaluations instead of 1). */
function variedRadiiCases(n: number, seed = 20240917): Json[] {
  const rnd = prng(seed);
  const logUniform = (lo: number, hi: number) => lo * Math.pow(hi / lo, rnd());
  const round = (x: number) => Number(x.toPrecision(6));
  const cases: Json[] = [];
  for (let i = 0; i < n; i++) {
    const solar = round(logUniform(3, 1e10));
    const uncertain = i % 10 === 7;
    const body: Record<string, Json> = {};
    switch (i % 8) {
      case 0:
      case 1:
        body.mass = uncertain ? { value: solar, unit: 'solMass', uncertainty: round(solar * 0.05) } : { value: solar, unit: 'solMass' };
        break;
      case 2:
        body.mass = round(solar * 1.98841e30); // bare number: kg
        break;
      case 3:
        body.mass = { value: round(solar * 1.98841e30), unit: 'kg' };
        break;
      case 4:
        body.gm = round(solar * 1.3271244e20); // bare number: m3.s-2
        break;
      case 5:
        body.gm = { value: round(solar * 1.3271244e11), unit: 'km3.s-2' };
        break;
      case 6:
        body.mass = { value: round(solar * 332946), unit: 'earthMass' };
        break;
      default:
        body.preset = i % 16 === 7 ? 'sun' : 'earth';
    }
    const r = rnd();
    if (r < 0.1) {
      // no spin: Schwarzschild
    } else if (r < 0.15) {
      body.spin = 0;
    } else if (uncertain) {
      body.spin = { value: round(-0.9 + 1.8 * rnd()), uncertainty: 0.01 };
    } else {
      body.spin = round(-0.998 + 1.996 * rnd());
    }
    cases.push({ body });
  }
  return cases;
}

function expectKey(key: string) {
  return (status: number, reply: Json): string | undefined => {
    if (status !== 200) return `status ${status}: ${JSON.stringify(reply).slice(0, 300)}`;
    if (typeof reply !== 'object' || reply === null || !(key in reply)) return `reply has no "${key}": ${JSON.stringify(reply).slice(0, 300)}`;
    return undefined;
  };
}

/** A batch reply must hold `n` items and no per-item error. */
function expectBatch(n: number, itemKey?: string) {
  return (status: number, reply: Json): string | undefined => {
    if (status !== 200) return `status ${status}: ${JSON.stringify(reply).slice(0, 300)}`;
    const r = reply as { count?: unknown; items?: unknown[]; ok?: unknown };
    if (itemKey === undefined) return r.ok === true ? undefined : `unexpected reply ${JSON.stringify(reply).slice(0, 300)}`;
    if (!Array.isArray(r.items) || r.items.length !== n || r.count !== n) return `expected ${n} items, got ${Array.isArray(r.items) ? r.items.length : 'none'}`;
    const bad = r.items.findIndex((it) => typeof it !== 'object' || it === null || 'error' in it || !(itemKey in it));
    if (bad >= 0) return `item ${bad} is not a result: ${JSON.stringify(r.items[bad]).slice(0, 300)}`;
    return undefined;
  };
}

const BATCH_N = 1000;
const INVERSION_N = 10000;

/**
 * Redshift inversions of an invented survey: static emitters (closed form), circular orbits of
 * either direction (Brent's method) and mass solutions, one in ten with an uncertain shift.
 */
function variedInversionCases(n: number, seed = 20261202): Json[] {
  const rnd = prng(seed);
  const round = (x: number) => Number(x.toPrecision(6));
  const cases: Json[] = [];
  for (let i = 0; i < n; i++) {
    const z = round(Math.pow(10, -3 + 3.5 * rnd()));
    const shift: Json = i % 10 === 3 ? { value: z, uncertainty: round(z * 0.02) } : z;
    switch (i % 4) {
      case 0:
        cases.push({ body: { mass: { value: round(5 + 20 * rnd()), unit: 'solMass' } }, emitter: { motion: 'static' }, z: shift, solve_for: 'r' });
        break;
      case 1:
        cases.push({ body: { mass: { value: round(5 + 20 * rnd()), unit: 'solMass' }, spin: round(-0.99 + 1.98 * rnd()) }, emitter: { motion: 'circular', direction: 'prograde' }, z: shift, solve_for: 'r' });
        break;
      case 2:
        cases.push({ body: { gm: round(1e20 * (1 + 9 * rnd())), spin: round(0.9 * rnd()) }, emitter: { motion: 'circular', direction: 'retrograde' }, z: shift, solve_for: 'r' });
        break;
      default:
        cases.push({ emitter: { motion: 'static' }, velocity: { value: round(10 + 200 * rnd()), unit: 'km/s' }, r: { value: round(0.005 + 0.02 * rnd()), unit: 'solRad' }, solve_for: 'mass' });
    }
  }
  return cases;
}
const bareOk = (status: number, reply: Json) =>
  status === 200 && (reply as { ok?: unknown } | null)?.ok === true ? undefined : `status ${status}: ${JSON.stringify(reply).slice(0, 300)}`;

/** Every scenario this bench knows; add one entry to benchmark another route. */
const SCENARIOS: Scenario[] = [
  {
    name: 'bare',
    description: 'POST /bench/bare, one case: same schema validation, no physics',
    path: '/bench/bare',
    body: () => SINGLE_CASE,
    kind: 'single',
    cases: 1,
    byDefault: true,
    check: bareOk,
  },
  {
    name: 'radii',
    description: 'POST /v1/radii, one case (8 solMass, a* = 0.7)',
    path: '/v1/radii',
    body: () => SINGLE_CASE,
    kind: 'single',
    cases: 1,
    byDefault: true,
    check: expectKey('isco'),
  },
  {
    name: 'bare-batch',
    description: `POST /bench/bare, batch of ${BATCH_N} varied cases: parse + validate only`,
    path: '/bench/bare',
    body: () => ({ items: variedRadiiCases(BATCH_N) }),
    kind: 'batch',
    cases: BATCH_N,
    byDefault: true,
    check: bareOk,
  },
  {
    name: 'radii-batch',
    description: `POST /v1/radii, batch of ${BATCH_N} varied cases`,
    path: '/v1/radii',
    body: () => ({ items: variedRadiiCases(BATCH_N) }),
    kind: 'batch',
    cases: BATCH_N,
    byDefault: true,
    check: expectBatch(BATCH_N, 'isco'),
  },
  {
    name: 'inversion-batch',
    description: `POST /v1/redshift/inversion, batch of ${INVERSION_N} varied cases (closed forms, Brent, mass solutions)`,
    path: '/v1/redshift/inversion',
    body: () => ({ items: variedInversionCases(INVERSION_N) }),
    kind: 'batch',
    cases: INVERSION_N,
    connections: 1,
    byDefault: true,
    check: expectBatch(INVERSION_N, 'model'),
  },
];

const COMPARISONS: Comparison[] = [
  { name: 'single case: radii / bare', subject: 'radii', baseline: 'bare', target: 0.9 },
  { name: `batch of ${BATCH_N}: radii / bare (information)`, subject: 'radii-batch', baseline: 'bare-batch' },
];

// ---------------------------------------------------------------------------------------------
// Options.

interface Options {
  rounds: number;
  durationSec: number;
  batchDurationSec: number;
  warmupSec: number;
  connections: number;
  batchConnections: number;
  scenarios: Scenario[];
  out: string;
  pin: boolean;
  strict: boolean;
  compiled: boolean;
  lineProfile: boolean;
}

const HERE = dirname(fileURLToPath(import.meta.url));
const ROOT = resolve(HERE, '..');

function die(message: string, code = 1): never {
  process.stderr.write(`bench: ${message}\n`);
  process.exit(code);
}

function intOption(flag: string | undefined, envName: string, fallback: number, min: number, max: number): number {
  const text = flag ?? process.env[envName];
  if (text === undefined || text === '') return fallback;
  const n = Number(text);
  const name = `--${envName.slice('BENCH_'.length).toLowerCase().replace(/_/g, '-')} / ${envName}`;
  if (!Number.isInteger(n) || n < min || n > max) die(`${name} must be an integer from ${min} to ${max}, got ${JSON.stringify(text)}`);
  return n;
}

function truthy(v: string | undefined): boolean {
  return v !== undefined && v !== '' && v !== '0' && v.toLowerCase() !== 'false';
}

function readOptions(): Options {
  const { values } = parseArgs({
    options: {
      rounds: { type: 'string' },
      duration: { type: 'string' },
      'batch-duration': { type: 'string' },
      warmup: { type: 'string' },
      connections: { type: 'string' },
      'batch-connections': { type: 'string' },
      scenarios: { type: 'string' },
      out: { type: 'string' },
      'no-pin': { type: 'boolean', default: false },
      'no-line-profile': { type: 'boolean', default: false },
      strict: { type: 'boolean', default: false },
      compiled: { type: 'boolean', default: false },
      list: { type: 'boolean', default: false },
      'print-body': { type: 'string' },
      help: { type: 'boolean', short: 'h', default: false },
    },
    strict: true,
  });
  if (values.help) {
    const src = readFileSync(fileURLToPath(import.meta.url), 'utf8');
    process.stdout.write(`${src.slice(0, src.indexOf('*/') + 2)}\n`);
    process.exit(0);
  }
  if (values.list) {
    for (const s of SCENARIOS) process.stdout.write(`${s.byDefault ? '*' : ' '} ${s.name.padEnd(16)} ${s.description}\n`);
    process.stdout.write('(* = runs by default)\n');
    process.exit(0);
  }
  if (values['print-body'] !== undefined) {
    const sc = SCENARIOS.find((s) => s.name === values['print-body']) ?? die(`unknown scenario ${JSON.stringify(values['print-body'])}`);
    process.stdout.write(`${JSON.stringify(sc.body())}\n`);
    process.exit(0);
  }
  const wanted = (values.scenarios ?? process.env.BENCH_SCENARIOS ?? '').split(',').map((s) => s.trim()).filter(Boolean);
  let scenarios: Scenario[];
  if (wanted.length === 0) scenarios = SCENARIOS.filter((s) => s.byDefault);
  else if (wanted.length === 1 && wanted[0] === 'all') scenarios = [...SCENARIOS];
  else {
    scenarios = wanted.map((name) => SCENARIOS.find((s) => s.name === name) ?? die(`unknown scenario ${JSON.stringify(name)}; known: ${SCENARIOS.map((s) => s.name).join(', ')}`));
    if (new Set(wanted).size !== wanted.length) die('a scenario is listed twice');
  }
  return {
    rounds: intOption(values.rounds, 'BENCH_ROUNDS', 5, 1, 50),
    durationSec: intOption(values.duration, 'BENCH_DURATION', 5, 1, 120),
    batchDurationSec: intOption(values['batch-duration'], 'BENCH_BATCH_DURATION', 3, 1, 120),
    warmupSec: intOption(values.warmup, 'BENCH_WARMUP', 2, 0, 60),
    connections: intOption(values.connections, 'BENCH_CONNECTIONS', 10, 1, 1000),
    batchConnections: intOption(values['batch-connections'], 'BENCH_BATCH_CONNECTIONS', 2, 1, 100),
    scenarios,
    out: resolve(values.out ?? process.env.BENCH_OUT ?? join(ROOT, 'bench-results.json')),
    pin: !(values['no-pin'] || truthy(process.env.BENCH_NO_PIN)),
    strict: values.strict || truthy(process.env.BENCH_STRICT),
    compiled: values.compiled || truthy(process.env.BENCH_COMPILED),
    lineProfile: !(values['no-line-profile'] || truthy(process.env.BENCH_NO_LINE_PROFILE)),
  };
}

const runSeconds = (o: Options, s: Scenario) => s.durationSec ?? (s.kind === 'batch' ? o.batchDurationSec : o.durationSec);
const runConnections = (o: Options, s: Scenario) => s.connections ?? (s.kind === 'batch' ? o.batchConnections : o.connections);

// ---------------------------------------------------------------------------------------------
// Pinning.

const PIN_ENV = 'LAPSE_BENCH_PINNED';

function tasksetWorks(core: number): boolean {
  const r = spawnSync('taskset', ['-c', String(core), 'true'], { stdio: 'ignore', timeout: 5000 });
  return r.status === 0;
}

/** Outer process: re-run this script under `taskset -c 0` and relay its exit. Returns a note when
 * pinning is not possible (then this process carries on unpinned). */
function reexecPinned(): string | undefined {
  if (!tasksetWorks(0) || !tasksetWorks(1)) {
    return spawnSync('taskset', ['--version'], { stdio: 'ignore', timeout: 5000 }).error
      ? 'taskset not found: server and load generator run unpinned'
      : 'cores 0 and 1 are not both usable by taskset: server and load generator run unpinned';
  }
  const child = spawn('taskset', ['-c', '0', process.execPath, ...process.execArgv, fileURLToPath(import.meta.url), ...process.argv.slice(2)], {
    stdio: 'inherit',
    env: { ...process.env, [PIN_ENV]: '1' },
  });
  const relay = (sig: NodeJS.Signals) => {
    if (child.exitCode === null) child.kill(sig);
  };
  for (const sig of ['SIGINT', 'SIGTERM', 'SIGHUP'] as const) process.on(sig, () => relay(sig));
  child.on('exit', (code, signal) => process.exit(code ?? (signal ? 128 + (constants.signals[signal] ?? 15) : 1)));
  child.on('error', (err) => die(`cannot start taskset: ${err.message}`));
  return 'pending';
}

function affinityOf(pid: number | 'self'): string {
  try {
    const m = /^Cpus_allowed_list:\s*(\S+)/m.exec(readFileSync(`/proc/${pid}/status`, 'utf8'));
    return m ? m[1] : 'unknown';
  } catch {
    return 'unknown';
  }
}

/** user+system CPU seconds of a process, from /proc (undefined where unavailable). */
const CLK_TCK = (() => {
  const r = spawnSync('getconf', ['CLK_TCK'], { encoding: 'utf8', timeout: 5000 });
  const n = Number((r.stdout ?? '').trim());
  return Number.isFinite(n) && n > 0 ? n : 100;
})();
function cpuSecondsOf(pid: number): number | undefined {
  try {
    const stat = readFileSync(`/proc/${pid}/stat`, 'utf8');
    const rest = stat.slice(stat.lastIndexOf(')') + 2).split(' ');
    // Fields 14 and 15 of /proc/PID/stat (utime, stime); `rest` starts at field 3.
    return (Number(rest[11]) + Number(rest[12])) / CLK_TCK;
  } catch {
    return undefined;
  }
}

// ---------------------------------------------------------------------------------------------
// The server child.

const READY_PREFIX = 'LAPSE-BENCH-SERVER READY'; // printed by bench-server.ts

let server: ChildProcess | undefined;
let current: AcInstance | undefined;

/** Compiles server/, routes/ and physics/ with tsc (tsconfig.build.json) into a cache directory
 * under node_modules, where the compiled files still resolve the project's packages. */
function compileApp(): string {
  const outDir = join(ROOT, 'node_modules', '.cache', 'lapse-bench', 'build');
  const tsc = join(ROOT, 'node_modules', 'typescript', 'bin', 'tsc');
  const t0 = Date.now();
  const r = spawnSync(process.execPath, [tsc, '-p', join(ROOT, 'tsconfig.build.json'), '--outDir', outDir], { stdio: 'inherit', timeout: 300_000 });
  if (r.error || r.status !== 0) die(`FAIL: tsc could not build the app into ${outDir} (${r.error?.message ?? `exit ${r.status}`})`);
  process.stdout.write(`compiled the app with tsc into ${outDir} in ${((Date.now() - t0) / 1000).toFixed(1)} s\n`);
  return outDir;
}

async function startServer(cpus: string | undefined, appDir: string | undefined): Promise<{ url: string; pid: number; app: string }> {
  const script = join(HERE, `bench-server${extname(fileURLToPath(import.meta.url))}`);
  const nodeArgs = [...process.execArgv, script, '--port', '0', '--exit-on-stdin-close'];
  const [cmd, args] = cpus ? ['taskset', ['-c', cpus, process.execPath, ...nodeArgs]] : [process.execPath, nodeArgs];
  stoppingServer = false;
  const child = spawn(cmd, args, {
    stdio: ['pipe', 'pipe', 'inherit'],
    env: { ...process.env, BENCH_LOG_LEVEL: process.env.BENCH_LOG_LEVEL ?? 'warn', BENCH_APP_DIR: appDir ?? '' },
  });
  server = child;
  return new Promise((resolveReady, reject) => {
    let ready = false;
    const timer = setTimeout(() => reject(new Error('the server did not print its ready line within 30 s')), 30_000);
    const lines = createInterface({ input: child.stdout! });
    lines.on('line', (line) => {
      const m = ready || !line.startsWith(READY_PREFIX) ? null : / url=(\S+) pid=(\d+) app=(\S+)/.exec(line);
      if (m) {
        ready = true;
        clearTimeout(timer);
        resolveReady({ url: m[1], pid: Number(m[2]), app: m[3] });
      } else {
        process.stderr.write(`[server] ${line}\n`);
      }
    });
    child.on('error', (err) => {
      clearTimeout(timer);
      reject(err);
    });
    child.on('exit', (code, signal) => {
      clearTimeout(timer);
      if (!ready) reject(new Error(`the server exited before it was ready (code ${code}, signal ${signal})`));
      else if (!stoppingServer) {
        process.stderr.write(`bench: FAIL: the server exited during the run (code ${code}, signal ${signal})\n`);
        current?.stop();
        process.exit(1);
      }
    });
  });
}

let stoppingServer = false;
async function stopServer(): Promise<void> {
  const child = server;
  if (!child || child.exitCode !== null || child.signalCode !== null) return;
  stoppingServer = true;
  const gone = new Promise<void>((r) => child.once('exit', () => r()));
  child.kill('SIGTERM');
  const t = setTimeout(() => child.kill('SIGKILL'), 3000);
  await gone;
  clearTimeout(t);
}

function killServerNow(): void {
  const child = server;
  if (child && child.exitCode === null && child.signalCode === null) {
    stoppingServer = true;
    child.kill('SIGKILL');
  }
}

// ---------------------------------------------------------------------------------------------
// Measuring.

interface RunResult {
  round: number; // 0 for the warm-up
  durationSec: number;
  requests: number;
  rps: number;
  casesPerSec: number;
  /** Latency percentiles from every response time (ms, fractional). */
  p50Ms: number;
  p99Ms: number;
  /** autocannon's own percentiles (its histogram has 1 ms resolution). */
  autocannonP50Ms: number;
  autocannonP99Ms: number;
  statusCodes: Record<string, number>;
  non2xx: number;
  errors: number;
  timeouts: number;
  serverCpuPct?: number;
  /** Requests per second of server CPU time: the server's cost per request, less sensitive than
   * req/s to other processes taking turns on the server's core. */
  reqPerServerCpuSec?: number;
  generatorCpuPct: number;
}

function percentile(sorted: Float64Array, q: number): number {
  if (sorted.length === 0) return NaN;
  const i = Math.min(sorted.length - 1, Math.max(0, Math.ceil(q * sorted.length) - 1));
  return sorted[i];
}

function median(xs: number[]): number {
  const v = xs.filter((x) => Number.isFinite(x)).sort((a, b) => a - b);
  if (v.length === 0) return NaN;
  const mid = v.length >> 1;
  return v.length % 2 ? v[mid] : (v[mid - 1] + v[mid]) / 2;
}

async function runOnce(base: string, sc: Scenario, body: string, seconds: number, connections: number, round: number, serverPid: number): Promise<RunResult> {
  let lat = new Float64Array(1 << 16);
  let n = 0;
  const cpu0 = cpuSecondsOf(serverPid);
  const self0 = process.cpuUsage();
  const wall0 = process.hrtime.bigint();
  const result = await new Promise<AcResult>((res, rej) => {
    const inst = autocannon(
      {
        url: base + sc.path,
        method: 'POST',
        headers: { 'content-type': 'application/json' },
        body,
        connections,
        duration: seconds,
        pipelining: 1,
        timeout: sc.kind === 'batch' ? 30 : 10,
        title: sc.name,
      },
      (err, r) => (err ? rej(err) : res(r)),
    );
    current = inst;
    inst.on('response', (_client: unknown, _status: number, _bytes: number, responseTime: number) => {
      if (n === lat.length) {
        const bigger = new Float64Array(lat.length * 2);
        bigger.set(lat);
        lat = bigger;
      }
      lat[n++] = responseTime;
    });
  });
  current = undefined;
  const wall = Number(process.hrtime.bigint() - wall0) / 1e9;
  const cpu1 = cpuSecondsOf(serverPid);
  const self = process.cpuUsage(self0);
  const sorted = lat.subarray(0, n).sort();
  const statusCodes: Record<string, number> = {};
  for (const [code, { count }] of Object.entries(result.statusCodeStats)) statusCodes[code] = Number(count);
  const requests = result.requests.total ?? n;
  const rps = requests / result.duration;
  return {
    round,
    durationSec: result.duration,
    requests,
    rps,
    casesPerSec: rps * sc.cases,
    p50Ms: percentile(sorted, 0.5),
    p99Ms: percentile(sorted, 0.99),
    autocannonP50Ms: result.latency.p50,
    autocannonP99Ms: result.latency.p99,
    statusCodes,
    non2xx: result.non2xx,
    errors: result.errors,
    timeouts: result.timeouts,
    serverCpuPct: cpu0 !== undefined && cpu1 !== undefined ? (100 * (cpu1 - cpu0)) / wall : undefined,
    reqPerServerCpuSec: cpu0 !== undefined && cpu1 !== undefined && cpu1 > cpu0 ? requests / (cpu1 - cpu0) : undefined,
    generatorCpuPct: (100 * (self.user + self.system)) / 1e6 / wall,
  };
}

/** Problems with a run: anything but 200s, connection errors, timeouts. */
function runFailures(sc: Scenario, r: RunResult): string[] {
  const out: string[] = [];
  const other = Object.entries(r.statusCodes).filter(([code]) => code !== '200');
  if (other.length > 0) out.push(`${sc.name} round ${r.round}: non-200 replies ${other.map(([c, k]) => `${c} x${k}`).join(', ')}`);
  else if (r.non2xx > 0) out.push(`${sc.name} round ${r.round}: ${r.non2xx} non-2xx replies`);
  if (r.errors > 0) out.push(`${sc.name} round ${r.round}: ${r.errors} connection errors (${r.timeouts} timeouts)`);
  if (r.requests === 0) out.push(`${sc.name} round ${r.round}: no request completed`);
  return out;
}

// ---------------------------------------------------------------------------------------------
// Reporting.

const fmt = (x: number | undefined, digits = 0) =>
  x === undefined || !Number.isFinite(x) ? '-' : x.toLocaleString('en-US', { minimumFractionDigits: digits, maximumFractionDigits: digits });

function table(header: string[], rows: string[][]): string {
  const widths = header.map((h, i) => Math.max(h.length, ...rows.map((r) => r[i].length)));
  const line = (cells: string[]) => cells.map((c, i) => (i === 0 ? c.padEnd(widths[i]) : c.padStart(widths[i]))).join('  ');
  return [line(header), widths.map((w) => '-'.repeat(w)).join('  '), ...rows.map(line)].join('\n');
}

// ---------------------------------------------------------------------------------------------

async function main(): Promise<void> {
  const opts = readOptions();

  let pinNote: string | undefined;
  if (opts.pin && process.env[PIN_ENV] !== '1') {
    pinNote = reexecPinned();
    if (pinNote === 'pending') return; // the pinned copy does the work; this one relays its exit
    process.stderr.write(`bench: note: ${pinNote}\n`);
  }
  const pinned = opts.pin && process.env[PIN_ENV] === '1';
  if (!opts.pin) pinNote = 'pinning disabled (--no-pin / BENCH_NO_PIN)';

  // Seconds: server start-up, then per scenario its warm-up and its rounds (+0.3 s set-up a run).
  const estimate = 5 + opts.scenarios.reduce((t, s) => t + (opts.warmupSec > 0 ? opts.warmupSec + 0.3 : 0) + opts.rounds * (runSeconds(opts, s) + 0.3), 0);
  // Every run is bounded by autocannon's duration; this bounds the whole bench as well.
  const limitSec = Math.round(estimate * 2 + 60 + (opts.compiled ? 300 : 0) + (opts.lineProfile ? 120 : 0));
  const watchdog = setTimeout(() => {
    process.stderr.write(`bench: FAIL: still running after ${limitSec} s; giving up\n`);
    current?.stop();
    killServerNow();
    process.exit(3);
  }, limitSec * 1000);
  watchdog.unref();

  const onSignal = (sig: NodeJS.Signals) => {
    process.stderr.write(`\nbench: ${sig}: stopping\n`);
    current?.stop();
    killServerNow();
    process.exit(sig === 'SIGINT' ? 130 : 143);
  };
  for (const sig of ['SIGINT', 'SIGTERM', 'SIGHUP'] as const) process.on(sig, onSignal);
  process.on('exit', killServerNow);

  const appDir = opts.compiled ? compileApp() : undefined;
  const { url: base, pid: serverPid, app: serverApp } = await startServer(pinned ? '1' : undefined, appDir);
  const affinity = { loadGenerator: affinityOf('self'), server: affinityOf(serverPid) };
  const log = (s: string) => process.stdout.write(`${s}\n`);
  log(`Lapse bench: server ${base} (pid ${serverPid}, cpus ${affinity.server}, app from ${serverApp === 'sources' ? 'sources under tsx' : serverApp}); load generator pid ${process.pid}, cpus ${affinity.loadGenerator}${pinNote ? ` [${pinNote}]` : ''}`);
  log(`${opts.rounds} rounds of ${opts.scenarios.map((s) => `${s.name} (${runSeconds(opts, s)} s x ${runConnections(opts, s)} conn)`).join(', ')}; warm-up ${opts.warmupSec} s each; about ${Math.round(estimate)} s`);

  const failures: string[] = [];
  const bodies = new Map<string, string>();
  // Check each scenario's reply once, then warm it up.
  for (const sc of opts.scenarios) {
    const body = JSON.stringify(sc.body());
    bodies.set(sc.name, body);
    const res = await fetch(base + sc.path, { method: 'POST', headers: { 'content-type': 'application/json' }, body, signal: AbortSignal.timeout(30_000) });
    const text = await res.text();
    let reply: Json;
    try {
      reply = JSON.parse(text);
    } catch {
      reply = text;
    }
    const wrong = sc.check(res.status, reply);
    if (wrong) die(`FAIL: ${sc.name}: the check request got a wrong reply: ${wrong}`);
    log(`  ${sc.name}: request ${fmt(body.length)} B, reply ${fmt(text.length)} B, checked`);
  }
  if (opts.warmupSec > 0) {
    for (const sc of opts.scenarios) {
      const r = await runOnce(base, sc, bodies.get(sc.name)!, opts.warmupSec, runConnections(opts, sc), 0, serverPid);
      const bad = runFailures(sc, r);
      for (const b of bad) process.stderr.write(`bench: FAIL (warm-up): ${b}\n`);
      failures.push(...bad);
      log(`  warm-up ${sc.name}: ${fmt(r.rps)} req/s`);
    }
  }

  const runs = new Map<string, RunResult[]>(opts.scenarios.map((s) => [s.name, []]));
  for (let round = 1; round <= opts.rounds; round++) {
    const parts: string[] = [];
    for (const sc of opts.scenarios) {
      const r = await runOnce(base, sc, bodies.get(sc.name)!, runSeconds(opts, sc), runConnections(opts, sc), round, serverPid);
      runs.get(sc.name)!.push(r);
      const bad = runFailures(sc, r);
      for (const b of bad) process.stderr.write(`bench: FAIL: ${b}\n`);
      failures.push(...bad);
      parts.push(`${sc.name} ${fmt(r.rps)}/s`);
    }
    log(`  round ${round}/${opts.rounds}: ${parts.join(', ')}`);
  }
  await stopServer();

  // Line profiles: a fresh server (empty transfer cache) whose worker threads may use every core;
  // requests are sequential, so the load generator hardly competes.
  let lineProfile: LineProfileBench | undefined;
  if (opts.lineProfile) {
    const lp = await startServer(pinned ? '0,1' : undefined, appDir);
    log(`line profiles: fresh server ${lp.url} (pid ${lp.pid}, cpus ${affinityOf(lp.pid)})`);
    lineProfile = await benchLineProfile(lp.url, cpus().length, log);
    await stopServer();
    for (const f of lineProfile.failures) process.stderr.write(`bench: FAIL: line-profile: ${f}\n`);
    failures.push(...lineProfile.failures.map((f) => `line-profile: ${f}`));
  }

  // Summaries.
  const summary = opts.scenarios.map((sc) => {
    const rs = runs.get(sc.name)!;
    return {
      scenario: sc,
      rps: median(rs.map((r) => r.rps)),
      rpsMin: Math.min(...rs.map((r) => r.rps)),
      rpsMax: Math.max(...rs.map((r) => r.rps)),
      casesPerSec: median(rs.map((r) => r.casesPerSec)),
      p50Ms: median(rs.map((r) => r.p50Ms)),
      p99Ms: median(rs.map((r) => r.p99Ms)),
      serverCpuPct: median(rs.map((r) => r.serverCpuPct ?? NaN)),
      reqPerServerCpuSec: median(rs.map((r) => r.reqPerServerCpuSec ?? NaN)),
      generatorCpuPct: median(rs.map((r) => r.generatorCpuPct)),
      requests: rs.reduce((t, r) => t + r.requests, 0),
      bad: rs.reduce((t, r) => t + r.non2xx + r.errors, 0),
    };
  });
  const byName = new Map(summary.map((s) => [s.scenario.name, s]));
  const comparisons = COMPARISONS.filter((c) => byName.has(c.subject) && byName.has(c.baseline)).map((c) => {
    const ratio = byName.get(c.subject)!.rps / byName.get(c.baseline)!.rps;
    const verdict = c.target === undefined ? 'INFO' : ratio >= c.target ? 'PASS' : 'BELOW';
    const cpuRatio = byName.get(c.subject)!.reqPerServerCpuSec / byName.get(c.baseline)!.reqPerServerCpuSec;
    return { ...c, ratio, cpuRatio, verdict };
  });

  log('');
  log(`Medians over ${opts.rounds} rounds (latency: p50/p99 of all response times of a run, then median over runs)`);
  log(
    table(
      ['scenario', 'req/s', 'min..max req/s', 'cases/s', 'p50 ms', 'p99 ms', 'srv CPU%', 'req/srv-CPU-s', 'gen CPU%', 'requests', 'non-200+err'],
      summary.map((s) => [
        s.scenario.name,
        fmt(s.rps),
        `${fmt(s.rpsMin)}..${fmt(s.rpsMax)}`,
        fmt(s.casesPerSec),
        fmt(s.p50Ms, 2),
        fmt(s.p99Ms, 2),
        fmt(s.serverCpuPct),
        fmt(s.reqPerServerCpuSec),
        fmt(s.generatorCpuPct),
        fmt(s.requests),
        fmt(s.bad),
      ]),
    ),
  );
  log('');
  for (const c of comparisons) {
    log(
      `${c.name}: ${c.ratio.toFixed(3)}${c.target === undefined ? '' : ` (target >= ${c.target})`}  ${c.verdict}` +
        (Number.isFinite(c.cpuRatio) ? `   [per server CPU-second: ${c.cpuRatio.toFixed(3)}]` : ''),
    );
  }

  if (lineProfile) {
    const l = lineProfile;
    log('');
    log(`Line profile (issue 6 case: a* = 0.998, i = 30 deg, r_in = ISCO, r_out = 400 rg, q = 3, 300 log bins 1-9 keV, "standard"; ${l.threads} worker threads)`);
    log(
      table(
        ['measure', 'value', 'target'],
        [
          ['cold, first request after start-up (ms)', fmt(l.coldFirstMs), '<= 2000'],
          ['cold, median of 3 new geometries (ms)', fmt(l.coldMedianMs), '<= 2000'],
          ['rays per geometry', fmt(l.rays), ''],
          ['rays/s per core', fmt(l.raysPerSecPerCore), ''],
          ['warm, new emissivity: median / p90 (ms)', `${fmt(l.warmMedianMs, 1)} / ${fmt(l.warmP90Ms, 1)}`, '<= 20'],
          ['batch of 100 emissivities, median (ms)', fmt(l.batch100MedianMs), '<= 1000'],
          ['L1(standard, fine) / reply estimate', `${l.l1ToFine.toFixed(4)} / ${l.l1Estimate.toFixed(4)}`, '<= 0.01'],
          ['fine, cold (ms)', fmt(l.fineColdMs), ''],
          [`during fine traces: /healthz median / max (ms, n=${l.responsiveness.requests})`, `${fmt(l.responsiveness.healthzMedianMs, 1)} / ${fmt(l.responsiveness.healthzMaxMs, 1)}`, '<= 50'],
          ['during fine traces: /v1/radii median / max (ms)', `${fmt(l.responsiveness.radiiMedianMs, 1)} / ${fmt(l.responsiveness.radiiMaxMs, 1)}`, '<= 50'],
        ],
      ),
    );
  }

  const results = {
    lineProfile,
    generatedAt: new Date().toISOString(),
    node: process.version,
    cpus: cpus().length,
    cpuModel: cpus()[0]?.model,
    loadavgAtEnd: loadavg(),
    pinning: { pinned, note: pinNote, affinity },
    serverApp: serverApp === 'sources' ? 'sources under tsx' : `tsc build in ${serverApp}`,
    options: {
      rounds: opts.rounds,
      durationSec: opts.durationSec,
      batchDurationSec: opts.batchDurationSec,
      warmupSec: opts.warmupSec,
      connections: opts.connections,
      batchConnections: opts.batchConnections,
      pipelining: 1,
    },
    scenarios: Object.fromEntries(
      summary.map((s) => [
        s.scenario.name,
        {
          description: s.scenario.description,
          path: s.scenario.path,
          casesPerRequest: s.scenario.cases,
          connections: runConnections(opts, s.scenario),
          durationSec: runSeconds(opts, s.scenario),
          requestBytes: bodies.get(s.scenario.name)!.length,
          median: {
            rps: s.rps,
            casesPerSec: s.casesPerSec,
            p50Ms: s.p50Ms,
            p99Ms: s.p99Ms,
            serverCpuPct: s.serverCpuPct,
            reqPerServerCpuSec: s.reqPerServerCpuSec,
            generatorCpuPct: s.generatorCpuPct,
          },
          runs: runs.get(s.scenario.name),
        },
      ]),
    ),
    comparisons: comparisons.map((c) => ({ name: c.name, subject: c.subject, baseline: c.baseline, ratio: c.ratio, ratioPerServerCpuSecond: Number.isFinite(c.cpuRatio) ? c.cpuRatio : null, target: c.target ?? null, verdict: c.verdict })),
    failures,
    ok: failures.length === 0,
  };
  writeFileSync(opts.out, `${JSON.stringify(results, null, 2)}\n`);
  log(`\nresults written to ${opts.out}`);
  clearTimeout(watchdog);

  if (failures.length > 0) {
    process.stderr.write(`\nbench: FAIL: ${failures.length} problem(s):\n${failures.map((f) => `  - ${f}`).join('\n')}\n`);
    process.exit(1);
  }
  if (opts.strict && comparisons.some((c) => c.verdict === 'BELOW')) {
    process.stderr.write('bench: a ratio is below its target (--strict)\n');
    process.exit(2);
  }
  process.exit(0);
}

main().catch((err: unknown) => {
  current?.stop();
  killServerNow();
  die(`FAIL: ${err instanceof Error ? (err.stack ?? err.message) : String(err)}`);
});
