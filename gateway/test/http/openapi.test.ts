/**
 * The API document is checked by an independent OpenAPI validator (@readme/openapi-parser, which
 * validates against the OpenAPI 3.1 schema published by the OpenAPI Initiative).
 */
import { validate } from '@readme/openapi-parser';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { ROUTES } from '../../src/http/route';
import { startTestGateway, type TestGateway } from '../support/harness';

let gw: TestGateway;
beforeAll(async () => {
  gw = await startTestGateway();
});
afterAll(async () => gw?.stop());

describe('OpenAPI document', () => {
  it('is a valid OpenAPI 3.1 document listing every declared route', async () => {
    const res = await request(gw.server).get('/api/v1/openapi.json').expect(200);
    expect(res.body.openapi).toBe('3.1.0');
    const result = await validate(structuredClone(res.body));
    expect(result.valid, JSON.stringify(result.valid ? [] : result.errors, null, 2).slice(0, 2000)).toBe(true);
    const documented = Object.entries(res.body.paths as Record<string, Record<string, unknown>>).flatMap(([p, ops]) =>
      Object.keys(ops).map((m) => `${m} ${p}`),
    );
    for (const r of ROUTES) expect(documented).toContain(`${r.method} /api/v1${r.path.replace(/:([A-Za-z0-9_]+)/g, '{$1}')}`);
    // Negative control: the validator does reject a document that breaks the schema.
    const broken = structuredClone(res.body);
    delete broken.info;
    expect((await validate(broken)).valid).toBe(false);
  });

  it('serves the API reference (Swagger UI from swagger-ui-dist) from our own origin, nothing inline', async () => {
    const res = await request(gw.server).get('/api/docs').expect(200);
    expect(res.headers['content-security-policy']).toMatch(/script-src 'self'(;|$)/);
    const scripts = [...res.text.matchAll(/<script([^>]*)>([\s\S]*?)<\/script>/gi)];
    expect(scripts.length).toBeGreaterThanOrEqual(2);
    for (const [, attrs, body] of scripts) {
      expect(attrs).toMatch(/src="\/api\/docs\/[^"]+"/); // same origin, a file
      expect(body!.trim()).toBe(''); // no inline code (the CSP would refuse it)
    }
    expect(res.text).not.toMatch(/style="/);
    for (const src of [...res.text.matchAll(/(?:src|href)="(\/api\/docs\/[^"]+)"/g)].map((m) => m[1]!)) {
      const asset = await request(gw.server).get(src);
      expect(asset.status, src).toBe(200);
    }
    const start = await request(gw.server).get('/api/docs/start.js').expect(200);
    expect(start.text).toContain("url: '/api/v1/openapi.json'");
    // Only the listed files of the package: not its demo page or the OAuth2 page with inline script.
    await request(gw.server).get('/api/docs/oauth2-redirect.html').expect(404);
    await request(gw.server).get('/api/docs/index.html').expect(404);
  });
});
