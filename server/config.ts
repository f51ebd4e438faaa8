import { Type, type Static } from '@sinclair/typebox';
import { envSchema } from 'env-schema';

/**
 * Service configuration, read from environment variables and validated at start-up.
 * Every variable has a default so the service runs with no environment at all.
 */
export const ConfigSchema = Type.Object({
  PORT: Type.Integer({ minimum: 0, maximum: 65535, default: 8080, description: 'TCP port to listen on.' }),
  HOST: Type.String({ minLength: 1, default: '0.0.0.0', description: 'Interface address to bind.' }),
  LOG_LEVEL: Type.Unsafe<'fatal' | 'error' | 'warn' | 'info' | 'debug' | 'trace' | 'silent'>({
    type: 'string',
    enum: ['fatal', 'error', 'warn', 'info', 'debug', 'trace', 'silent'],
    default: 'info',
    description: 'pino log level.',
  }),
  BODY_LIMIT: Type.Integer({ minimum: 1024, maximum: 104857600, default: 10485760, description: 'Largest accepted request body, bytes.' }),
  BATCH_MAX: Type.Integer({ minimum: 1, maximum: 1000000, default: 10000, description: 'Most cases in one batch request.' }),
  MC_SAMPLES_MAX: Type.Integer({ minimum: 10, maximum: 10000000, default: 100000, description: 'Most Monte Carlo samples for one case.' }),
  PULSES_MAX: Type.Integer({ minimum: 1, maximum: 10000000, default: 100000, description: 'Most pulses one infall timeline may return (413 above).' }),
  COMPUTE_BUDGET: Type.Integer({ minimum: 1000, maximum: 1000000000, default: 20000000, description: 'Most physics evaluations (cases x samples) one request may ask for.' }),
  RATE_LIMIT_MAX: Type.Integer({ minimum: 0, maximum: 10000000, default: 6000, description: 'Requests per window per client address; 0 turns rate limiting off.' }),
  RATE_LIMIT_WINDOW: Type.String({ minLength: 1, default: '1 minute', description: 'Rate-limit window, e.g. "1 minute", "10 seconds" or milliseconds.' }),
  CORS_ORIGINS: Type.String({ default: '', description: 'Comma-separated origins allowed to call the API from a browser; "*" for any; empty for none.' }),
  REQUEST_TIMEOUT_MS: Type.Integer({ minimum: 0, maximum: 3600000, default: 30000, description: 'Time limit for receiving and answering one request, ms; 0 for none.' }),
  SHUTDOWN_GRACE_MS: Type.Integer({ minimum: 0, maximum: 600000, default: 10000, description: 'On SIGTERM/SIGINT, how long in-flight requests may take before the process exits, ms.' }),
  MAX_EVENT_LOOP_DELAY_MS: Type.Integer({ minimum: 0, maximum: 60000, default: 1000, description: 'Event-loop delay above which new requests are shed with 503; 0 turns shedding off.' }),
  RAY_WORKERS: Type.Integer({ minimum: 0, maximum: 256, default: 0, description: 'Worker threads for ray tracing; 0 for one per available CPU.' }),
  RAYS_MAX: Type.Integer({ minimum: 10000, maximum: 1000000000, default: 2000000, description: 'Most rays one request may ask to trace (413 above); cached geometries cost none.' }),
  RAY_TIMEOUT_MS: Type.Integer({ minimum: 100, maximum: 3600000, default: 60000, description: 'Time limit of the ray tracing for one request, ms (503 when exceeded).' }),
  RAY_QUEUE_MAX: Type.Integer({ minimum: 1, maximum: 100000, default: 256, description: 'Ray-tracing tasks that may wait for a worker thread (503 above).' }),
  TRANSFER_CACHE_MB: Type.Integer({ minimum: 1, maximum: 65536, default: 256, description: 'Memory for cached line-profile transfer data (LRU), MiB.' }),
  TRUST_PROXY: Type.Boolean({ default: false, description: 'Trust X-Forwarded-* headers (behind an ingress).' }),
});

export type Config = Static<typeof ConfigSchema>;

/** Defaults, as applied when no variable is set (used by tests and deployment checks). */
export const defaultConfig: Config = Object.fromEntries(
  Object.entries(ConfigSchema.properties).map(([k, s]) => [k, (s as { default: unknown }).default]),
) as Config;

export class ConfigError extends Error {}

/** Reads and validates configuration; throws ConfigError with a one-line message naming the variable. */
export function loadConfig(env: NodeJS.ProcessEnv = process.env): Config {
  const known = Object.fromEntries(Object.keys(ConfigSchema.properties).filter((k) => env[k] !== undefined).map((k) => [k, env[k]]));
  try {
    return envSchema<Config>({ schema: ConfigSchema, data: known, dotenv: false, env: false });
  } catch (err) {
    const e = err as { errors?: Array<{ instancePath: string; message?: string; params?: Record<string, unknown> }>; message: string };
    const first = e.errors?.[0];
    if (first) {
      const name = first.instancePath.replace(/^\//, '') || String(first.params?.missingProperty ?? 'configuration');
      const allowed = first.params?.allowedValues ? ` (${(first.params.allowedValues as string[]).join(', ')})` : '';
      throw new ConfigError(`invalid environment variable ${name}=${JSON.stringify(known[name] ?? '')}: ${first.message ?? 'invalid'}${allowed}`);
    }
    throw new ConfigError(`invalid configuration: ${e.message}`);
  }
}

/** Merges explicit overrides over defaults (for tests and embedding). */
export function makeConfig(overrides: Partial<Config> = {}): Config {
  return { ...defaultConfig, ...overrides };
}
