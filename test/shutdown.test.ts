/**
 * Graceful shutdown of the real process (server/start.ts): on SIGTERM the service stops accepting
 * connections, finishes the requests it has in flight, says 503 on /readyz meanwhile, and exits 0
 * within SHUTDOWN_GRACE_MS; a bad environment variable stops start-up with exit code 1 and one line
 * on stderr naming the variable.
 *
 * How the server is run: `node --import tsx server/start.ts`, one Node process, rather than
 * `npm run build` + `node dist/server/start.js`:
 *   - the build writes dist/ inside a checkout that others edit and build at the same time (a
 *     half-written dist/ would make this test flaky), and tsc takes ~10 s on the shared cores,
 *     while tsx starts the same source in ~1.5 s;
 *   - it is one process (no npm/npx/tsx-CLI wrapper), so SIGTERM reaches the server's own handler
 *     and the exit code observed is the server's own; dist/server/start.js is this same file
 *     compiled, with the same start-up and signal handling.
 * The port is PORT=0 (the kernel picks a free one), read back from the pino line
 * "Server listening at http://127.0.0.1:<port>" (LOG_LEVEL=info, JSON on stdout).
 *
 * Slow requests are batches of Monte Carlo radii cases (100 000 samples each, spin and mass
 * uncertain); the batch size is calibrated at run time so one request takes ~0.8 s here.
 * MAX_EVENT_LOOP_DELAY_MS=0: load shedding (503 under a blocked event loop) is not what is tested.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import http from 'node:http';
import net from 'node:net';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, afterEach, describe, expect, it } from 'vitest';
import { ConfigSchema } from '../server/config.js';

const ROOT = join(dirname(fileURLToPath(import.meta.url)), '..');
const GRACE_MS = 8000;
/** Time allowed beyond the grace period for the process to exit (process teardown, slow machine). */
const EXIT_MARGIN_MS = 3000;
const TARGET_REQUEST_MS = 800;

// ------------------------------------------------------------------ child process harness

type LogLine = Record<string, unknown> & { msg?: string; reqId?: string };

interface Exit {
  code: number | null;
  signal: NodeJS.Signals | null;
  at: number;
}

class ServerProcess {
  readonly proc: ChildProcess;
  readonly logs: LogLine[] = [];
  stdout = '';
  stderr = '';
  readonly exited: Promise<Exit>;
  exit: Exit | undefined;
  private pending = '';
  private waiters: Array<{ pred: (l: LogLine) => boolean; resolve: (l: LogLine) => void }> = [];

  constructor(env: Record<string, string>) {
    const base = { ...process.env };
    // Only this test's configuration: nothing inherited from the shell or the runner.
    for (const k of Object.keys(ConfigSchema.properties)) delete base[k];
    this.proc = spawn(process.execPath, ['--import', 'tsx', 'server/start.ts'], {
      cwd: ROOT,
      env: { ...base, ...env },
      stdio: ['ignore', 'pipe', 'pipe'],
    });
    children.add(this);
    this.proc.stdout!.setEncoding('utf8').on('data', (chunk: string) => this.onStdout(chunk));
    this.proc.stderr!.setEncoding('utf8').on('data', (chunk: string) => (this.stderr += chunk));
    this.exited = new Promise((resolve) => {
      this.proc.on('exit', (code, signal) => {
        this.exit = { code, signal, at: Date.now() };
        children.delete(this);
        resolve(this.exit);
      });
    });
  }

  private onStdout(chunk: string): void {
    this.stdout += chunk;
    this.pending += chunk;
    let nl: number;
    while ((nl = this.pending.indexOf('\n')) >= 0) {
      const line = this.pending.slice(0, nl);
      this.pending = this.pending.slice(nl + 1);
      let parsed: LogLine;
      try {
        parsed = JSON.parse(line) as LogLine;
      } catch {
        continue;
      }
      this.logs.push(parsed);
      this.waiters = this.waiters.filter((w) => {
        if (!w.pred(parsed)) return true;
        w.resolve(parsed);
        return false;
      });
    }
  }

