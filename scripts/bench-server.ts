/**
 * The server side of `npm run bench`: the real Lapse app, configured so that nothing but the work
 * itself is measured (no rate limiting, no load shedding, quiet logs), plus one comparison route.
 *
 *   POST /bench/bare  takes exactly the body the radii route takes, validated by the same TypeBox
 *                     schema (`CaseOrBatch(RadiiCase, BATCH_MAX)`), goes through the same hooks
 *                     (metrics, request id, etag, helmet), and answers a small constant object:
 *                     radii / bare is then the cost of the physics and of shaping its reply.
 *
 * Usage: tsx scripts/bench-server.ts [--port N] [--exit-on-stdin-close]
 *   --port N / BENCH_PORT=N   port on 127.0.0.1; 0 (default) lets the system choose.
 *   BENCH_LOG_LEVEL           'warn' (default) or 'silent' (or any pino level).
 *   --exit-on-stdin-close     exit when stdin closes: bench.ts uses it so that the server dies with
 *                             its parent even if the parent is killed with SIGKILL.
 *   BENCH_APP_DIR=DIR         load the app from a tsc build in DIR (DIR/server/app.js, ...) instead
 *                             of the TypeScript sources. Under tsx every source file is transformed
 *                             by esbuild with keepNames, which wraps each closure created at run time
 *                             in a `__name(...)` call (an Object.defineProperty): a cost the
 *                             production build (`node dist/server/start.js`) does not have.
 *                             bench.ts --compiled sets it.
 * Once listening it prints one line to stdout:
 *   LAPSE-BENCH-SERVER READY url=http://127.0.0.1:PORT pid=PID app=DIR|sources
 */
import { join, resolve } from 'node:path';
import { pathToFileURL } from 'node:url';
import { parseArgs } from 'node:util';
import type { Config } from '../server/config.js';

type AppModule = typeof import('../server/app.js');
type ConfigModule = typeof import('../server/config.js');
type SchemasModule = typeof import('../server/schemas.js');
type RadiiModule = typeof import('../routes/radii.js');

// bench.ts matches these two strings (it does not import this file, which starts a server on load).
const READY_PREFIX = 'LAPSE-BENCH-SERVER READY';
const BARE_PATH = '/bench/bare';

const LEVELS = ['fatal', 'error', 'warn', 'info', 'debug', 'trace', 'silent'] as const;
type Level = (typeof LEVELS)[number];

function fatal(message: string): never {
  process.stderr.write(`bench-server: ${message}\n`);
  process.exit(1);
}

async function main(): Promise<void> {
  const { values } = parseArgs({
    options: {
      port: { type: 'string' },
      'exit-on-stdin-close': { type: 'boolean', default: false },
    },
    strict: true,
  });
  const portText = values.port ?? process.env.BENCH_PORT ?? '0';
  const port = Number(portText);
  if (!/^\d+$/.test(portText) || port > 65535) fatal(`invalid port ${JSON.stringify(portText)}`);
  const levelText = process.env.BENCH_LOG_LEVEL ?? 'warn';
  if (!(LEVELS as readonly string[]).includes(levelText)) fatal(`invalid BENCH_LOG_LEVEL ${JSON.stringify(levelText)}; one of ${LEVELS.join(', ')}`);

  // The same four modules, from the sources or from a compiled build.
  const appDir = process.env.BENCH_APP_DIR;
  const fromBuild = <M>(rel: string) => import(pathToFileURL(join(resolve(appDir!), rel)).href) as Promise<M>;
  const [{ buildApp }, { makeConfig }, { CaseOrBatch }, { RadiiCase }] = appDir
    ? await Promise.all([
        fromBuild<AppModule>('server/app.js'),
        fromBuild<ConfigModule>('server/config.js'),
        fromBuild<SchemasModule>('server/schemas.js'),
        fromBuild<RadiiModule>('routes/radii.js'),
      ])
    : await Promise.all([import('../server/app.js'), import('../server/config.js'), import('../server/schemas.js'), import('../routes/radii.js')]);

  const config: Config = makeConfig({
    HOST: '127.0.0.1',
    PORT: port,
    LOG_LEVEL: levelText as Level,
    RATE_LIMIT_MAX: 0,
    MAX_EVENT_LOOP_DELAY_MS: 0,
  });
  const app = await buildApp(config);

  const bareReply = { ok: true, route: 'bare' } as const;
  app.post(
    BARE_PATH,
    { schema: { hide: true, body: CaseOrBatch(RadiiCase, config.BATCH_MAX) } },
    async () => bareReply,
  );

  let closing = false;
  const stop = (why: string) => {
    if (closing) return;
    closing = true;
    if (why !== 'stdin closed') app.log.info({ why }, 'bench-server stopping');
    const force = setTimeout(() => process.exit(0), 3000);
    force.unref();
    app.close().then(
      () => process.exit(0),
      () => process.exit(1),
    );
  };
  process.on('SIGTERM', () => stop('SIGTERM'));
  process.on('SIGINT', () => stop('SIGINT'));
  if (values['exit-on-stdin-close']) {
    process.stdin.on('end', () => stop('stdin closed'));
    process.stdin.on('close', () => stop('stdin closed'));
    process.stdin.on('error', () => stop('stdin closed'));
    process.stdin.resume();
  }

  await app.listen({ host: config.HOST, port: config.PORT });
  // As server/start.ts does: the ray-tracing threads start (and warm up) before the ready line.
  await app.lapse.rays.warmUp();
  const address = app.server.address();
  if (address === null || typeof address === 'string') fatal(`unexpected listen address ${String(address)}`);
  process.stdout.write(`${READY_PREFIX} url=http://127.0.0.1:${address.port} pid=${process.pid} app=${appDir ? resolve(appDir) : 'sources'}\n`);
}

main().catch((err: unknown) => fatal(err instanceof Error ? (err.stack ?? err.message) : String(err)));
