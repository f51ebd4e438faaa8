import type { FastifyReply, FastifyRequest } from 'fastify';
import { PhysicsDomainError } from '../physics/errors.js';

/**
 * RFC 9457 problem documents and the errors that become them. Pointers are RFC 6901.
 */
export interface FieldError {
  pointer: string;
  message: string;
}

export interface Problem {
  type: string;
  title: string;
  status: number;
  detail?: string;
  instance?: string;
  request_id?: string;
  errors?: FieldError[];
}

const TITLES: Record<number, [string, string]> = {
  400: ['invalid-request', 'Invalid request'],
  404: ['not-found', 'Not found'],
  405: ['method-not-allowed', 'Method not allowed'],
  406: ['not-acceptable', 'Not acceptable'],
  408: ['request-timeout', 'Request timeout'],
  413: ['too-large', 'Request too large'],
  415: ['unsupported-media-type', 'Unsupported media type'],
  422: ['physically-impossible', 'No physical solution'],
  429: ['rate-limited', 'Too many requests'],
  500: ['internal', 'Internal error'],
  503: ['unavailable', 'Service unavailable'],
};

/** Problem type URIs are relative references under /problems (documented in README). */
export function problem(status: number, detail?: string, errors?: FieldError[], kind?: string): Problem {
  const [slug, title] = TITLES[status] ?? (status >= 500 ? TITLES[500] : TITLES[400]);
  const p: Problem = { type: `/problems/${kind ?? slug}`, title, status };
  if (detail !== undefined) p.detail = detail;
  if (errors && errors.length > 0) p.errors = errors;
  return p;
}

/** Input errors: schema, unit or range violations (400), or too large (413). */
export class InputError extends Error {
  constructor(
    readonly errors: FieldError[],
    readonly status = 400,
    detail?: string,
  ) {
    super(detail ?? errors.map((e) => `${e.pointer || '/'}: ${e.message}`).join('; '));
  }
}

/** Escapes one RFC 6901 reference token. */
export function escapeToken(token: string | number): string {
  return String(token).replace(/~/g, '~0').replace(/\//g, '~1');
}

export function joinPointer(base: string, ...tokens: Array<string | number>): string {
  return base + tokens.map((t) => '/' + escapeToken(t)).join('');
}

/**
 * Turns an error thrown by physics into a 422 problem, or returns undefined when it is not a
 * physics-domain error (then it is a bug and must surface as a 500). A PhysicsDomainError whose
 * `parameter` is a JSON pointer ("/emitter/r") names that field of the case; otherwise the case.
 */
export function physicsProblem(err: unknown, basePointer: string): Problem | undefined {
  if (err instanceof PhysicsDomainError) {
    const pointer = err.parameter?.startsWith('/') ? basePointer + err.parameter : basePointer;
    return problem(422, `${err.message}; allowed: ${err.allowed}`, [{ pointer, message: err.message }]);
  }
  // physics/kerr.ts signals a domain violation with RangeError, its message naming the range.
  if (err instanceof RangeError) {
    return problem(422, err.message, [{ pointer: basePointer, message: err.message }]);
  }
  return undefined;
}

/** Sends a problem document as the reply, with the request path and id (and Retry-After, s). */
export function sendProblem(reply: FastifyReply, p: Problem, request: FastifyRequest, retryAfterSeconds?: number) {
  if (retryAfterSeconds !== undefined) reply.header('retry-after', String(retryAfterSeconds));
  return reply
    .code(p.status)
    .type('application/problem+json')
    .send({ ...p, instance: request.url.split('?')[0], request_id: request.id });
}
