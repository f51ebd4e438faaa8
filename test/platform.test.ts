/**
 * The service platform: operations routes, problem documents on every failure path, request ids,
 * metrics, limits, CORS and security headers. Conventions: ../shared/design/api.md.
 */
import { Writable } from 'node:stream';
import request from 'supertest';
import { afterEach, describe, expect, it } from 'vitest';
import type { FastifyInstance } from 'fastify';
import { buildApp } from '../server/app.js';
import { makeConfig, type Config } from '../server/config.js';

const apps: FastifyInstance[] = [];
async function make(overrides: Partial<Config> = {}, logStream?: NodeJS.WritableStream) {
  const app = await buildApp(makeConfig({ LOG_LEVEL: 'silent', RATE_LIMIT_MAX: 0, MAX_EVENT_LOOP_DELAY_MS: 0, ...overrides }), { logStream });
  apps.push(app);
  return app;
}
afterEach(async () => {
  await Promise.all(apps.splice(0).map((a) => a.close()));
});

function expectProblem(res: { status: number; headers: Record<string, string>; body: Record<string, unknown> }, status: number) {
  expect(res.status).toBe(status);
  expect(res.headers['content-type']).toMatch(/^application\/problem\+json/);
  expect(res.body.status).toBe(status);
  expect(typeof res.body.type).toBe('string');
  expect(typeof res.body.title).toBe('string');
  expect(typeof res.body.detail).toBe('string');
  expect(JSON.stringify(res.body)).not.toMatch(/\bat .+\.(ts|js):\d+/); // never a stack trace
}

describe('operations routes', () => {
  it('/healthz is alive; /readyz is ready, then 503 with Retry-After while draining', async () => {
    const app = await make();
    await app.ready();
    expect((await request(app.server).get('/healthz')).status).toBe(200);
    expect((await request(app.server).get('/readyz')).status).toBe(200);
    app.lapse.draining = true;
    const res = await request(app.server).get('/readyz');
    expectProblem(res, 503);
    expect(res.headers['retry-after']).toBeTruthy();
  });

  it('/metrics exposes the per-route duration histogram with status codes, in-flight requests, event-loop lag and process metrics', async () => {
    const app = await make();
    await app.ready();
    await request(app.server).post('/v1/radii').send({ body: { gm: 1e20 } });
    await request(app.server).post('/v1/radii').send({ body: { gm: -1 } });
    const res = await request(app.server).get('/metrics');
    expect(res.status).toBe(200);
    expect(res.headers['content-type']).toMatch(/text\/plain/);
    expect(res.text).toMatch(/lapse_http_request_duration_seconds_bucket\{[^}]*route="\/v1\/radii"[^}]*status_code="200"/);
    expect(res.text).toMatch(/lapse_http_request_duration_seconds_count\{[^}]*route="\/v1\/radii"[^}]*status_code="400"[^}]*\} 1/);
    expect(res.text).toMatch(/^lapse_http_requests_in_flight /m);
    expect(res.text).toMatch(/^lapse_nodejs_eventloop_lag_seconds /m);
    expect(res.text).toMatch(/^lapse_process_cpu_user_seconds_total /m);
    expect(res.text).toMatch(/lapse_cases_total\{route="\/v1\/radii"\} 1/);
  });

  it('/openapi.json serves OpenAPI 3.1 and /docs the interactive page, whose scripts the CSP allows', async () => {
    const app = await make();
    await app.ready();
    const doc = await request(app.server).get('/openapi.json');
    expect(doc.status).toBe(200);
    expect(doc.body.openapi).toBe('3.1.0');
    expect(Object.keys(doc.body.paths)).toContain('/v1/radii');
    const page = await request(app.server).get('/docs/').redirects(2);
    expect(page.status).toBe(200);
    expect(page.text).toMatch(/swagger/i);
    const csp = page.headers['content-security-policy'];
    expect(csp).toMatch(/script-src 'self'/);
    // Every inline or external script the page loads must be allowed: only same-origin sources.
    for (const m of page.text.matchAll(/<script[^>]*src="([^"]+)"/g)) expect(m[1]).not.toMatch(/^https?:/);
    const init = await request(app.server).get('/docs/static/swagger-initializer.js');
    expect(init.status).toBe(200);
  });
});

