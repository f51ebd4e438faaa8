/**
 * The ray-tracing service: a pool of worker threads (piscina) for the compute-heavy physics, an
 * LRU cache of line-profile transfer data per geometry (bounded in bytes), de-duplication of
 * identical traces in flight, cancellation (a request whose client is gone or whose time is up
 * aborts its task, and piscina replaces the worker), and a bounded queue (503 when full).
 */
import { availableParallelism } from 'node:os';
import { fileURLToPath } from 'node:url';
import { Piscina } from 'piscina';
import { LRUCache } from 'lru-cache';
import { ACCURACY, mergeTransfers, type DiskGeometry, type Transfer } from '../physics/lineprofile.js';
import type { FastifyReply, FastifyRequest } from 'fastify';
import type { Config } from './config.js';
import { problem, sendProblem } from './problems.js';
import type { BinJob, BinResult, RayTask, SharedTransfer, TraceReply } from './ray-worker.js';

/** A task that could not run: the queue is full, the time is up, or the client went away. */
export class RayServiceError extends Error {
  constructor(
    readonly reason: 'queue-full' | 'timeout' | 'aborted' | 'budget',
    message: string,
    readonly limit?: number,
  ) {
    super(message);
  }
}

export interface CachedTransfer extends SharedTransfer {
  rays: number;
  gMin: number;
  gMax: number;
  drift: number;
  bytes: number;
}

/** Copies typed arrays into SharedArrayBuffers so that workers read them without a copy. */
function share<T extends Float64Array | Int32Array>(a: T): T {
  const buf = new SharedArrayBuffer(a.byteLength);
  const out = (a instanceof Int32Array ? new Int32Array(buf) : new Float64Array(buf)) as T;
  out.set(a);
  return out;
}

function toShared(t: Transfer): CachedTransfer {
  const cells = (c: Transfer['cells']) => ({ area: share(c.area), gLo: share(c.gLo), gHi: share(c.gHi), corners: share(c.corners) });
  const shared = { nodeR: share(t.nodeR), nodeG: share(t.nodeG), nodeMu: share(t.nodeMu), nodeLnR: share(t.nodeLnR), cells: cells(t.cells), coarse: cells(t.coarse) };
  const bytes =
    shared.nodeR.byteLength * 4 +
    [shared.cells, shared.coarse].reduce((n, c) => n + c.area.byteLength * 3 + c.corners.byteLength, 0);
  return { ...shared, rays: t.rays, gMin: t.gMin, gMax: t.gMax, drift: t.drift, bytes };
}

export function geometryKey(g: DiskGeometry): string {
  // full double precision: nearby geometries are different geometries
  return `${g.a}|${g.inclination}|${g.rIn}|${g.rOut}|${g.accuracy}`;
}

interface InFlight {
  promise: Promise<CachedTransfer>;
  controller: AbortController;
  waiters: number;
}

export class RayService {
  private pool?: Piscina;
  private readonly cache: LRUCache<string, CachedTransfer>;
  private readonly inflight = new Map<string, InFlight>();
  readonly threads: number;
  /** Counters for /metrics and tests: geometries traced, cache hits, requests cancelled or timed out, tasks refused. */
  readonly stats = { traces: 0, cacheHits: 0, aborted: 0, timeouts: 0, rejected: 0 };

  constructor(private readonly config: Config) {
    this.threads = config.RAY_WORKERS > 0 ? config.RAY_WORKERS : Math.max(1, availableParallelism());
    this.cache = new LRUCache<string, CachedTransfer>({
      maxSize: Math.max(1, config.TRANSFER_CACHE_MB) * 1024 * 1024,
      sizeCalculation: (t) => Math.max(1, t.bytes),
    });
  }

