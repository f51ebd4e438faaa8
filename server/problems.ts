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

/** A well-formed case with no physical solution (422); `allowed` states the domain. */
export class DomainError extends Error {
  constructor(
    message: string,
    readonly pointer = '',
    readonly allowed?: string,
  ) {
    super(message);
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
 * Turns any error thrown by physics into a 422 problem, or returns undefined when it is not a
 * physics-domain error (then it is a bug and must surface as a 500).
 */
export function physicsProblem(err: unknown, basePointer: string): Problem | undefined {
  if (err instanceof DomainError) {
    const pointer = err.pointer.startsWith('/') || err.pointer === '' ? basePointer + err.pointer : joinPointer(basePointer, err.pointer);
    const detail = err.allowed ? `${err.message}; allowed: ${err.allowed}` : err.message;
    return problem(422, detail, [{ pointer: pointer || '/', message: err.message }]);
  }
  // Physics modules signal a domain violation with RangeError, or a class carrying `allowed`.
  if (err instanceof RangeError || (err instanceof Error && typeof (err as { allowed?: unknown }).allowed === 'string')) {
    const e = err as Error & { allowed?: string; field?: string };
    const pointer = e.field ? joinPointer(basePointer, ...e.field.split('.')) : basePointer || '/';
    const detail = e.allowed ? `${e.message}; allowed: ${e.allowed}` : e.message;
    return problem(422, detail, [{ pointer, message: e.message }]);
  }
  return undefined;
}