describe('problem documents on every failure path (RFC 9457)', () => {
  it('404 unknown route and 405 known route with the wrong method (with Allow)', async () => {
    const app = await make();
    await app.ready();
    expectProblem(await request(app.server).get('/v1/nothing-here'), 404);
    const r405 = await request(app.server).get('/v1/radii');
    expectProblem(r405, 405);
    expect(r405.headers.allow).toMatch(/POST/);
  });

  it('400 on invalid JSON and on an empty body; 415 on a non-JSON content type', async () => {
    const app = await make();
    await app.ready();
    expectProblem(await request(app.server).post('/v1/radii').set('content-type', 'application/json').send('{"body": '), 400);
    expectProblem(await request(app.server).post('/v1/radii').set('content-type', 'application/json').send(''), 400);
    expectProblem(await request(app.server).post('/v1/radii').set('content-type', 'text/plain').send('mass=1'), 415);
    expectProblem(await request(app.server).post('/v1/radii').set('content-type', 'application/xml').send('<a/>'), 415);
  });

  it('413 when the body exceeds BODY_LIMIT', async () => {
    const app = await make({ BODY_LIMIT: 2048 });
    await app.ready();
    const items = Array.from({ length: 100 }, () => ({ body: { gm: 1e20 } }));
    const res = await request(app.server).post('/v1/radii').send({ items });
    expectProblem(res, 413);
    expect(res.body.detail).toMatch(/2048/);
  });

  it('429 with Retry-After past RATE_LIMIT_MAX', async () => {
    const app = await make({ RATE_LIMIT_MAX: 2, RATE_LIMIT_WINDOW: '1 minute' });
    await app.ready();
    await request(app.server).get('/v1/constants');
    await request(app.server).get('/v1/constants');
    const res = await request(app.server).get('/v1/constants');
    expectProblem(res, 429);
    expect(Number(res.headers['retry-after'])).toBeGreaterThan(0);
    expect((await request(app.server).get('/healthz')).status).toBe(200); // probes are never limited
  });

  it('503 with Retry-After when the event loop is overloaded', async () => {
    const app = await make({ MAX_EVENT_LOOP_DELAY_MS: 5 });
    await app.ready();
    // Shedding starts 2 s after the app is ready (start-up schema compilation is not overload).
    expect((await request(app.server).get('/v1/constants')).status).toBe(200);
    await new Promise((r) => setTimeout(r, 2100));
    const t0 = Date.now();
    while (Date.now() - t0 < 1500) {
      // block the event loop: the delay monitor then reports ~1.5 s of lag
    }
    await new Promise((r) => setTimeout(r, 50));
    const res = await request(app.server).get('/v1/constants');
    expectProblem(res, 503);
    expect(res.headers['retry-after']).toBe('5');
  });

  it('500 on an unexpected error: logged with its stack, never returned', async () => {
    const lines: string[] = [];
    const stream = new Writable({ write(chunk, _enc, cb) { lines.push(String(chunk)); cb(); } });
    const app = await make({ LOG_LEVEL: 'info' }, stream);
    app.post('/v1/test-boom', async () => {
      throw new Error('internal secret detail');
    });
    await app.ready();
    const res = await request(app.server).post('/v1/test-boom').set('x-request-id', 'boom-1').send({});
    expectProblem(res, 500);
    expect(JSON.stringify(res.body)).not.toMatch(/secret/);
    expect(res.body.detail).toMatch(/boom-1/);
    const logged = lines.map((l) => JSON.parse(l)).find((l) => l.err?.message === 'internal secret detail');
    expect(logged?.err?.stack).toMatch(/internal secret detail/);
    expect(logged?.reqId).toBe('boom-1');
  });
});

