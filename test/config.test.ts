import { describe, expect, it } from 'vitest';
import { ConfigError, ConfigSchema, defaultConfig, loadConfig } from '../server/config.js';

describe('configuration from environment variables', () => {
  it('serves with no environment at all: defaults 0.0.0.0:8080, BATCH_MAX 10 000 (api.md)', () => {
    const c = loadConfig({});
    expect(c).toEqual(defaultConfig);
    expect(c.PORT).toBe(8080);
    expect(c.HOST).toBe('0.0.0.0');
    expect(c.BATCH_MAX).toBe(10000);
  });

  it('reads and converts values', () => {
    const c = loadConfig({ PORT: '9090', BATCH_MAX: '5', TRUST_PROXY: 'true', CORS_ORIGINS: 'https://a.example', LOG_LEVEL: 'warn' });
    expect(c.PORT).toBe(9090);
    expect(c.BATCH_MAX).toBe(5);
    expect(c.TRUST_PROXY).toBe(true);
    expect(c.LOG_LEVEL).toBe('warn');
  });

  const bad: Array<[string, string]> = [
    ['PORT', 'abc'],
    ['PORT', '70000'],
    ['HOST', ''],
    ['LOG_LEVEL', 'loud'],
    ['BODY_LIMIT', '-1'],
    ['BATCH_MAX', '0'],
    ['RATE_LIMIT_MAX', 'many'],
    ['REQUEST_TIMEOUT_MS', '1.5'],
    ['SHUTDOWN_GRACE_MS', '-5'],
    ['TRUST_PROXY', 'maybe'],
  ];
  it.each(bad)('a bad %s=%j stops start-up with a one-line message naming the variable', (name, value) => {
    let err: unknown;
    try {
      loadConfig({ [name]: value });
    } catch (e) {
      err = e;
    }
    expect(err).toBeInstanceOf(ConfigError);
    const msg = (err as Error).message;
    expect(msg).toContain(name);
    expect(msg).not.toContain('\n');
  });

  it('every variable has a description and a default (README table)', () => {
    for (const [k, s] of Object.entries(ConfigSchema.properties)) {
      expect((s as { description?: string }).description, k).toBeTruthy();
      expect((s as { default?: unknown }).default, k).not.toBeUndefined();
    }
  });
});
