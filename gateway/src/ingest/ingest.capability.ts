import type { Router } from 'express';
import type { Transport } from '@ebbgate/shared';
import type { AppContext, BackgroundService } from '../app-context';
import { decodeJsonBatch, type ReceivedBatch } from './decoded-batch';
import { inboundRouter } from './inbound.router';
import { ingestRouter } from './ingest.router';
import { IngestService } from './ingest.service';
import { RetentionPurge } from './retention';
import { MllpListener } from './hl7/mllp-listener';
import { decodePcd01 } from './hl7/pcd01';

export interface IngestCapability {
  service: IngestService;
  rawBodyRouters: Router[];
  routers: Router[];
  services: BackgroundService[];
  mllp: MllpListener | null;
}

/** How each transport's raw message becomes a batch (used on arrival and on reprocess). */
export function ingestDecoders(): Record<Transport, (raw: Buffer) => ReceivedBatch> {
  return {
    http: decodeJsonBatch,
    mllp: (raw) => decodePcd01(raw).batch,
  };
}

export function buildIngest(ctx: AppContext): IngestCapability {
  const service = new IngestService(ctx);
  const decoders = ingestDecoders();
  const mllp = ctx.config.mllp.enabled ? new MllpListener(ctx, service) : null;
  return {
    mllp,
    service,
    rawBodyRouters: [ingestRouter(ctx, service)],
    routers: [inboundRouter(ctx, service, decoders)],
    services: [...(mllp ? [mllp] : []), new RetentionPurge(ctx)],
  };
}