describe('request ids', () => {
  it('accepts and echoes x-request-id, puts it in every log line of the request, and makes one when absent or malformed', async () => {
    const lines: string[] = [];
    const stream = new Writable({ write(chunk, _enc, cb) { lines.push(String(chunk)); cb(); } });
    const app = await make({ LOG_LEVEL: 'info' }, stream);
    await app.ready();
    const res = await request(app.server).post('/v1/radii').set('x-request-id', 'pipeline-42.7').send({ body: { gm: 1e20 } });
    expect(res.headers['x-request-id']).toBe('pipeline-42.7');
    const mine = lines.map((l) => JSON.parse(l)).filter((l) => l.reqId === 'pipeline-42.7');
    expect(mine.length).toBeGreaterThanOrEqual(2); // incoming request and request completed
    expect(lines.map((l) => JSON.parse(l)).filter((l) => l.req || l.res).every((l) => typeof l.reqId === 'string')).toBe(true);
    const made = await request(app.server).get('/healthz');
    expect(made.headers['x-request-id']).toMatch(/^[0-9a-f-]{36}$/);
    const bad = await request(app.server).get('/healthz').set('x-request-id', 'a b;c//d');
    expect(bad.headers['x-request-id']).toMatch(/^[0-9a-f-]{36}$/);
  });
});

describe('CORS and security headers', () => {
  it('no CORS headers by default; configured origins get them on preflight and requests', async () => {
    const closed = await make();
    await closed.ready();
    const r0 = await request(closed.server).options('/v1/radii').set('origin', 'https://dash.example.org').set('access-control-request-method', 'POST');
    expect(r0.headers['access-control-allow-origin']).toBeUndefined();
    const open = await make({ CORS_ORIGINS: 'https://dash.example.org, https://other.example.org' });
    await open.ready();
    const r1 = await request(open.server).options('/v1/radii').set('origin', 'https://dash.example.org').set('access-control-request-method', 'POST');
    expect(r1.status).toBeLessThan(300);
    expect(r1.headers['access-control-allow-origin']).toBe('https://dash.example.org');
    const r2 = await request(open.server).post('/v1/radii').set('origin', 'https://evil.example.net').send({ body: { gm: 1e20 } });
    expect(r2.headers['access-control-allow-origin']).toBeUndefined();
  });

  it('security headers on API replies', async () => {
    const app = await make();
    await app.ready();
    const res = await request(app.server).get('/v1/constants');
    expect(res.headers['x-content-type-options']).toBe('nosniff');
    expect(res.headers['content-security-policy']).toMatch(/default-src 'self'/);
    expect(res.headers['x-frame-options']).toBeTruthy();
    expect(res.headers['strict-transport-security']).toBeTruthy();
  });
});

describe('GET /v1/constants', () => {
  it('lists c, G (CODATA 2018), nominal solar GM and radius (IAU 2015 B3), au (IAU 2012 B2), pc, Earth GM, radius, J2, W0, L_G (IERS 2010), g0 and the Julian year, each with source', async () => {
    const app = await make();
    await app.ready();
    const res = await request(app.server).get('/v1/constants');
    expect(res.status).toBe(200);
    expect(res.headers['cache-control']).toMatch(/max-age=\d+/);
    const by = Object.fromEntries((res.body.constants as Array<{ symbol: string; value: number; uncertainty: number; source: string; unit: string }>).map((c) => [c.symbol, c]));
    // Values as published (from the cited documents; the digits are those of the standards).
    expect(by.c.value).toBe(299792458);
    expect(by.G.value).toBe(6.6743e-11);
    expect(by.G.uncertainty).toBe(1.5e-15);
    expect(by.GM_sun.value).toBe(1.3271244e20);
    expect(by.R_sun.value).toBe(6.957e8);
    expect(by.au.value).toBe(149597870700);
    expect(Math.abs(by.pc.value / 3.0856775814913673e16 - 1)).toBeLessThan(1e-15); // 648000/pi au
    expect(by.GM_earth.value).toBe(3.986004418e14);
    expect(by.GM_earth.uncertainty).toBe(8e5);
    expect(by.a_E.value).toBe(6378136.6);
    expect(by.J2.value).toBe(1.0826359e-3);
    expect(by.W0.value).toBe(62636856.0);
    expect(by.L_G.value).toBe(6.969290134e-10);
    expect(by.g_0.value).toBe(9.80665);
    expect(by.a_J.value).toBe(31557600);
    for (const c of Object.values(by)) expect(c.source.length).toBeGreaterThan(5);
    // A read-only document: cacheable, with an ETag and 304 on a matching If-None-Match.
    expect(res.headers.etag).toBeTruthy();
    const again = await request(app.server).get('/v1/constants').set('if-none-match', res.headers.etag);
    expect(again.status).toBe(304);
  });
});
