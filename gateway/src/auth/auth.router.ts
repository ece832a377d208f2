import { Router, type Response } from 'express';
import { rateLimit } from 'express-rate-limit';
import { sessionSchema, signInSchema } from '@ebbgate/shared';
import type { AppContext } from '../app-context';
import { HttpProblem, unauthorized } from '../http/problem';
import { defineRoute } from '../http/route';
import { currentSession, renewSession, signIn, signOut, type IssuedSession } from './auth.service';
import { dummyHash } from './passwords';
import type { Principal } from './principal';
import { CSRF_COOKIE, SESSION_COOKIE } from './tokens';

type UserPrincipal = Extract<Principal, { kind: 'user' }>;

function asUser(p: Principal | undefined): UserPrincipal {
  if (!p || p.kind !== 'user') throw unauthorized();
  return p;
}

export function authRouter(ctx: AppContext): Router {
  const router = Router();
  void dummyHash(); // made now, so the first unknown username does not cost an extra hash

  const secure = ctx.config.gateway.publicUrl.startsWith('https:');

  const setCookies = (res: Response, issued: IssuedSession) => {
    const maxAge = ctx.config.auth.sessionMinutes * 60_000;
    res.cookie(SESSION_COOKIE, issued.token, { httpOnly: true, sameSite: 'strict', secure, path: '/', maxAge });
    res.cookie(CSRF_COOKIE, issued.session.csrfToken, { httpOnly: false, sameSite: 'strict', secure, path: '/', maxAge });
  };

  const limiter = rateLimit({
    windowMs: 60_000,
    limit: ctx.config.auth.signInAttemptsPerMinute,
    standardHeaders: 'draft-7',
    legacyHeaders: false,
    handler: (_req, _res, next) =>
      next(new HttpProblem(429, 'Too many requests', 'Too many sign-in attempts from this address; wait a minute.', { headers: { 'Retry-After': '60' } })),
  });

  defineRoute(router, {
    method: 'post',
    path: '/auth/sign-in',
    permission: 'public',
    tag: 'auth',
    summary: 'Sign in with username and password; sets the session and CSRF cookies',
    before: [limiter],
    body: signInSchema,
    response: sessionSchema,
    handler: async ({ body, res, req }) => {
      const issued = await signIn(ctx, body.username, body.password, { ip: req.ip ?? req.socket.remoteAddress ?? 'unknown', requestId: String(req.id) });
      setCookies(res, issued);
      return issued.session;
    },
  });

  defineRoute(router, {
    method: 'post',
    path: '/auth/sign-out',
    permission: 'session.read',
    tag: 'auth',
    summary: 'End the session',
    handler: async ({ principal, res, req }) => {
      await signOut(ctx, asUser(principal), String(req.id));
      res.clearCookie(SESSION_COOKIE, { path: '/' });
      res.clearCookie(CSRF_COOKIE, { path: '/' });
      return undefined;
    },
  });

  defineRoute(router, {
    method: 'post',
    path: '/auth/renew',
    permission: 'session.read',
    tag: 'auth',
    summary: 'Extend the session by another period',
    response: sessionSchema,
    handler: async ({ principal, res }) => {
      const issued = await renewSession(ctx, asUser(principal));
      setCookies(res, issued);
      return issued.session;
    },
  });

  defineRoute(router, {
    method: 'get',
    path: '/auth/session',
    permission: 'session.read',
    tag: 'auth',
    summary: 'The signed-in user, roles, CSRF token and expiry',
    response: sessionSchema,
    handler: ({ principal }) => currentSession(ctx, asUser(principal)),
  });
  return router;
}
