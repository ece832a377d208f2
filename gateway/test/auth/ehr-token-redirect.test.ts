/**
 * The EHR token request (RFC 6749 §4.4, client credentials) never follows a redirect: the client
 * secret goes to the configured token URL only. A token endpoint that answers 307/302 is an
 * authentication failure the operator must fix, and the redirect target never sees the secret.
 */
import { createServer, type IncomingMessage, type Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { TokenError, TokenProvider } from '../../src/delivery/ehr-client';

const listen = (handler: (req: IncomingMessage, body: string) => { status: number; headers?: Record<string, string>; body?: string }) =>
  new Promise<Server>((resolve) => {
    const s = createServer((req, res) => {
      let body = '';
      req.on('data', (c) => (body += c));
      req.on('end', () => {
        const a = handler(req, body);
        res.writeHead(a.status, a.headers ?? {}).end(a.body ?? '');
      });
    });
    s.listen(0, '127.0.0.1', () => resolve(s));
  });
const urlOf = (s: Server, p: string) => `http://127.0.0.1:${(s.address() as AddressInfo).port}${p}`;

let thief: Server;
const stolen: string[] = [];
beforeAll(async () => {
  thief = await listen((_req, body) => {
    stolen.push(body);
    return { status: 200, headers: { 'content-type': 'application/json' }, body: JSON.stringify({ access_token: 'from-elsewhere', expires_in: 300 }) };
  });
});
afterAll(async () => {
  await new Promise((r) => thief.close(r));
});

describe('EHR token request', () => {
  it('refuses a redirect as an authentication failure and never sends the secret to its target', async () => {
    for (const status of [307, 302, 308]) {
      const s = await listen(() => ({ status, headers: { location: urlOf(thief, '/token') } }));
      try {
        const tokens = new TokenProvider({
          fhirBaseUrl: 'http://127.0.0.1:9/fhir',
          tokenUrl: urlOf(s, '/oauth/token'),
          clientId: 'ebbgate-gateway',
          clientSecret: 'the-client-secret-1',
          requestTimeoutMs: 3000,
        });
        const err = await tokens.get().then(
          () => null,
          (e: unknown) => e,
        );
        expect(err).toBeInstanceOf(TokenError);
        expect((err as TokenError).outcome).toMatchObject({ kind: 'auth', httpStatus: status });
      } finally {
        await new Promise((r) => s.close(r));
      }
    }
    expect(stolen).toEqual([]);
  });
});
