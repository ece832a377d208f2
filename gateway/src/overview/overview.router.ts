import { Router } from 'express';
import { overviewSchema } from '@ebbgate/shared';
import type { AppContext } from '../app-context';
import { defineRoute } from '../http/route';
import { getOverview } from './overview.service';

export function overviewRouter(ctx: AppContext): Router {
  const router = Router();
  defineRoute(router, {
    method: 'get',
    path: '/overview',
    permission: 'overview.read',
    tag: 'overview',
    summary: 'Inbound rate, assessments by verdict, delivery queue, failures and destination health over the last hour',
    response: overviewSchema,
    handler: () => getOverview(ctx),
  });
  return router;
}
