import type { Transport } from '@ebbgate/shared';
import type { AppContext } from '../app-context';
import { monitorForIngest } from '../devices/device-cache';
import { getSiteSettings } from '../settings/settings.service';
import { BacklogGauge } from './backlog';
import { mapChannels, type MappedChannel } from './channel-mapping';
import type { ReceivedBatch } from './decoded-batch';
import { recordInbound, storeBatch, type StoredBatch } from './inbound-store';
import { IngestRefusal } from './refusal';

export interface IngestOutcome {
  /** `accepted`/`duplicate` carry the stored batch; refusals carry the reason and the kept message. */
  stored?: StoredBatch & { channels: MappedChannel[]; batch: ReceivedBatch };
  refusal?: IngestRefusal;
  inboundMessageId: string;
}

export interface IngestRequest {
  transport: Transport;
  raw: Buffer;
  receivedAt: Date;
  /** Turns the raw message into a batch; throws IngestRefusal('invalid') with field errors. */
  decode: (raw: Buffer) => ReceivedBatch;
  /** The monitor the sender authenticated as (HTTP API key); the batch must name the same one. */
  authenticatedMonitor?: { id: string; identifier: string };
}

/**
 * The one ingest pipeline for every transport: backlog check → decode → monitor and profile →
 * channel mapping → one storage transaction. Whatever happens, the raw message is kept with
 * its outcome (quarantined messages can be reprocessed once the profile is fixed).
 */
export class IngestService {
  readonly backlog: BacklogGauge;

  constructor(private readonly ctx: AppContext) {
    this.backlog = new BacklogGauge(ctx.ds);
  }

  /** Window length is a site setting (admin, at run time); the step and gap reset are config. */
  private async settings() {
    const { analysis, ingest } = this.ctx.config;
    const site = await getSiteSettings(this.ctx);
    return { windowSeconds: site.analysis.windowSeconds ?? analysis.windowSeconds, stepSeconds: analysis.stepSeconds, gapResetSeconds: ingest.gapResetSeconds };
  }

  async ingest(req: IngestRequest): Promise<IngestOutcome> {
    let batch: ReceivedBatch | undefined;
    let monitorId: string | null = req.authenticatedMonitor?.id ?? null;
    try {
      if ((await this.backlog.current()) > this.ctx.config.ingest.backlogLimit) {
        throw new IngestRefusal('backlog', `The analysis backlog is over its limit (${this.ctx.config.ingest.backlogLimit} windows); send this batch again later.`);
      }
      batch = req.decode(req.raw);
      if (req.authenticatedMonitor && batch.monitorIdentifier !== req.authenticatedMonitor.identifier) {
        throw new IngestRefusal('unmapped', `The batch names monitor ${batch.monitorIdentifier}, but the API key belongs to ${req.authenticatedMonitor.identifier}.`, [
          { path: 'monitorId', message: 'does not match the API key' },
        ]);
      }
      const monitor = await monitorForIngest(this.ctx.ds, batch.monitorIdentifier);
      monitorId = monitor?.id ?? monitorId;
      const channels = mapChannels(batch, monitor, req.transport);
      const stored = await storeBatch(this.ctx.ds, { transport: req.transport, receivedAt: req.receivedAt, raw: req.raw, monitor: monitor!, batch, channels }, await this.settings());
      return { stored: { ...stored, channels, batch }, inboundMessageId: stored.inboundMessageId };
    } catch (err) {
      if (!(err instanceof IngestRefusal)) throw err;
      if (err.kind === 'conflict') return { refusal: err, inboundMessageId: '' }; // already kept by storeBatch
      const id = await recordInbound(this.ctx.ds, {
        transport: req.transport,
        receivedAt: req.receivedAt,
        outcome: err.quarantines ? 'quarantined' : 'rejected',
        reason: err.describe(),
        raw: req.raw,
        monitorId,
        monitorIdentifier: batch?.monitorIdentifier ?? req.authenticatedMonitor?.identifier ?? null,
        batchId: batch?.batchId ?? null,
      });
      return { refusal: err, inboundMessageId: id };
    }
  }

  /** Re-runs a quarantined message through the pipeline (after a profile fix). */
  async reprocess(messageId: string, transport: Transport, raw: Buffer, decode: (raw: Buffer) => ReceivedBatch, handledBy: string | null): Promise<IngestOutcome> {
    const batch = decode(raw);
    const monitor = await monitorForIngest(this.ctx.ds, batch.monitorIdentifier);
    const channels = mapChannels(batch, monitor, transport);
    const stored = await storeBatch(this.ctx.ds, { transport, receivedAt: new Date(), raw, monitor: monitor!, batch, channels, reprocessOf: messageId, handledBy }, await this.settings());
    return { stored: { ...stored, channels, batch }, inboundMessageId: stored.inboundMessageId };
  }
}
