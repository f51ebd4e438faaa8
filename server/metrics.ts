/**
 * Prometheus metrics (prom-client), one registry per app instance: per-route request duration
 * histogram labelled with method, route and status code; requests in flight; the default process
 * and event-loop-lag metrics; the ray-tracing pool's traces, cache, aborts, timeouts and queue.
 */
import type { FastifyInstance } from 'fastify';
import fp from 'fastify-plugin';
import { Counter, Gauge, Histogram, Registry, collectDefaultMetrics } from 'prom-client';

declare module 'fastify' {
  interface FastifyInstance {
    metricsRegistry: Registry;
  }
  interface FastifyRequest {
    lapseStart?: bigint;
  }
}

export const metricsPlugin = fp(async (app: FastifyInstance) => {
  const registry = new Registry();
  collectDefaultMetrics({ register: registry, prefix: 'lapse_', eventLoopMonitoringPrecision: 20 });
  const duration = new Histogram({
    name: 'lapse_http_request_duration_seconds',
    help: 'Time from receiving a request to sending its reply, by route and status code.',
    labelNames: ['method', 'route', 'status_code'] as const,
    buckets: [0.0005, 0.001, 0.0025, 0.005, 0.01, 0.025, 0.05, 0.1, 0.25, 0.5, 1, 2.5, 5, 10, 30],
    registers: [registry],
  });
  const inFlight = new Gauge({ name: 'lapse_http_requests_in_flight', help: 'Requests being processed now.', registers: [registry] });
  const cases = new Counter({ name: 'lapse_cases_total', help: 'Cases computed (a batch counts each of its items).', labelNames: ['route'] as const, registers: [registry] });
  app.decorate('metricsRegistry', registry);

  // The ray-tracing pool (server/rays.ts): counters mirror its stats when scraped.
  const rays = app.lapse.rays;
  const mirrored = (name: string, help: string, read: () => number) => {
    let seen = 0;
    new Counter({
      name,
      help,
      registers: [registry],
      collect() {
        const now = read();
        if (now > seen) this.inc(now - seen);
        seen = now;
      },
    });
  };
  mirrored('lapse_ray_traces_total', 'Line-profile geometries traced (transfer data computed).', () => rays.stats.traces);
  mirrored('lapse_ray_cache_hits_total', 'Line-profile requests served from cached transfer data.', () => rays.stats.cacheHits);
  mirrored('lapse_ray_requests_cancelled_total', 'Requests whose ray tracing was abandoned because the client went away.', () => rays.stats.aborted);
  mirrored('lapse_ray_timeouts_total', 'Requests whose ray tracing exceeded RAY_TIMEOUT_MS.', () => rays.stats.timeouts);
  mirrored('lapse_ray_queue_rejections_total', 'Worker tasks refused because the queue was full (RAY_QUEUE_MAX).', () => rays.stats.rejected);
  new Gauge({ name: 'lapse_ray_cache_entries', help: 'Geometries whose transfer data are cached.', registers: [registry], collect() { this.set(rays.cacheEntries); } });
  new Gauge({ name: 'lapse_ray_queue_tasks', help: 'Worker tasks waiting for a thread.', registers: [registry], collect() { this.set(rays.queued); } });

  app.addHook('onRequest', async (request) => {
    request.lapseStart = process.hrtime.bigint();
    inFlight.inc();
  });
  app.addHook('onResponse', async (request, reply) => {
    inFlight.dec();
    const start = request.lapseStart;
    if (start === undefined) return;
    const route = request.routeOptions.url ?? 'unmatched';
    duration.observe({ method: request.method, route, status_code: String(reply.statusCode) }, Number(process.hrtime.bigint() - start) / 1e9);
    if (request.method === 'POST' && reply.statusCode < 300 && route.startsWith('/v1/')) {
      const items = (request.body as { items?: unknown[] } | undefined)?.items;
      cases.inc({ route }, Array.isArray(items) ? items.length : 1);
    }
  });

  app.get('/metrics', { schema: { hide: true } }, async (_request, reply) => {
    reply.type(registry.contentType);
    return registry.metrics();
  });
});
