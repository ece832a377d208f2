import type { RequestHandler } from 'express';
import type { AppContext } from '../app-context';
import { HttpProblem } from '../http/problem';
import { principalFromSession } from './auth.service';
import { principalFromDeviceKey } from './device-keys';
import { CSRF_HEADER, SESSION_COOKIE, csrfMatches } from './tokens';

const SAFE_METHODS = new Set(['GET', 'HEAD', 'OPTIONS']);

/**
 * Finds who is calling: a device by `Authorization: Bearer <api key>`, or a person by the session
 * cookie. Cookie sessions must echo the CSRF token on state-changing requests. Authorisation
 * itself happens per route (http/route.ts) against the permission table.
 */
export function authenticate(ctx: AppContext): RequestHandler {
  return async (req, _res, next) => {
    try {
      const auth = req.headers.authorization;
      if (auth?.startsWith('Bearer ')) {
        const principal = await principalFromDeviceKey(ctx, auth.slice(7).trim());
        if (!principal) throw new HttpProblem(401, 'Not signed in', 'The API key is unknown, revoked, or its monitor is disabled.');
        req.principal = principal;
        return next();
      }
      const token = (req.cookies as Record<string, string> | undefined)?.[SESSION_COOKIE];
      if (token) {
        const principal = await principalFromSession(ctx, token);
        if (principal && principal.kind === 'user') {
          if (!SAFE_METHODS.has(req.method) && !csrfMatches(principal.sessionId, ctx.config.auth.jwtSecret, req.header(CSRF_HEADER))) {
            throw new HttpProblem(403, 'CSRF check failed', `State-changing requests must carry the ${CSRF_HEADER} header from the session.`);
          }
          req.principal = principal;
        }
      }
      next();
    } catch (err) {
      next(err);
    }
  };
}
