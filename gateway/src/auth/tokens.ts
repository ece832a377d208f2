import { createHmac, timingSafeEqual } from 'node:crypto';
import jwt from 'jsonwebtoken';

export const SESSION_COOKIE = 'ebbgate_session';
export const CSRF_COOKIE = 'ebbgate_csrf';
export const CSRF_HEADER = 'x-csrf-token';

export interface SessionClaims {
  sub: string;
  sid: string;
}

export function signSession(claims: SessionClaims, secret: string, minutes: number): string {
  return jwt.sign(claims, secret, { algorithm: 'HS256', expiresIn: minutes * 60, issuer: 'ebbgate' });
}

/** Returns the claims, or null for a missing, forged or expired token. */
export function verifySession(token: string, secret: string): SessionClaims | null {
  try {
    const payload = jwt.verify(token, secret, { algorithms: ['HS256'], issuer: 'ebbgate' });
    if (typeof payload === 'object' && typeof payload.sub === 'string' && typeof payload.sid === 'string') {
      return { sub: payload.sub, sid: payload.sid };
    }
    return null;
  } catch {
    return null;
  }
}

/** CSRF token bound to the session id (signed double-submit): HMAC-SHA256(secret, sid). */
export function csrfTokenFor(sessionId: string, secret: string): string {
  return createHmac('sha256', secret).update(`csrf:${sessionId}`).digest('base64url');
}

export function csrfMatches(sessionId: string, secret: string, presented: string | undefined): boolean {
  if (!presented) return false;
  const expected = Buffer.from(csrfTokenFor(sessionId, secret));
  const got = Buffer.from(presented);
  return got.length === expected.length && timingSafeEqual(got, expected);
}
