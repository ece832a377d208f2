import { Router } from 'express';
import { auditEntrySchema, auditQuerySchema, pageOf } from '@ebbgate/shared';
import type { AppContext } from '../app-context';
import { defineRoute } from '../http/route';
import { listAudit } from './audit.service';

export function auditRouter(ctx: AppContext): Router {
  const router = Router();
  defineRoute(router, {
    method: 'get',
    path: '/audit',
    permission: 'audit.read',
    tag: 'audit',
    summary: 'List audit entries (who, what, when, before/after), newest first',
    query: auditQuerySchema,
    response: pageOf(auditEntrySchema),
    handler: ({ query }) => listAudit(ctx.ds, query),
  });
  return router;
}