  /** The pool, started on first use (an app that never traces starts no threads). */
  private workers(): Piscina {
    if (!this.pool) {
      const here = fileURLToPath(import.meta.url);
      const fromSource = here.endsWith('.ts');
      this.pool = new Piscina({
        filename: new URL(fromSource ? './ray-worker.ts' : './ray-worker.js', import.meta.url).href,
        // Running from TypeScript sources (tests, `npm run dev`): workers load them through tsx.
        ...(fromSource ? { execArgv: [...process.execArgv.filter((a) => !a.startsWith('--inspect')), '--import', 'tsx'] } : {}),
        minThreads: this.threads,
        maxThreads: this.threads,
        maxQueue: this.config.RAY_QUEUE_MAX,
        idleTimeout: 60_000,
        // Lower the worker threads' scheduling priority (Linux nice +10, through piscina's
        // optional @napi-rs/nice): when tracing saturates the cores, the event loop still gets
        // the CPU first, so other requests keep answering quickly.
        niceIncrement: 10,
      });
    }
    return this.pool;
  }

  /** Runs one task on the pool under `signal`; maps queue-full and aborts to RayServiceError. */
  async run<R>(task: RayTask, signal?: AbortSignal): Promise<R> {
    const pool = this.workers();
    if (signal?.aborted) throw this.abortError(signal);
    try {
      return (await pool.run(task, { signal: signal ?? null })) as R;
    } catch (err) {
      if (signal?.aborted) throw this.abortError(signal);
      if (err instanceof Error && /queue is at limit/i.test(err.message)) {
        this.stats.rejected++;
        throw new RayServiceError('queue-full', `the ray-tracing queue is full (RAY_QUEUE_MAX = ${this.config.RAY_QUEUE_MAX} tasks waiting); retry shortly`);
      }
      throw err;
    }
  }

  /** Signals already counted in stats (a request's signal is seen by each of its tasks). */
  private readonly counted = new WeakSet<AbortSignal>();

  private abortError(signal: AbortSignal): RayServiceError {
    const reason = signal.reason as { name?: string } | undefined;
    const timeout = reason?.name === 'TimeoutError';
    if (!this.counted.has(signal)) {
      this.counted.add(signal);
      if (timeout) this.stats.timeouts++;
      else this.stats.aborted++;
    }
    if (timeout) return new RayServiceError('timeout', `the computation did not finish within ${this.config.RAY_TIMEOUT_MS} ms (RAY_TIMEOUT_MS)`, this.config.RAY_TIMEOUT_MS);
    return new RayServiceError('aborted', 'the request was cancelled');
  }

  /** The cached transfer of a geometry, if any (counts as a hit). */
  cached(g: DiskGeometry): CachedTransfer | undefined {
    const hit = this.cache.get(geometryKey(g));
    if (hit) this.stats.cacheHits++;
    return hit;
  }

  /** Whether a geometry is cached or being traced (so it costs no new rays). */
  has(g: DiskGeometry): boolean {
    const key = geometryKey(g);
    return this.cache.has(key) || this.inflight.has(key);
  }

  /**
   * The transfer data of a geometry: from the cache, from a trace already in flight, or traced
   * now in one part per worker thread. The trace is aborted only when every request waiting for
   * it has gone.
   */
  async transfer(g: DiskGeometry, signal: AbortSignal): Promise<{ transfer: CachedTransfer; cached: boolean }> {
    const key = geometryKey(g);
    const hit = this.cached(g);
    if (hit) return { transfer: hit, cached: true };
    let job = this.inflight.get(key);
    if (!job) {
      const controller = new AbortController();
      this.counted.add(controller.signal); // internal: its waiters' own signals are the ones counted
      const parts = this.threads;
      const maxRays = Math.ceil(ACCURACY[g.accuracy].maxRays / parts) + 4000;
      this.stats.traces++;
      const promise = Promise.all(
        Array.from({ length: parts }, (_, index) =>
          this.run<TraceReply>({ kind: 'trace', geometry: g, part: { index, of: parts }, maxRays }, controller.signal),
        ),
      ).then((replies) => {
        const over = replies.find((r) => !r.ok);
        if (over && !over.ok) throw new RayServiceError('budget', `the geometry needs more than ${over.budget * parts} rays`, over.budget * parts);
        const t = toShared(mergeTransfers(replies.map((r) => (r as { ok: true; transfer: Transfer }).transfer)));
        this.cache.set(key, t);
        return t;
      });
      job = { promise, controller, waiters: 0 };
      const cur = job;
      this.inflight.set(key, job);
      promise.then(
        () => this.inflight.delete(key),
        () => {
          if (this.inflight.get(key) === cur) this.inflight.delete(key);
        },
      );
    }
    const cur = job;
    cur.waiters++;
    let onAbort: (() => void) | undefined;
    const aborted = new Promise<never>((_, reject) => {
      onAbort = () => {
        cur.waiters--;
        if (cur.waiters <= 0) cur.controller.abort(signal.reason);
        reject(this.abortError(signal));
      };
      if (signal.aborted) onAbort();
      else signal.addEventListener('abort', onAbort, { once: true });
    });
    try {
      return { transfer: await Promise.race([cur.promise, aborted]), cached: false };
    } catch (err) {
      // the shared trace failed because its controller was aborted: report this request's reason
      if (signal.aborted) throw this.abortError(signal);
      throw err;
    } finally {
      if (!signal.aborted) cur.waiters--;
      signal.removeEventListener('abort', onAbort!);
      aborted.catch(() => undefined);
    }
  }

