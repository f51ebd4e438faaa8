/**
 * Checks shared by the route tests: a list of bad requests, each answered with a 400 problem whose
 * first error points at the expected field (RFC 6901) with a message matching the expected text.
 */
import { expect } from 'vitest';

type Post = (payload: unknown) => Promise<{ status: number; body: any; headers?: Record<string, unknown> }>; // eslint-disable-line @typescript-eslint/no-explicit-any

/** [request, pointer of the first error, pattern of its message (optional)] */
export type FieldErrorCase = readonly [unknown, string, RegExp?];

export async function expectFieldErrors(post: Post, cases: readonly FieldErrorCase[], opts: { problemJson?: boolean } = {}): Promise<void> {
  for (const [req, pointer, message] of cases) {
    const { status, body, headers } = await post(req);
    expect(status, JSON.stringify(req)).toBe(400);
    if (opts.problemJson) expect(headers?.['content-type']).toMatch(/application\/problem\+json/);
    expect(body.errors[0].pointer, JSON.stringify(req)).toBe(pointer);
    if (message) expect(body.errors[0].message, JSON.stringify(req)).toMatch(message);
  }
}
