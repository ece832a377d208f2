import { createHash } from 'node:crypto';
import type { Request, RequestHandler } from 'express';
import { ipKeyGenerator, rateLimit, type Options } from 'express-rate-limit';
import { HttpProblem } from './problem';

export interface RateLimitSettings {
  /** Failed requests (4xx other than 429) per minute from one source address. */
  perSourcePerMinute: number;
  /** Requests per minute carrying one credential (an API key or a session cookie). */
  perKeyPerMinute: number;
}

/** The credential a request carries, hashed (never kept in memory in the clear); none for anonymous callers. */
function credentialOf(req: Request): string | undefined {
  const presented = req.headers.authorization ?? req.headers.cookie;
  return presented ? createHash('sha256').update(presented).digest('base64url').slice(0, 22) : undefined;
}

const tooMany =
  (what: string): Options['handler'] =>
  (req, _res, next) => {
    const reset = (req as Request & { rateLimit?: { resetTime?: Date } }).rateLimit?.resetTime;
    const wait = reset ? Math.max(1, Math.ceil((reset.getTime() - Date.now()) / 1000)) : 60;
    next(new HttpProblem(429, 'Too many requests', `Too many requests ${what}; wait ${wait} s.`, { headers: { 'Retry-After': String(wait) } }));
  };

/**
 * Two limits, both before any route reads a body (in memory, per gateway process):
 * - per key: every request carrying a given API key or session cookie, so one monitor or one
 *   console session cannot take the gateway for itself;
 * - per source: requests from one address that fail (401, 403, 404, 400, 413…), so a stranger
 *   guessing keys, walking routes or sending garbage is slowed down without throttling the busy
 *   adapter host whose batches succeed. 429 and 503 are back-pressure, not the caller's fault.
 */
export function requestRateLimits(s: RateLimitSettings): RequestHandler[] {
  const common = { windowMs: 60_000, standardHeaders: 'draft-7', legacyHeaders: false } as const;
  const perKey = rateLimit({
    ...common,
    limit: s.perKeyPerMinute,
    skip: (req) => credentialOf(req) === undefined,
    keyGenerator: (req) => `key:${credentialOf(req)}`,
    handler: tooMany('with this API key or session'),
  });
  const perSource = rateLimit({
    ...common,
    limit: s.perSourcePerMinute,
    skipSuccessfulRequests: true,
    requestWasSuccessful: (_req, res) => res.statusCode < 400 || res.statusCode === 429 || res.statusCode === 503,
    keyGenerator: (req) => `ip:${ipKeyGenerator(req.ip ?? req.socket.remoteAddress ?? 'unknown')}`,
    handler: tooMany('that failed from this address'),
  });
  return [perKey, perSource];
}
