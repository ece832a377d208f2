import { Router } from 'express';
import { z } from 'zod';
import { bedTrendSchema, boardQuerySchema, boardSchema, latestFlushTestSchema, trendQuerySchema } from '@ebbgate/shared';
import type { AppContext } from '../app-context';
import { defineRoute } from '../http/route';
import { getBoard } from './board.service';
import { getBedTrend, latestFlushTest, trendCsv } from './trend.service';

const bedParams = z.object({ bedId: z.string().min(1).max(64) });

// Board and trends show assessment data, so they need what reading assessments needs.
export function boardRouter(ctx: AppContext): Router {
  const router = Router();
  defineRoute(router, {
    method: 'get',
    path: '/board',
    permission: 'assessments.read',
    tag: 'board',
    summary: 'Every bed at a glance: patient, monitor, latest indices with verdict, main flag, last hour and data state (filter by unit and state, paged)',
    query: boardQuerySchema,
    response: boardSchema,
    handler: ({ query }) => getBoard(ctx, query),
  });
  defineRoute(router, {
    method: 'get',
    path: '/board/beds/:bedId/trend',
    permission: 'assessments.read',
    tag: 'board',
    summary: "A bed's PPV, SPV, ΔPOP, HR and RR over 1–48 h (min/max per bucket when long), with context events and the PPV grey zone",
    params: bedParams,
    query: trendQuerySchema,
    response: bedTrendSchema,
    handler: ({ params, query }) => getBedTrend(ctx, params.bedId, query),
  });
  defineRoute(router, {
    method: 'get',
    path: '/board/beds/:bedId/trend.csv',
    permission: 'assessments.read',
    tag: 'board',
    summary: 'The same trend as CSV (one row per shown point)',
    params: bedParams,
    query: trendQuerySchema,
    handler: async ({ params, query, res }) => {
      const trend = await getBedTrend(ctx, params.bedId, query);
      res
        .type('text/csv')
        .attachment(`trend-${trend.bed.name}-${trend.to.slice(0, 16).replace(/:/g, '')}.csv`)
        .send(trendCsv(trend));
    },
  });
  defineRoute(router, {
    method: 'get',
    path: '/board/monitors/:monitorId/flush-test',
    permission: 'assessments.read',
    tag: 'board',
    summary: "The latest flush test measured on a monitor's arterial line in the last day (natural frequency, damping ratio, Gardner chart region)",
    params: z.object({ monitorId: z.string().min(1).max(64) }),
    response: latestFlushTestSchema,
    handler: async ({ params }) => ({ latest: await latestFlushTest(ctx, params.monitorId) }),
  });
  return router;
}
