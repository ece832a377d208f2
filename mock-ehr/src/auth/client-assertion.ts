import { createHmac, timingSafeEqual } from 'node:crypto';

// Client authentication by a signed JWT (RFC 7523 §2.2, "client_secret_jwt": HS256 with the shared
// secret). SMART backend services normally sign with an asymmetric key; the mock accepts the
// HMAC form so a test can exercise the assertion path without a key registry.

export const JWT_BEARER_TYPE = 'urn:ietf:params:oauth:client-assertion-type:jwt-bearer';

export function verifyClientAssertion(jwt: string, opts: { clientId: string; secret: Buffer; audience: string; now?: number }): string | undefined {
  const parts = jwt.split('.');
  if (parts.length !== 3) return 'client_assertion is not a compact JWT';
  const [h, p, sig] = parts as [string, string, string];
  let header: Record<string, unknown>;
  let claims: Record<string, unknown>;
  try {
    header = JSON.parse(Buffer.from(h, 'base64url').toString('utf8'));
    claims = JSON.parse(Buffer.from(p, 'base64url').toString('utf8'));
  } catch {
    return 'client_assertion header or claims are not JSON';
  }
  if (header.alg !== 'HS256') return `client_assertion alg ${String(header.alg)} is not supported (use HS256)`;
  const expected = createHmac('sha256', opts.secret).update(`${h}.${p}`).digest();
  const given = Buffer.from(sig, 'base64url');
  if (given.length !== expected.length || !timingSafeEqual(given, expected)) return 'client_assertion signature does not verify';
  if (claims.iss !== opts.clientId || claims.sub !== opts.clientId) return 'client_assertion iss and sub must be the client id';
  const aud = Array.isArray(claims.aud) ? claims.aud : [claims.aud];
  if (!aud.includes(opts.audience)) return `client_assertion aud must be ${opts.audience}`;
  const now = Math.floor((opts.now ?? Date.now()) / 1000);
  if (typeof claims.exp !== 'number' || claims.exp <= now) return 'client_assertion has expired';
  return undefined;
}
