import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { OPENAPI_PATH, renderOpenapi } from '../scripts/openapi.js';

/** Walks a JSON schema and yields [path, schema] for every property schema. */
function* properties(schema: unknown, path: string): Generator<[string, Record<string, unknown>]> {
  if (!schema || typeof schema !== 'object') return;
  const s = schema as Record<string, unknown>;
  if (s.properties && typeof s.properties === 'object') {
    for (const [k, v] of Object.entries(s.properties as Record<string, unknown>)) {
      yield [`${path}.${k}`, v as Record<string, unknown>];
      yield* properties(v, `${path}.${k}`);
    }
  }
  for (const key of ['anyOf', 'oneOf', 'allOf'] as const) {
    if (Array.isArray(s[key])) for (const [i, b] of (s[key] as unknown[]).entries()) yield* properties(b, `${path}.${key}[${i}]`);
  }
  if (s.items) yield* properties(s.items, `${path}[]`);
}

describe('OpenAPI document', () => {
  it('the committed copy in openapi/ is the one the route schemas generate (run `npm run openapi` when this fails)', async () => {
    const committed = readFileSync(OPENAPI_PATH, 'utf8');
    const fresh = await renderOpenapi();
    expect(committed === fresh, 'openapi/openapi.json is stale: run `npm run openapi`').toBe(true);
  });

  it('is OpenAPI 3.1, and every /v1 operation has a summary and every property a description', async () => {
    const doc = JSON.parse(await renderOpenapi()) as { openapi: string; paths: Record<string, Record<string, Record<string, unknown>>> };
    expect(doc.openapi).toBe('3.1.0');
    const missing: string[] = [];
    for (const [path, ops] of Object.entries(doc.paths)) {
      for (const [method, op] of Object.entries(ops)) {
        if (!path.startsWith('/v1/')) continue;
        expect(op.summary, `${method} ${path} summary`).toBeTruthy();
        const body = (op.requestBody as { content?: Record<string, { schema: unknown }> } | undefined)?.content?.['application/json']?.schema;
        for (const [p, s] of properties(body, `${method} ${path} body`)) if (!s.description && !s.anyOf) missing.push(p);
        const ok = (op.responses as Record<string, { content?: Record<string, { schema: unknown }> }>)['200']?.content?.['application/json']?.schema;
        for (const [p, s] of properties(ok, `${method} ${path} 200`)) if (!s.description && !s.anyOf && s.type !== 'object') missing.push(p);
      }
    }
    expect(missing).toEqual([]);
  });
});
