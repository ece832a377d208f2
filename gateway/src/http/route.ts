import type { NextFunction, Request, Response, Router } from 'express';
import type { z } from 'zod';
import { PERMISSIONS, PUBLIC, allows, type Permission } from '@ebbgate/shared';
import type { Principal } from './principal';
import { HttpProblem, forbidden, unauthorized, zodFieldErrors } from './problem';

type Method = 'get' | 'post' | 'put' | 'patch' | 'delete';

export interface RouteContext<B, Q, P> {
  req: Request;
  res: Response;
  body: B;
  query: Q;
  params: P;
  principal: Principal | undefined;
}

export interface RouteSpec<B = unknown, Q = unknown, P = unknown> {
  method: Method;
  /** Express path relative to /api/v1, e.g. `/users/:id`. */
  path: string;
  permission: Permission | typeof PUBLIC;
  summary: string;
  tag: string;
  body?: z.ZodType<B>;
  query?: z.ZodType<Q>;
  params?: z.ZodType<P>;
  response?: z.ZodType;
  /** Success status (default 200; 204 when the handler returns undefined). */
  status?: number;
  /** Middleware that runs before validation (e.g. multer for uploads). */
  before?: ((req: Request, res: Response, next: NextFunction) => void)[];
  /** Request body media type for the API document (default application/json). */
  bodyType?: string;
  handler: (ctx: RouteContext<B, Q, P>) => Promise<unknown> | unknown;
}

/** Every route the gateway serves, for the API document and the permission walk. */
// eslint-disable-next-line @typescript-eslint/no-explicit-any -- a registry of routes with differing input types
export const ROUTES: RouteSpec<any, any, any>[] = [];

function parse<T>(schema: z.ZodType<T> | undefined, value: unknown, where: string): T {
  if (!schema) return value as T;
  const result = schema.safeParse(value);
  if (!result.success) {
    throw new HttpProblem(400, 'Bad request', `The ${where} does not match the schema.`, {
      errors: zodFieldErrors(result.error, where === 'body' ? '' : where),
    });
  }
  return result.data;
}

/** Checks the principal against the permission table; 401 without one, 403 without the role. */
export function authorize(permission: Permission | typeof PUBLIC, principal: Principal | undefined): void {
  if (permission === PUBLIC) return;
  if (!principal) throw unauthorized();
  const kinds = principal.kind === 'device' ? (['device'] as const) : principal.roles;
  if (!allows(permission, kinds)) {
    throw forbidden(`This needs one of the roles: ${PERMISSIONS[permission].join(', ')}.`);
  }
}

/** The app's JSON body parser (set by createApp on `app.locals`), run only after the permission check. */
const readJsonBody = (req: Request, res: Response, next: NextFunction) => {
  const parse = req.app?.locals.jsonParser as ((req: Request, res: Response, next: NextFunction) => void) | undefined;
  return parse ? parse(req, res, next) : next();
};

/**
 * Declares a route: permission, validation and documentation in one place. The handler gets
 * parsed input and returns the answer body; routes stay thin and call one service function.
 * Order: permission check, then the route's own middleware (uploads), then the JSON body, then
 * validation, so a caller without the permission is answered before a byte of its body is read
 * (and the connection closed, so its body is not drained either).
 */
export function defineRoute<B, Q, P>(router: Router, spec: RouteSpec<B, Q, P>): void {
  if (!ROUTES.some((r) => r.method === spec.method && r.path === spec.path)) ROUTES.push(spec);
  const permit = (req: Request, res: Response, next: NextFunction) => {
    try {
      authorize(spec.permission, req.principal);
      next();
    } catch (err) {
      const hasBody = Number(req.headers['content-length'] ?? 0) > 0 || req.headers['transfer-encoding'] !== undefined;
      if (hasBody) res.setHeader('Connection', 'close');
      next(err);
    }
  };
  const run = async (req: Request, res: Response) => {
    const ctx: RouteContext<B, Q, P> = {
      req,
      res,
      body: parse(spec.body, req.body, 'body'),
      query: parse(spec.query, req.query, 'query'),
      params: parse(spec.params, req.params, 'params'),
      principal: req.principal,
    };
    const result = await spec.handler(ctx);
    if (res.headersSent) return;
    if (result === undefined) res.status(spec.status ?? 204).end();
    else res.status(spec.status ?? 200).json(result);
  };
  router[spec.method](spec.path, permit, ...(spec.before ?? []), readJsonBody, run);
}