  /** Resolves with the first log line matching `pred` (already seen or to come). */
  waitLog(pred: (l: LogLine) => boolean, what: string, timeoutMs = 15_000): Promise<LogLine> {
    const seen = this.logs.find(pred);
    if (seen) return Promise.resolve(seen);
    return new Promise((resolve, reject) => {
      const timer = setTimeout(() => reject(new Error(`timed out after ${timeoutMs} ms waiting for log: ${what}\nstdout:\n${this.stdout.slice(-3000)}\nstderr:\n${this.stderr.slice(-2000)}`)), timeoutMs);
      void this.exited.then(() => {
        clearTimeout(timer);
        reject(new Error(`process exited (${JSON.stringify(this.exit)}) while waiting for log: ${what}\nstdout:\n${this.stdout.slice(-3000)}\nstderr:\n${this.stderr.slice(-2000)}`));
      });
      this.waiters.push({
        pred,
        resolve: (l) => {
          clearTimeout(timer);
          resolve(l);
        },
      });
    });
  }

  /** Waits for "Server listening at http://host:port" and returns the port. */
  async port(): Promise<number> {
    const line = await this.waitLog((l) => /Server listening at http:\/\/127\.0\.0\.1:\d+/.test(String(l.msg ?? '')), 'server listening');
    return Number(/:(\d+)\s*$/.exec(String(line.msg))![1]);
  }

  async exitWithin(ms: number): Promise<Exit> {
    let timer: NodeJS.Timeout | undefined;
    const timeout = new Promise<never>((_, reject) => {
      timer = setTimeout(() => reject(new Error(`process still running ${ms} ms later\nstdout:\n${this.stdout.slice(-3000)}\nstderr:\n${this.stderr.slice(-2000)}`)), ms);
    });
    try {
      return await Promise.race([this.exited, timeout]);
    } finally {
      clearTimeout(timer);
    }
  }
}

const children = new Set<ServerProcess>();

async function killAll(): Promise<void> {
  const left = [...children];
  for (const c of left) {
    if (c.exit === undefined && c.proc.pid !== undefined) c.proc.kill('SIGKILL');
  }
  await Promise.all(left.map((c) => c.exited));
}
afterEach(killAll);
afterAll(killAll);

function serverEnv(extra: Record<string, string> = {}): Record<string, string> {
  return {
    PORT: '0',
    HOST: '127.0.0.1',
    LOG_LEVEL: 'info',
    SHUTDOWN_GRACE_MS: String(GRACE_MS),
    RATE_LIMIT_MAX: '0',
    MAX_EVENT_LOOP_DELAY_MS: '0',
    ...extra,
  };
}

// ------------------------------------------------------------------ HTTP helpers

interface Reply {
  status: number;
  headers: http.IncomingHttpHeaders;
  text: string;
  ms: number;
}

function httpRequest(port: number, opts: { method: string; path: string; body?: string; id?: string; agent?: http.Agent | false }): Promise<Reply> {
  const started = Date.now();
  return new Promise((resolve, reject) => {
    const headers: Record<string, string | number> = {};
    if (opts.body !== undefined) {
      headers['content-type'] = 'application/json';
      headers['content-length'] = Buffer.byteLength(opts.body);
    }
    if (opts.id) headers['x-request-id'] = opts.id;
    const req = http.request({ host: '127.0.0.1', port, method: opts.method, path: opts.path, headers, agent: opts.agent ?? false }, (res) => {
      let text = '';
      res.setEncoding('utf8');
      res.on('data', (c: string) => (text += c));
      res.on('end', () => resolve({ status: res.statusCode ?? 0, headers: res.headers, text, ms: Date.now() - started }));
      res.on('error', reject);
    });
    req.on('error', reject);
    req.end(opts.body);
  });
}

/** Resolves with the error code of a failed TCP connect, or "connected". */
function tryConnect(port: number): Promise<string> {
  return new Promise((resolve) => {
    const s = net.connect({ host: '127.0.0.1', port });
    s.once('connect', () => {
      s.destroy();
      resolve('connected');
    });
    s.once('error', (e: NodeJS.ErrnoException) => resolve(e.code ?? 'error'));
  });
}

