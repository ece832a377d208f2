import { describe, expect, it } from 'vitest';
import { ConfigError, loadConfig } from './load';

const base = { DATABASE_URL: 'mysql://u:p@127.0.0.1:3307/ebbgate', EBBGATE_JWT_SECRET: 'x'.repeat(40) };

describe('config', () => {
  it('builds from config/default.json and the environment', () => {
    const c = loadConfig({ ...base, EBBGATE_PORT: '9999' });
    expect(c.gateway.port).toBe(9999);
    expect(c.database.url).toBe(base.DATABASE_URL);
    expect(c.env).toBe('development');
  });

  it('rejects a bad value with a message naming the setting', () => {
    expect(() => loadConfig({ ...base, EBBGATE_PORT: 'eighty' })).toThrow(/EBBGATE_PORT: expected a number/);
    expect(() => loadConfig({ ...base, EBBGATE_PORT: '70000' })).toThrow(ConfigError);
    expect(() => loadConfig({ ...base, EBBGATE_PORT: '70000' })).toThrow(/gateway\.port/);
    expect(() => loadConfig({ ...base, EBBGATE_JWT_SECRET: 'short' })).toThrow(/auth\.jwtSecret: at least 32 characters/);
    expect(() => loadConfig({ ...base, DATABASE_URL: 'postgres://x' })).toThrow(/database\.url/);
  });

  it('requires a database URL and a JWT secret', () => {
    expect(() => loadConfig({})).toThrow(/database\.url[\s\S]*auth\.jwtSecret|auth\.jwtSecret[\s\S]*database\.url/);
  });
});