  /** Bins line profiles of one geometry, split over the worker threads. */
  async bin(t: CachedTransfer, jobs: BinJob[], signal: AbortSignal): Promise<BinResult[]> {
    const shared: SharedTransfer = { nodeR: t.nodeR, nodeG: t.nodeG, nodeMu: t.nodeMu, nodeLnR: t.nodeLnR, cells: t.cells, coarse: t.coarse };
    const chunks = Math.min(this.threads, jobs.length);
    const size = Math.ceil(jobs.length / chunks);
    const parts = await Promise.all(
      Array.from({ length: chunks }, (_, k) => this.run<BinResult[]>({ kind: 'bin', transfer: shared, jobs: jobs.slice(k * size, (k + 1) * size) }, signal)),
    );
    return parts.flat();
  }

  /**
   * Starts the worker threads and runs one small trace on each (compiling the tracer), so that the
   * first real request does not pay for start-up. Nothing is cached.
   */
  async warmUp(): Promise<void> {
    const geometry: DiskGeometry = { a: 0.5, inclination: 0.5, rIn: 6, rOut: 20, accuracy: 'fast' };
    await Promise.all(
      Array.from({ length: this.threads }, (_, index) =>
        this.run({ kind: 'trace', geometry, part: { index, of: this.threads }, maxRays: ACCURACY.fast.maxRays }, AbortSignal.timeout(30_000)),
      ),
    );
  }

  /** Calls an exported function of a worker-side module (see ray-worker.ts CALLABLE). */
  call<R>(module: string, name: string, args: unknown[], signal: AbortSignal): Promise<R> {
    return this.run<R>({ kind: 'call', module, name, args }, signal);
  }

  get cacheEntries(): number {
    return this.cache.size;
  }

  /** Tasks waiting for a thread. */
  get queued(): number {
    return this.pool?.queueSize ?? 0;
  }

  async close(): Promise<void> {
    for (const job of this.inflight.values()) job.controller.abort(new Error('shutting down'));
    if (this.pool) await this.pool.destroy();
    this.pool = undefined;
  }
}

/**
 * The abort signal of a request's pool tasks: the client closing the connection before the reply,
 * or RAY_TIMEOUT_MS passing.
 */
export function requestSignal(reply: FastifyReply, config: Config): AbortSignal {
  const gone = new AbortController();
  reply.raw.on('close', () => {
    if (!reply.raw.writableFinished) gone.abort(new Error('client closed the connection'));
  });
  return AbortSignal.any([gone.signal, AbortSignal.timeout(config.RAY_TIMEOUT_MS)]);
}

/** The 503 problem reply for a pool task that could not run (queue full, time up, cancelled). */
export function sendRayServiceError(reply: FastifyReply, request: FastifyRequest, err: RayServiceError) {
  let p;
  if (err.reason === 'aborted') {
    request.log.info('request cancelled by the client');
    p = problem(503, 'the request was cancelled', undefined, 'cancelled');
  } else if (err.reason === 'timeout') {
    p = problem(503, `${err.message}: use a lower accuracy, fewer geometries per request, or retry when the service is less busy`, undefined, 'compute-timeout');
  } else {
    p = problem(503, err.message, undefined, 'overloaded');
  }
  return sendProblem(reply, p, request, 1);
}
