import type { NextFunction, Request, Response, Router } from 'express';
import type { z } from 'zod';
import { PERMISSIONS, PUBLIC, allows, type Permission } from '../auth/permissions';
import type { Principal } from '../auth/principal';
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

/**
 * Declares a route: permission, validation and documentation in one place. The handler gets
 * parsed input and returns the answer body; routes stay thin and call one service function.
 */
export function defineRoute<B, Q, P>(router: Router, spec: RouteSpec<B, Q, P>): void {
  if (!ROUTES.some((r) => r.method === spec.method && r.path === spec.path)) ROUTES.push(spec);
  const run = async (req: Request, res: Response) => {
    authorize(spec.permission, req.principal);
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
  router[spec.method](spec.path, ...(spec.before ?? []), run);
}