/** The HTTP/1.1 responses in a raw byte stream (Content-Length or chunked bodies). */
function parseResponses(raw: Buffer): Array<{ status: number; headers: Record<string, string>; body: string }> {
  const out: Array<{ status: number; headers: Record<string, string>; body: string }> = [];
  let at = 0;
  while (at < raw.length) {
    const headEnd = raw.indexOf('\r\n\r\n', at);
    if (headEnd < 0) break;
    const [statusLine, ...headerLines] = raw.subarray(at, headEnd).toString('latin1').split('\r\n');
    const status = Number(/^HTTP\/1\.[01] (\d{3})/.exec(statusLine)?.[1]);
    const headers: Record<string, string> = {};
    for (const h of headerLines) {
      const i = h.indexOf(':');
      headers[h.slice(0, i).trim().toLowerCase()] = h.slice(i + 1).trim();
    }
    let p = headEnd + 4;
    let body: Buffer;
    if (headers['content-length'] !== undefined) {
      const n = Number(headers['content-length']);
      body = raw.subarray(p, p + n);
      p += n;
    } else if (/chunked/i.test(headers['transfer-encoding'] ?? '')) {
      const parts: Buffer[] = [];
      for (;;) {
        const lineEnd = raw.indexOf('\r\n', p);
        const size = parseInt(raw.subarray(p, lineEnd).toString('latin1'), 16);
        p = lineEnd + 2;
        if (!(size > 0)) {
          p += 2;
          break;
        }
        parts.push(raw.subarray(p, p + size));
        p += size + 2;
      }
      body = Buffer.concat(parts);
    } else {
      body = raw.subarray(p);
      p = raw.length;
    }
    out.push({ status, headers, body: body.toString('utf8') });
    at = p;
  }
  return out;
}

// ------------------------------------------------------------------ the slow request

const MC_CASE = {
  body: { mass: { value: 10, unit: 'solMass', uncertainty: 1 }, spin: { value: 0.7, uncertainty: 0.05 } },
  uncertainty_method: { kind: 'monte-carlo', samples: 100_000, seed: 7 },
};

function slowBody(n: number, tag: number): string {
  // Distinct seeds: no cache or ETag can short-cut the work.
  return JSON.stringify({ items: Array.from({ length: n }, (_, i) => ({ ...MC_CASE, uncertainty_method: { ...MC_CASE.uncertainty_method, seed: tag * 1000 + i } })) });
}

/** Batch size for which one request takes about TARGET_REQUEST_MS on this machine now. */
async function calibrate(port: number): Promise<number> {
  // Two warm-ups (the first requests run before the JIT has settled and would overestimate the
  // cost), then the fastest of two timings, so that a request is not shorter than intended.
  await httpRequest(port, { method: 'POST', path: '/v1/radii', body: slowBody(1, 0) });
  await httpRequest(port, { method: 'POST', path: '/v1/radii', body: slowBody(1, 2) });
  let best = Infinity;
  for (const tag of [1, 3]) {
    const r = await httpRequest(port, { method: 'POST', path: '/v1/radii', body: slowBody(1, tag) });
    expect(r.status, r.text).toBe(200);
    best = Math.min(best, r.ms);
  }
  return Math.max(2, Math.min(24, Math.round(TARGET_REQUEST_MS / Math.max(1, best))));
}

/** A 200 whose body is the complete batch reply: every item computed, Content-Length honoured. */
function expectFullBatch(r: { status: number; headers: Record<string, string | string[] | undefined>; text?: string; body?: string }, n: number, label: string): void {
  const text = r.text ?? r.body ?? '';
  expect(r.status, `${label}: ${text.slice(0, 300)}`).toBe(200);
  if (r.headers['content-length'] !== undefined) expect(Buffer.byteLength(text), `${label}: body length`).toBe(Number(r.headers['content-length']));
  const doc = JSON.parse(text) as { items: Array<Record<string, unknown>>; count: number };
  expect(doc.count, label).toBe(n);
  expect(doc.items, label).toHaveLength(n);
  for (const item of doc.items) {
    expect(item.error, `${label}: an item failed`).toBeUndefined();
    expect((item.isco as { prograde: { p50?: number } }).prograde.p50, `${label}: Monte Carlo percentiles present`).toBeTypeOf('number');
  }
}

// ------------------------------------------------------------------ tests

