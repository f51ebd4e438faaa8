/**
 * The application factory: one function that builds the whole service from a configuration, used
 * by start-up and by the tests alike.
 */
import { randomUUID } from 'node:crypto';
import Fastify, { type FastifyError, type FastifyInstance, type FastifyReply, type FastifyRequest } from 'fastify';
import type { TypeBoxTypeProvider } from '@fastify/type-provider-typebox';
import cors from '@fastify/cors';
import rateLimit from '@fastify/rate-limit';
import swagger from '@fastify/swagger';
import swaggerUi from '@fastify/swagger-ui';
import underPressure from '@fastify/under-pressure';
import { makeConfig, type Config } from './config.js';
import { metricsPlugin } from './metrics.js';
import { registerSecurityHeaders } from './security.js';
import { InputError, problem, sendProblem } from './problems.js';
import { explainAjvErrors } from './validation.js';
import { openapiDocument } from './openapi.js';
import { routes } from '../routes/index.js';
import { RayService } from './rays.js';

declare module 'fastify' {
  interface FastifyInstance {
    lapse: { config: Config; draining: boolean; rays: RayService };
  }
}

const REQUEST_ID_RE = /^[A-Za-z0-9._:@-]{1,128}$/;


export interface BuildOptions {
  /** Where log lines go (default stdout); tests pass a stream to read them. */
  logStream?: NodeJS.WritableStream;
}

