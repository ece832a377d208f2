import { Router } from 'express';
import { z } from 'zod';
import { createUserSchema, idParam, pageOf, pageQuerySchema, resetPasswordSchema, updateUserSchema, userSchema } from '@ebbgate/shared';
import type { AppContext } from '../app-context';
import { defineRoute } from '../http/route';
import { createUser, listUsers, resetPassword, updateUser } from './users.service';

export function usersRouter(ctx: AppContext): Router {
  const router = Router();
  defineRoute(router, {
    method: 'get',
    path: '/users',
    permission: 'users.read',
    tag: 'users',
    summary: 'List users',
    query: pageQuerySchema.extend({ search: z.string().max(64).optional() }),
    response: pageOf(userSchema),
    handler: ({ query }) => listUsers(ctx.ds, query),
  });
  defineRoute(router, {
    method: 'post',
    path: '/users',
    permission: 'users.write',
    tag: 'users',
    summary: 'Create a user',
    body: createUserSchema,
    response: userSchema,
    status: 201,
    handler: ({ body, principal, req }) => createUser(ctx.ds, body, { principal, requestId: String(req.id) }),
  });
  defineRoute(router, {
    method: 'patch',
    path: '/users/:id',
    permission: 'users.write',
    tag: 'users',
    summary: 'Change display name, roles, or disable/enable a user',
    params: idParam,
    body: updateUserSchema,
    response: userSchema,
    handler: ({ params, body, principal, req }) => updateUser(ctx.ds, params.id, body, { principal, requestId: String(req.id) }),
  });
  defineRoute(router, {
    method: 'post',
    path: '/users/:id/password',
    permission: 'users.write',
    tag: 'users',
    summary: "Reset a user's password (ends their sessions, clears a lockout)",
    params: idParam,
    body: resetPasswordSchema,
    handler: async ({ params, body, principal, req }) => {
      await resetPassword(ctx.ds, params.id, body.password, { principal, requestId: String(req.id) });
      return undefined;
    },
  });
  return router;
}
