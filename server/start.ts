/**
 * Start-up: read and validate the configuration (a bad value stops start-up with a one-line
 * message and exit code 1), serve, and shut down gracefully on SIGTERM/SIGINT: mark not ready,
 * stop accepting connections, let in-flight requests finish, exit 0 within SHUTDOWN_GRACE_MS.
 */
import { ConfigError, loadConfig, type Config } from './config.js';
import { buildApp } from './app.js';

async function main(): Promise<void> {
  let config: Config;
  try {
    config = loadConfig();
  } catch (err) {
    if (err instanceof ConfigError) {
      process.stderr.write(`lapse: ${err.message}\n`);
      process.exit(1);
    }
    throw err;
  }
  const app = await buildApp(config);
  let stopping = false;
  const stop = (signal: NodeJS.Signals) => {
    if (stopping) return;
    stopping = true;
    app.lapse.draining = true;
    app.log.info({ signal }, 'shutting down: finishing in-flight requests');
    const timer = setTimeout(() => {
      app.log.error({ grace_ms: config.SHUTDOWN_GRACE_MS }, 'grace period over: exiting with requests still open');
      process.exit(1);
    }, config.SHUTDOWN_GRACE_MS);
    timer.unref();
    // A short pause before closing the listener lets requests already queued on accepted
    // connections be read and answered instead of reset.
    const closing = new Promise((resolve) => setTimeout(resolve, Math.min(250, config.SHUTDOWN_GRACE_MS / 4)));
    closing.then(() => app.close()).then(
      () => {
        app.log.info('shut down cleanly');
        process.exit(0);
      },
      (err: unknown) => {
        app.log.error({ err }, 'error while shutting down');
        process.exit(1);
      },
    );
  };
  process.on('SIGTERM', stop);
  process.on('SIGINT', stop);
  try {
    await app.listen({ port: config.PORT, host: config.HOST });
  } catch (err) {
    app.log.fatal({ err }, 'cannot listen');
    process.exit(1);
  }
  // Start the ray-tracing threads now rather than on the first line-profile request.
  app.lapse.rays.warmUp().catch((err: unknown) => app.log.warn({ err }, 'ray-tracing warm-up failed'));
}

void main();
