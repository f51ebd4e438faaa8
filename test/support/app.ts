/**
 * One app per route-test file: built before the file's tests with a quiet test configuration
 * (no rate limit, no load shedding, BATCH_MAX 50 unless overridden), closed after them.
 */
import { afterAll, beforeAll } from 'vitest';
import type { FastifyInstance } from 'fastify';
import { buildApp } from '../../server/app.js';
import { makeConfig, type Config } from '../../server/config.js';

export function routeTestApp(overrides: Partial<Config> = {}) {
  let app: FastifyInstance | undefined;
  beforeAll(async () => {
    app = await buildApp(makeConfig({ LOG_LEVEL: 'silent', RATE_LIMIT_MAX: 0, MAX_EVENT_LOOP_DELAY_MS: 0, BATCH_MAX: 50, ...overrides }));
    await app.ready();
  });
  afterAll(async () => app?.close());
  /** POSTs a JSON body; returns status, parsed body, raw text and headers. */
  async function post(url: string, payload: unknown, headers: Record<string, string> = {}) {
    const res = await app!.inject({ method: 'POST', url, payload: payload as object, headers });
    return { status: res.statusCode, body: res.json(), raw: res.body, headers: res.headers };
  }
  return { post };
}
