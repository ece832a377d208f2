import type { Router } from 'express';
import type { Transport } from '@ebbgate/shared';
import type { AppContext, BackgroundService } from '../app-context';
import type { Metrics } from '../http/metrics';
import { decodeJsonBatch, type ReceivedBatch } from './decoded-batch';
import { ConnectionGate } from './edge-counters';
import { edgeCredentialsRouter } from './edge-credentials.router';
import { inboundRouter } from './inbound.router';
import { ingestRouter } from './ingest.router';
import { IngestService } from './ingest.service';
import { RetentionPurge } from './retention';
import { MllpListener } from './hl7/mllp-listener';
import { decodePcd01Async } from './hl7/pcd01';

export interface IngestCapability {
  service: IngestService;
  rawBodyRouters: Router[];
  routers: Router[];
  services: BackgroundService[];
  mllp: MllpListener | null;
  /** MLLP over TLS with client certificates (mllp.tls.enabled). */
  mllpTls: MllpListener | null;
}

/** How each transport's raw message becomes a batch (used on arrival and on reprocess). */
export function ingestDecoders(): Record<Transport, (raw: Buffer) => ReceivedBatch | Promise<ReceivedBatch>> {
  return {
    http: decodeJsonBatch,
    mllp: async (raw) => (await decodePcd01Async(raw)).batch,
  };
}

export function buildIngest(ctx: AppContext, metrics?: Metrics): IngestCapability {
  const service = new IngestService(ctx);
  service.counters.attach(metrics);
  const decoders = ingestDecoders();
  const { mllp: cfg } = ctx.config;
  // One connection budget for both listeners: a flood on one cannot starve the other of slots beyond the totals.
  const gate = new ConnectionGate(cfg.maxConnections, cfg.maxConnectionsPerSource);
  const mllp = cfg.enabled ? new MllpListener(ctx, service, { kind: 'plain', gate }) : null;
  const mllpTls = cfg.tls.enabled ? new MllpListener(ctx, service, { kind: 'tls', gate }) : null;
  return {
    mllp,
    mllpTls,
    service,
    rawBodyRouters: [ingestRouter(ctx, service)],
    routers: [inboundRouter(ctx, service, decoders), edgeCredentialsRouter(ctx, service.directory)],
    services: [...(mllp ? [mllp] : []), ...(mllpTls ? [mllpTls] : []), new RetentionPurge(ctx)],
  };
}
