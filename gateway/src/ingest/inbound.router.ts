import { Router } from 'express';
import {
  discardInboundSchema,
  idParam,
  inboundMessageDetailSchema,
  inboundMessageSchema,
  inboundQuerySchema,
  pageOf,
  reprocessResultSchema,
  type Transport,
} from '@ebbgate/shared';
import type { AppContext } from '../app-context';
import { defineRoute } from '../http/route';
import type { ReceivedBatch } from './decoded-batch';
import { discardInbound, getInbound, listInbound, reprocessInbound } from './inbound.service';
import type { IngestService } from './ingest.service';

/** The inbound log and its quarantine (outcome = quarantined). */
export function inboundRouter(
  ctx: AppContext,
  service: IngestService,
  decoders: Record<Transport, (raw: Buffer) => ReceivedBatch | Promise<ReceivedBatch>>,
): Router {
  const router = Router();
  const tag = 'ingest';
  defineRoute(router, {
    method: 'get',
    path: '/inbound-messages',
    permission: 'inbound.read',
    tag,
    summary: 'Inbound messages with their outcome (the quarantine is outcome=quarantined)',
    query: inboundQuerySchema,
    response: pageOf(inboundMessageSchema),
    handler: ({ query }) => listInbound(ctx.ds, query),
  });
  defineRoute(router, {
    method: 'get',
    path: '/inbound-messages/:id',
    permission: 'inbound.read',
    tag,
    summary: 'One inbound message with its raw body',
    params: idParam,
    response: inboundMessageDetailSchema,
    handler: ({ params, principal, req }) => getInbound(ctx.ds, params.id, { principal, requestId: String(req.id) }),
  });
  defineRoute(router, {
    method: 'post',
    path: '/inbound-messages/:id/reprocess',
    permission: 'inbound.reprocess',
    tag,
    summary: 'Run a quarantined message through ingest again (after fixing the profile)',
    params: idParam,
    response: reprocessResultSchema,
    handler: ({ params, principal, req }) => reprocessInbound(ctx.ds, service, decoders, params.id, { principal, requestId: String(req.id) }),
  });
  defineRoute(router, {
    method: 'post',
    path: '/inbound-messages/:id/discard',
    permission: 'inbound.discard',
    tag,
    summary: 'Discard a quarantined message, with a reason',
    params: idParam,
    body: discardInboundSchema,
    response: inboundMessageSchema,
    handler: ({ params, body, principal, req }) => discardInbound(ctx.ds, params.id, body.reason, { principal, requestId: String(req.id) }),
  });
  return router;
}
