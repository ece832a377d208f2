import { Router } from 'express';
import { z } from 'zod';
import {
  deliveryActionResultSchema,
  deliveryDetailSchema,
  deliveryIdsSchema,
  deliveryQuerySchema,
  deliverySchema,
  destinationSchema,
  discardDeliverySchema,
  pageOf,
} from '@ebbgate/shared';
import type { AppContext } from '../app-context';
import { defineRoute } from '../http/route';
import { discardDelivery, getDelivery, listDeliveries, listDestinations, requeue, setPaused } from './deliveries.service';

const deliveryId = z.object({ id: z.string().regex(/^\d+$/, 'a delivery id (digits)') });
const destinationId = z.object({ id: z.string().min(1).max(64) });

export function deliveriesRouter(ctx: AppContext): Router {
  const router = Router();
  const act = (principal: Parameters<typeof requeue>[3]['principal'], req: { id?: unknown }) => ({ principal, requestId: String(req.id) });

  defineRoute(router, {
    method: 'get',
    path: '/deliveries',
    permission: 'deliveries.read',
    tag: 'delivery',
    summary: 'Outbox rows (one per result per destination) with filters: status, destination, assessment, index, kind, from/to (last change)',
    query: deliveryQuerySchema,
    response: pageOf(deliverySchema),
    handler: ({ query }) => listDeliveries(ctx.ds, query),
  });
  defineRoute(router, {
    method: 'get',
    path: '/deliveries/:id',
    permission: 'deliveries.read',
    tag: 'delivery',
    summary: 'One delivery with the payload as sent and every attempt with the EHR answer (OperationOutcome)',
    params: deliveryId,
    response: deliveryDetailSchema,
    handler: ({ params }) => getDelivery(ctx.ds, params.id),
  });
  defineRoute(router, {
    method: 'post',
    path: '/deliveries/retry',
    permission: 'deliveries.write',
    tag: 'delivery',
    summary: 'Send the kept payload of these deliveries again with a fresh retry budget (audited)',
    body: deliveryIdsSchema,
    response: deliveryActionResultSchema,
    handler: ({ body, principal, req }) => requeue(ctx.ds, body.ids, 'retry', act(principal, req)),
  });
  defineRoute(router, {
    method: 'post',
    path: '/deliveries/replay',
    permission: 'deliveries.write',
    tag: 'delivery',
    summary: 'Rebuild (patient context, codes, settings as now) and send again, e.g. after a fix; idempotent by identifier (audited)',
    body: deliveryIdsSchema,
    response: deliveryActionResultSchema,
    handler: ({ body, principal, req }) => requeue(ctx.ds, body.ids, 'replay', act(principal, req)),
  });
  defineRoute(router, {
    method: 'post',
    path: '/deliveries/:id/discard',
    permission: 'deliveries.write',
    tag: 'delivery',
    summary: 'Stop trying to deliver this result, with a reason (audited)',
    params: deliveryId,
    body: discardDeliverySchema,
    response: deliverySchema,
    handler: ({ params, body, principal, req }) => discardDelivery(ctx.ds, params.id, body.reason, act(principal, req)),
  });
  defineRoute(router, {
    method: 'get',
    path: '/destinations',
    permission: 'destinations.read',
    tag: 'delivery',
    summary: 'Delivery destinations with health, circuit state and queue depth',
    response: z.array(destinationSchema),
    handler: () => listDestinations(ctx.ds),
  });
  defineRoute(router, {
    method: 'post',
    path: '/destinations/:id/pause',
    permission: 'destinations.write',
    tag: 'delivery',
    summary: 'Pause delivery to a destination (results keep queueing; audited)',
    params: destinationId,
    response: destinationSchema,
    handler: ({ params, principal, req }) => setPaused(ctx.ds, params.id, true, act(principal, req)),
  });
  defineRoute(router, {
    method: 'post',
    path: '/destinations/:id/resume',
    permission: 'destinations.write',
    tag: 'delivery',
    summary: 'Resume delivery to a paused destination (audited)',
    params: destinationId,
    response: destinationSchema,
    handler: ({ params, principal, req }) => setPaused(ctx.ds, params.id, false, act(principal, req)),
  });
  return router;
}
