/**
 * Writes the OpenAPI 3.1 document generated from the route schemas to openapi/openapi.json
 * (with the default configuration, so the committed copy matches a default deployment).
 * `npm run openapi`; test/openapi.test.ts fails when the committed copy is stale.
 */
import { writeFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { buildApp } from '../server/app.js';
import { makeConfig } from '../server/config.js';

export const OPENAPI_PATH = fileURLToPath(new URL('../openapi/openapi.json', import.meta.url));

export async function renderOpenapi(): Promise<string> {
  const app = await buildApp(makeConfig({ LOG_LEVEL: 'silent' }));
  await app.ready();
  const text = JSON.stringify(app.swagger(), null, 2) + '\n';
  await app.close();
  return text;
}

if (process.argv[1] && fileURLToPath(import.meta.url) === process.argv[1]) {
  const text = await renderOpenapi();
  writeFileSync(OPENAPI_PATH, text);
  process.stdout.write(`wrote ${OPENAPI_PATH} (${text.length} bytes)\n`);
}