export async function buildApp(config: Config = makeConfig(), options: BuildOptions = {}): Promise<FastifyInstance> {
  const app = Fastify({
    logger: {
      level: config.LOG_LEVEL,
      redact: ['req.headers.authorization', 'req.headers.cookie'],
      ...(options.logStream ? { stream: options.logStream } : {}),
    },
    bodyLimit: config.BODY_LIMIT,
    requestTimeout: config.REQUEST_TIMEOUT_MS,
    trustProxy: config.TRUST_PROXY,
    // Requests already received when shutdown starts are served, not refused (start.ts drains).
    return503OnClosing: false,
    requestIdHeader: false,
    genReqId: (req) => {
      const given = req.headers['x-request-id'];
      return typeof given === 'string' && REQUEST_ID_RE.test(given) ? given : randomUUID();
    },
    ajv: {
      customOptions: { coerceTypes: false, removeAdditional: false, useDefaults: true, allErrors: false, verbose: true },
    },
  }).withTypeProvider<TypeBoxTypeProvider>();

  const rays = new RayService(config);
  app.decorate('lapse', { config, draining: false, rays });
  app.addHook('onClose', async () => {
    await rays.close();
  });
  // JSON only: a text body is a 415, not a string the schema then rejects.
  app.removeContentTypeParser('text/plain');

  // Replies are plain JSON.stringify of objects built by the routes: response schemas document the
  // API (OpenAPI) but never silently drop or coerce fields. Non-finite numbers are caught before.
  app.setSerializerCompiler(() => (data) => JSON.stringify(data));

  app.addHook('onSend', async (request, reply, payload) => {
    reply.header('x-request-id', request.id);
    // While draining, close each connection after its reply so that close() can finish.
    if (app.lapse.draining) reply.header('connection', 'close');
    return payload;
  });

  // Batch size is checked before schema validation: an oversize batch is a 413, and is not
  // validated item by item first.
  app.addHook('preValidation', async (request) => {
    const items = (request.body as { items?: unknown } | null | undefined)?.items;
    if (Array.isArray(items) && items.length > config.BATCH_MAX) {
      throw new InputError([{ pointer: '/items', message: `must have at most ${config.BATCH_MAX} items (BATCH_MAX)` }], 413, `the batch has ${items.length} items; the limit is ${config.BATCH_MAX} (BATCH_MAX)`);
    }
  });

  // 405 for a known path with another method: remember every route's methods.
  const methods = new Map<string, Set<string>>();
  app.addHook('onRoute', (r) => {
    const set = methods.get(r.url) ?? new Set<string>();
    for (const m of Array.isArray(r.method) ? r.method : [r.method]) set.add(m);
    methods.set(r.url, set);
  });

  app.setNotFoundHandler((request, reply) => {
    const path = request.url.split('?')[0];
    const allowed = methods.get(path);
    if (allowed && !allowed.has(request.method)) {
      reply.header('allow', [...allowed].join(', '));
      return sendProblem(reply, problem(405, `${request.method} is not allowed on ${path}; allowed: ${[...allowed].join(', ')}`), request);
    }
    return sendProblem(reply, problem(404, `no route ${request.method} ${path}; see /docs for the API`), request);
  });

  app.setErrorHandler((error: FastifyError, request, reply) => {
    if (error.validation) {
      const errors = explainAjvErrors(error.validation as never, error.validationContext === 'body' || !error.validationContext ? '' : `#${error.validationContext}`);
      return sendProblem(reply, problem(400, `the request ${error.validationContext ?? 'body'} does not match the schema: ${errors.map((e) => `${e.pointer || '/'} ${e.message}`).join('; ')}`, errors), request);
    }
    if (error instanceof InputError) {
      return sendProblem(reply, problem(error.status, error.message, error.errors), request);
    }
    const status = error.statusCode ?? 500;
    switch (error.code) {
      case 'FST_ERR_CTP_BODY_TOO_LARGE':
        return sendProblem(reply, problem(413, `the request body is larger than ${config.BODY_LIMIT} bytes (BODY_LIMIT)`), request);
      case 'FST_ERR_CTP_INVALID_MEDIA_TYPE':
        return sendProblem(reply, problem(415, `content type ${JSON.stringify(request.headers['content-type'] ?? '')} is not supported; send application/json`), request);
      case 'FST_ERR_CTP_EMPTY_JSON_BODY':
        return sendProblem(reply, problem(400, 'the request body is empty; send a JSON object'), request);
      case 'FST_ERR_CTP_INVALID_JSON_BODY':
        return sendProblem(reply, problem(400, `the request body is not valid JSON: ${error.message}`, undefined, 'invalid-json'), request);
    }
    if (status === 429) {
      return sendProblem(reply, problem(429, error.message), request);
    }
    if (status >= 400 && status < 500) {
      return sendProblem(reply, problem(status, error.message), request);
    }
    request.log.error({ err: error }, 'unexpected error');
    return sendProblem(reply, problem(500, `an unexpected error occurred; quote request id ${request.id} when reporting it`), request);
  });

  await app.register(metricsPlugin);

  if (config.MAX_EVENT_LOOP_DELAY_MS > 0) {
    // Compiling the route schemas at start-up blocks the event loop for a while; the delay monitor
    // would count that as overload and shed the first requests. Shedding starts two sampling
    // intervals after the app is ready.
    let shedFrom = Infinity;
    app.addHook('onReady', async () => {
      shedFrom = Date.now() + 2000;
    });
    await app.register(underPressure, {
      maxEventLoopDelay: config.MAX_EVENT_LOOP_DELAY_MS,
      retryAfter: 5,
      // Returning a value makes under-pressure send it; returning nothing lets the request through.
      pressureHandler: ((request: FastifyRequest, reply: FastifyReply, type: string, value: number | undefined) => {
        if (request.url === '/healthz' || request.url === '/metrics' || Date.now() < shedFrom) return undefined;
        reply.code(503).header('retry-after', '5').type('application/problem+json');
        const p = problem(503, `the service is overloaded (${type}${value === undefined ? '' : ` ${Math.round(value)}`}); retry later`, undefined, 'overloaded');
        return { ...p, instance: request.url.split('?')[0], request_id: request.id };
      }) as never,
    });
  }

  if (config.RATE_LIMIT_MAX > 0) {
    const win = /^\d+$/.test(config.RATE_LIMIT_WINDOW) ? Number(config.RATE_LIMIT_WINDOW) : config.RATE_LIMIT_WINDOW;
    await app.register(rateLimit, {
      max: config.RATE_LIMIT_MAX,
      timeWindow: win,
      allowList: (request) => ['/healthz', '/readyz', '/metrics'].includes(request.url),
      errorResponseBuilder: (_request, ctx) => {
        const err = new Error(`rate limit of ${ctx.max} requests per ${ctx.after} exceeded; retry in ${Math.ceil(ctx.ttl / 1000)} s`) as Error & { statusCode: number };
        err.statusCode = 429;
        return err;
      },
    });
  }

  const origins = config.CORS_ORIGINS.split(',').map((s) => s.trim()).filter(Boolean);
  if (origins.length > 0) {
    await app.register(cors, {
      origin: origins.includes('*') ? '*' : origins,
      methods: ['GET', 'POST', 'OPTIONS'],
      allowedHeaders: ['content-type', 'x-request-id', 'if-none-match'],
      exposedHeaders: ['x-request-id', 'etag', 'retry-after'],
      maxAge: 600,
    });
  }

  await app.register(swagger, { openapi: openapiDocument() });
  await app.register(swaggerUi, { routePrefix: '/docs' });
  registerSecurityHeaders(app, {
    contentSecurityPolicy: {
      directives: {
        defaultSrc: ["'self'"],
        imgSrc: ["'self'", 'data:'],
        scriptSrc: ["'self'", ...app.swaggerCSP.script],
        styleSrc: ["'self'", ...app.swaggerCSP.style],
        upgradeInsecureRequests: null,
      },
    },
    // The API is called cross-origin by dashboards when CORS allows it.
    crossOriginResourcePolicy: { policy: origins.length > 0 ? 'cross-origin' : 'same-origin' },
  });

  app.get('/healthz', { schema: { hide: true } }, async () => ({ status: 'ok' }));
  app.get('/readyz', { schema: { hide: true } }, async (request, reply) => {
    if (app.lapse.draining) {
      return sendProblem(reply, problem(503, 'the service is shutting down', undefined, 'draining'), request, 5);
    }
    return { status: 'ready' };
  });
  app.get('/openapi.json', { schema: { hide: true } }, async () => app.swagger());

  await app.register(routes, { config });
  return app;
}