describe('graceful shutdown on SIGTERM (real process)', () => {
  it('finishes every request in flight with 200 and a full body, then exits 0 within SHUTDOWN_GRACE_MS; new connections are refused', async () => {
    const server = new ServerProcess(serverEnv());
    const port = await server.port();
    expect((await httpRequest(port, { method: 'GET', path: '/readyz' })).status).toBe(200);
    const n = await calibrate(port);

    // Keep-alive clients, as a load balancer or ingress would be.
    const agent = new http.Agent({ keepAlive: true, maxSockets: 10 });
    try {
      const answered: Record<string, number> = {};
      const send = (id: string, tag: number) =>
        httpRequest(port, { method: 'POST', path: '/v1/radii', body: slowBody(n, tag), id, agent }).then(
          (r) => {
            answered[id] = Date.now();
            return { ...r, id };
          },
          (e: Error) => ({ id, error: e }),
        );
      // drain-1 is being computed (the event loop is busy) when drain-2 and drain-3 are sent in
      // full and SIGTERM follows: the server has every byte of all three before the signal.
      const first = send('drain-1', 10);
      await server.waitLog((l) => l.reqId === 'drain-1' && l.msg === 'incoming request', 'drain-1 received');
      await new Promise((r) => setTimeout(r, 50));
      const sentAt = Date.now();
      const later = ['drain-2', 'drain-3'].map((id, i) => send(id, 11 + i));
      // Give the kernel the two connections and their bodies (the server cannot read them yet).
      await new Promise((r) => setTimeout(r, 100));
      const signalled = Date.now();
      server.proc.kill('SIGTERM');

      const results = await Promise.all([first, ...later]);
      for (const r of results) {
        expect('error' in r ? `${r.id}: ${String(r.error)}` : '', 'request failed at the socket level').toBe('');
        if (!('error' in r)) expectFullBatch(r, n, r.id);
      }
      expect(answered['drain-1'], `drain-1 was still being computed when SIGTERM was sent (sent drain-2/3 at +${sentAt - signalled} ms)`).toBeGreaterThan(signalled);
      const exit = await server.exitWithin(GRACE_MS + EXIT_MARGIN_MS);
      expect(exit, `exit after SIGTERM; stdout tail:\n${server.stdout.slice(-1500)}`).toMatchObject({ code: 0, signal: null });
      expect(exit.at - signalled).toBeLessThan(GRACE_MS + EXIT_MARGIN_MS);
      expect(server.logs.some((l) => l.msg === 'shut down cleanly')).toBe(true);
      expect(await tryConnect(port)).toBe('ECONNREFUSED');
    } finally {
      agent.destroy();
    }
  });

  it('a request still uploading its body when SIGTERM arrives completes with 200; the process then exits 0 promptly, refusing new connections meanwhile', async () => {
    const server = new ServerProcess(serverEnv());
    const port = await server.port();
    const n = await calibrate(port);
    const body = slowBody(n, 20);
    const agent = new http.Agent({ keepAlive: true });
    try {
      const started = Date.now();
      let sendRest: () => void = () => undefined;
      const reply = new Promise<Reply>((resolve, reject) => {
        const req = http.request(
          { host: '127.0.0.1', port, method: 'POST', path: '/v1/radii', agent, headers: { 'content-type': 'application/json', 'content-length': Buffer.byteLength(body), 'x-request-id': 'upload-1' } },
          (res) => {
            let text = '';
            res.setEncoding('utf8');
            res.on('data', (c: string) => (text += c));
            res.on('end', () => resolve({ status: res.statusCode ?? 0, headers: res.headers, text, ms: Date.now() - started }));
          },
        );
        req.on('error', reject);
        req.write(body.slice(0, 64));
        sendRest = () => req.end(body.slice(64));
      });
      await server.waitLog((l) => l.reqId === 'upload-1' && l.msg === 'incoming request', 'upload-1 received');
      const signalled = Date.now();
      server.proc.kill('SIGTERM');
      await server.waitLog((l) => /shutting down/.test(String(l.msg ?? '')), 'shutting down');

      // Draining: /readyz never says ready again, and new connections are soon refused.
      const probes: string[] = [];
      for (let i = 0; i < 40; i++) {
        const r = await httpRequest(port, { method: 'GET', path: '/readyz' }).then(
          (x) => String(x.status),
          (e: NodeJS.ErrnoException) => e.code ?? 'error',
        );
        probes.push(r);
        if (r === 'ECONNREFUSED') break;
        await new Promise((res) => setTimeout(res, 50));
      }
      expect(probes, 'readyz during the drain').not.toContain('200');
      expect(probes[probes.length - 1], `new connections during the drain: ${probes.join(', ')}`).toBe('ECONNREFUSED');

      sendRest();
      const r = await reply;
      expectFullBatch(r, n, 'upload-1');
      const answered = Date.now();
      const exit = await server.exitWithin(GRACE_MS + EXIT_MARGIN_MS);
      expect(exit, `exit after SIGTERM (answered ${answered - signalled} ms after the signal, exited ${exit.at - answered} ms after the answer); stdout tail:\n${server.stdout.slice(-1500)}`).toMatchObject({ code: 0, signal: null });
      // Nothing is left to wait for once the last reply is out: well before the grace period ends.
      expect(exit.at - answered, 'exit delay after the last reply').toBeLessThan(GRACE_MS / 2);
    } finally {
      agent.destroy();
    }
  });

  it('a request pipelined behind an in-flight one during the drain: the in-flight one gets 200; the pipelined /readyz is never "ready" and, if answered, is a 503 problem document with Retry-After', async () => {
    // HTTP/1.1 lets a server close the connection after the in-flight reply (Connection: close)
    // and leave a pipelined request unanswered, for the client to retry elsewhere; what it must
    // not do is answer "ready", or answer with something other than a problem document.
    const server = new ServerProcess(serverEnv());
    const port = await server.port();
    const body = slowBody(1, 30);
    const sock = net.connect({ host: '127.0.0.1', port });
    const chunks: Buffer[] = [];
    const closed = new Promise<void>((resolve) => {
      sock.on('data', (c: Buffer) => chunks.push(c));
      sock.on('close', () => resolve());
      sock.on('error', () => resolve());
    });
    try {
      await new Promise<void>((resolve, reject) => {
        sock.once('connect', () => resolve());
        sock.once('error', reject);
      });
      sock.write(
        `POST /v1/radii HTTP/1.1\r\nHost: 127.0.0.1\r\nContent-Type: application/json\r\nContent-Length: ${Buffer.byteLength(body)}\r\nX-Request-Id: pipe-1\r\n\r\n${body.slice(0, 64)}`,
      );
      await server.waitLog((l) => l.reqId === 'pipe-1' && l.msg === 'incoming request', 'pipe-1 received');
      server.proc.kill('SIGTERM');
      await server.waitLog((l) => /shutting down/.test(String(l.msg ?? '')), 'shutting down');
      sock.write(`${body.slice(64)}GET /readyz HTTP/1.1\r\nHost: 127.0.0.1\r\nX-Request-Id: pipe-2\r\n\r\n`);
      await closed;
      const raw = Buffer.concat(chunks);
      const responses = parseResponses(raw);
      expect(responses.length, raw.toString('utf8').slice(0, 2000)).toBeGreaterThanOrEqual(1);
      expect(responses.length).toBeLessThanOrEqual(2);
      expectFullBatch(responses[0], 1, 'pipe-1');
      if (responses.length === 2) {
        const ready = responses[1];
        expect(ready.status, `readyz while draining: ${JSON.stringify(ready)}`).toBe(503);
        expect(ready.headers['content-type'], `readyz while draining: ${JSON.stringify(ready)}`).toMatch(/^application\/problem\+json/);
        const doc = JSON.parse(ready.body) as Record<string, unknown>;
        expect(doc).toMatchObject({ status: 503 });
        expect(typeof doc.type).toBe('string');
        expect(typeof doc.title).toBe('string');
        expect(typeof doc.detail).toBe('string');
        expect(ready.headers['retry-after'], `Retry-After on a 503: ${JSON.stringify(ready.headers)}`).toBeTruthy();
      } else {
        expect(responses[0].headers.connection, 'closing after the reply is announced').toMatch(/close/i);
      }
      const exit = await server.exitWithin(GRACE_MS + EXIT_MARGIN_MS);
      expect(exit).toMatchObject({ code: 0, signal: null });
    } finally {
      sock.destroy();
    }
  });
});

describe('start-up configuration errors', () => {
  it.each([
    ['PORT', 'abc'],
    ['LOG_LEVEL', 'loud'],
  ])('%s=%s: exit code 1 and a one-line stderr message naming the variable', async (name, value) => {
    const server = new ServerProcess(serverEnv({ [name]: value }));
    const exit = await server.exitWithin(15_000);
    expect(exit, `stderr: ${server.stderr}`).toMatchObject({ code: 1, signal: null });
    const lines = server.stderr.split('\n').filter((l) => l.trim() !== '');
    expect(lines, `stderr: ${server.stderr}`).toHaveLength(1);
    expect(lines[0]).toContain(name);
    expect(lines[0]).toContain(value);
    expect(lines[0]).not.toMatch(/\bat .+:\d+:\d+/); // no stack trace
    expect(server.logs.some((l) => /listening/.test(String(l.msg ?? ''))), 'must not start listening').toBe(false);
  });
});
