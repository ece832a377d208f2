import { createHash, timingSafeEqual } from 'node:crypto';
import type { RequestHandler } from 'express';
import type { AppContext, ReadinessCheck } from '../app-context';
import { HttpProblem } from './problem';

/**
 * `/readyz`: 200 or 503 with one entry per check. Error text (which can name hosts, users or
 * SQL) is shown only to a signed-in caller; anonymous probes see which check failed, not why.
 */
export function readinessHandler(ctx: AppContext, extra: ReadinessCheck[], identify: RequestHandler): RequestHandler {
  return (req, res, next) => {
    identify(req, res, (err?: unknown) => {
      if (err) req.principal = undefined; // a bad credential only means no details
      const checks: ReadinessCheck[] = [{ name: 'database', critical: true, check: async () => void (await ctx.ds.query('SELECT 1')) }, ...extra];
      const detailed = req.principal?.kind === 'user';
      Promise.all(
        checks.map(async (c) => {
          try {
            await c.check();
            return { name: c.name, critical: c.critical, ok: true };
          } catch (e) {
            return { name: c.name, critical: c.critical, ok: false, ...(detailed ? { error: (e as Error).message } : {}) };
          }
        }),
      ).then((results) => {
        const ready = results.every((r) => r.ok || !r.critical);
        res.status(ready ? 200 : 503).json({ status: ready ? 'ready' : 'not-ready', checks: results });
      }, next);
    });
  };
}

const digest = (s: string) => createHash('sha256').update(s).digest();

/** `/metrics` behind `Authorization: Bearer <gateway.metricsToken>` when that setting is set. */
export function metricsGuard(token: string | null): RequestHandler {
  return (req, _res, next) => {
    if (!token) return next();
    const auth = req.headers.authorization ?? '';
    const presented = auth.startsWith('Bearer ') ? auth.slice(7).trim() : '';
    // Compare digests: equal length, constant time, whatever was presented.
    if (presented && timingSafeEqual(digest(presented), digest(token))) return next();
    next(
      new HttpProblem(401, 'Not signed in', 'The metrics need the scrape token (Authorization: Bearer).', {
        headers: { 'WWW-Authenticate': 'Bearer realm="metrics"' },
      }),
    );
  };
}
