import { describe, expect, it } from 'vitest';
import { ConfigError, loadConfig } from '../../src/config/load';

const base = { database: { url: 'mysql://u:p@127.0.0.1:1/x' }, auth: { jwtSecret: 'x'.repeat(40) } };

describe('configuration of the edge', () => {
  it('refuses plain-HTTP EHR URLs in production, names each, and allows them in development', () => {
    expect(() => loadConfig({ NODE_ENV: 'production' }, base)).toThrow(ConfigError);
    expect(() => loadConfig({ NODE_ENV: 'production' }, { ...base, ehr: { fhirBaseUrl: 'https://ehr.example/fhir' } })).toThrow(
      /ehr\.tokenUrl: must be an https:\/\/ URL in production/,
    );
    expect(
      loadConfig({ NODE_ENV: 'production' }, { ...base, ehr: { fhirBaseUrl: 'https://ehr.example/fhir', tokenUrl: 'https://ehr.example/token' } }).ehr.tokenUrl,
    ).toBe('https://ehr.example/token');
    expect(loadConfig({ NODE_ENV: 'development' }, base).ehr.fhirBaseUrl).toMatch(/^http:/);
  });

  it('reads the MLLP/TLS settings from the environment', () => {
    const c = loadConfig({ NODE_ENV: 'test', EBBGATE_MLLP_TLS_ENABLED: 'true', EBBGATE_MLLP_TLS_PORT: '22576' }, base);
    expect(c.mllp.tls).toMatchObject({ enabled: true, port: 22576 });
    expect(c.mllp.allowedSources).toEqual(['127.0.0.0/8', '::1/128']);
  });
});
