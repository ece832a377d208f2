import type { Router } from 'express';
import type { Transport } from '@ebbgate/shared';
import type { AppContext } from '../app-context';
import type { BackgroundService } from '../capabilities';
import { decodeJsonBatch, type ReceivedBatch } from './decoded-batch';
import { inboundRouter } from './inbound.router';
import { ingestRouter } from './ingest.router';
import { IngestService } from './ingest.service';
import { IngestRefusal } from './refusal';

export interface IngestCapability {
  service: IngestService;
  rawBodyRouters: Router[];
  routers: Router[];
  services: BackgroundService[];
}

/** How each transport's raw message becomes a batch (used on arrival and on reprocess). */
export function ingestDecoders(): Record<Transport, (raw: Buffer) => ReceivedBatch> {
  return {
    http: decodeJsonBatch,
    mllp: () => {
      throw new IngestRefusal('invalid', 'HL7 decoding is not available.');
    },
  };
}

export function buildIngest(ctx: AppContext): IngestCapability {
  const service = new IngestService(ctx);
  const decoders = ingestDecoders();
  return {
    service,
    rawBodyRouters: [ingestRouter(ctx, service)],
    routers: [inboundRouter(ctx, service, decoders)],
    services: [],
  };
}
