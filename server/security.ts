/**
 * Security headers from `helmet`, computed once: helmet's middleware only sets fixed headers for a
 * fixed configuration, so it runs once against a recorder at start-up and every reply then gets the
 * recorded headers (@fastify/helmet would rebuild the middleware for every request).
 */
import type { IncomingMessage, ServerResponse } from 'node:http';
import type { FastifyInstance } from 'fastify';
import helmet, { type HelmetOptions } from 'helmet';

export function securityHeaders(options: HelmetOptions): Array<[string, string]> {
  const headers: Array<[string, string]> = [];
  const recorder = {
    setHeader(name: string, value: string | number | readonly string[]) {
      headers.push([name.toLowerCase(), Array.isArray(value) ? value.join(', ') : String(value)]);
    },
    removeHeader() {},
  };
  let failure: unknown;
  helmet(options)({} as IncomingMessage, recorder as unknown as ServerResponse, (err?: unknown) => {
    failure = err;
  });
  if (failure) throw failure;
  return headers;
}

export function registerSecurityHeaders(app: FastifyInstance, options: HelmetOptions): void {
  const headers = securityHeaders(options);
  app.addHook('onRequest', (_request, reply, done) => {
    for (const [name, value] of headers) reply.header(name, value);
    done();
  });
}
