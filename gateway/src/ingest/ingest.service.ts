import type { Transport } from '@ebbgate/shared';
import type { AppContext } from '../app-context';
import { monitorForIngest } from '../devices/device-cache';
import { getSiteSettings } from '../settings/settings.service';
import { BacklogGauge, MonitorBacklog } from './backlog';
import { mapChannels, type MappedChannel } from './channel-mapping';
import type { ReceivedBatch } from './decoded-batch';
import { EdgeCounters } from './edge-counters';
import { EdgeDirectory } from './edge-directory';
import { recordInbound, storeBatch, type InboundRecord, type StoredBatch } from './inbound-store';
import { IngestRefusal } from './refusal';
import { senderLabel, type Sender } from './sender';
import { StrangerKeeper } from './strangers';

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
  decode: (raw: Buffer) => ReceivedBatch | Promise<ReceivedBatch>;
  /** The monitor the sender authenticated as (HTTP API key); the batch must name the same one. */
  authenticatedMonitor?: { id: string; identifier: string };
  /** Who the edge established sent it (key, certificate, allowed source); stored with the message. */
  sender?: Sender;
}

/** What a caller without valid credentials sent (HTTP: no key, unknown or revoked key, a person). */
export interface StrangerRecord {
  transport: Transport;
  receivedAt: Date;
  reason: string;
  raw: Buffer;
  sizeBytes: number;
  sourceAddress: string | null;
}

/**
 * The one ingest pipeline for every transport: backlog check → decode → monitor and profile →
 * sender covers the monitor → the monitor's own backlog quota → channel mapping → one storage
 * transaction. Whatever happens, the message is kept with its outcome (quarantined messages can
 * be reprocessed once the profile is fixed); a stranger's only as a capped prefix.
 */
export class IngestService {
  readonly backlog: BacklogGauge;
  readonly monitorBacklog: MonitorBacklog;
  readonly counters = new EdgeCounters();
  readonly directory: EdgeDirectory;
  readonly strangers: StrangerKeeper;

  constructor(private readonly ctx: AppContext) {
    this.backlog = new BacklogGauge(ctx.ds);
    this.monitorBacklog = new MonitorBacklog(ctx.ds);
    this.directory = new EdgeDirectory(ctx.ds, ctx.config.mllp.allowedSources);
    this.strangers = new StrangerKeeper(ctx, this.counters);
  }

  /** Window length is a site setting (admin, at run time); the step and gap reset are config. */
  private async settings() {
    const { analysis, ingest } = this.ctx.config;
    const site = await getSiteSettings(this.ctx);
    return {
      windowSeconds: site.analysis.windowSeconds ?? analysis.windowSeconds,
      stepSeconds: analysis.stepSeconds,
      gapResetSeconds: ingest.gapResetSeconds,
      groupCommit: ingest.groupCommit,
    };
  }

  async ingest(req: IngestRequest): Promise<IngestOutcome> {
    let batch: ReceivedBatch | undefined;
    let monitorId: string | null = req.authenticatedMonitor?.id ?? null;
    const { ingest } = this.ctx.config;
    try {
      if ((await this.backlog.current()) > ingest.backlogLimit) {
        throw new IngestRefusal('backlog', `The analysis backlog is over its limit (${ingest.backlogLimit} windows); send this batch again later.`);
      }
      batch = await req.decode(req.raw);
      if (req.authenticatedMonitor && batch.monitorIdentifier !== req.authenticatedMonitor.identifier) {
        throw new IngestRefusal(
          'unmapped',
          `The batch names monitor ${batch.monitorIdentifier}, but the API key belongs to ${req.authenticatedMonitor.identifier}.`,
          [{ path: 'monitorId', message: 'does not match the API key' }],
        );
      }
      const monitor = await monitorForIngest(this.ctx.ds, batch.monitorIdentifier);
      await this.directory.checkCovers(req.sender, monitor, batch.monitorIdentifier);
      monitorId = monitor?.id ?? monitorId;
      if (monitor && (await this.monitorBacklog.current(monitor.id)) > ingest.monitorBacklogLimit) {
        this.counters.inc('monitor-backlog');
        throw new IngestRefusal(
          'backlog',
          `Monitor ${monitor.identifier} has over ${ingest.monitorBacklogLimit} analysis windows waiting; send this batch again later.`,
        );
      }
      const channels = mapChannels(batch, monitor, req.transport);
      const stored = await storeBatch(
        this.ctx.ds,
        {
          transport: req.transport,
          receivedAt: req.receivedAt,
          raw: req.raw,
          monitor: monitor!,
          batch,
          channels,
          sender: senderLabel(req.sender),
          sourceAddress: req.sender?.address ?? null,
        },
        await this.settings(),
      );
      return { stored: { ...stored, channels, batch }, inboundMessageId: stored.inboundMessageId };
    } catch (err) {
      if (!(err instanceof IngestRefusal)) throw err;
      if (err.kind === 'conflict' || err.kind === 'conflicting') {
        if (err.kind === 'conflicting') this.counters.inc('conflicting-stream');
        if (err.kind === 'conflicting')
          this.ctx.logger.warn({ monitor: batch?.monitorIdentifier, sender: senderLabel(req.sender) }, 'second stream for a monitor refused (conflicting)');
        return { refusal: err, inboundMessageId: '' }; // already kept by storeBatch
      }
      const record: InboundRecord = {
        transport: req.transport,
        receivedAt: req.receivedAt,
        outcome: err.quarantines ? 'quarantined' : 'rejected',
        reason: err.describe(),
        raw: req.raw,
        monitorId,
        monitorIdentifier: batch?.monitorIdentifier ?? req.authenticatedMonitor?.identifier ?? null,
        batchId: batch?.batchId ?? null,
        sender: senderLabel(req.sender),
        sourceAddress: req.sender?.address ?? null,
      };
      if (err.kind === 'unauthorized') {
        // The sender does not speak for this monitor: a stranger to it, so only a prefix is kept.
        this.counters.inc('unauthorized-sender');
        const id = await this.strangers.keep({ ...record, monitorId: null, sourceAddress: req.sender?.address ?? null });
        return { refusal: err, inboundMessageId: id ?? '' };
      }
      return { refusal: err, inboundMessageId: await recordInbound(this.ctx.ds, record) };
    }
  }

  /** Keeps what a caller without valid credentials sent (capped, rate-limited); null when over the rate. */
  keepStranger(r: StrangerRecord): Promise<string | null> {
    return this.strangers.keep({ ...r, outcome: 'rejected', monitorId: null, monitorIdentifier: null });
  }

  /** Keeps a message refused before the pipeline (too large), with the authenticated sender. */
  keepRefused(r: InboundRecord): Promise<string> {
    return recordInbound(this.ctx.ds, r);
  }

  /**
   * Re-runs a quarantined message through the pipeline (after a profile fix). The data can only
   * be filed under a monitor the original sender speaks for: the API key's monitor, or one the
   * certificate or source covers (checked again now, against the registered credentials).
   */
  async reprocess(
    messageId: string,
    transport: Transport,
    raw: Buffer,
    decode: (raw: Buffer) => ReceivedBatch | Promise<ReceivedBatch>,
    handledBy: string | null,
    original?: { sender: string | null; sourceAddress: string | null; monitorId: string | null },
  ): Promise<IngestOutcome> {
    const batch = await decode(raw);
    const monitor = await monitorForIngest(this.ctx.ds, batch.monitorIdentifier);
    await this.checkReprocessIdentity(original, monitor, batch.monitorIdentifier);
    const channels = mapChannels(batch, monitor, transport);
    const stored = await storeBatch(
      this.ctx.ds,
      {
        transport,
        receivedAt: new Date(),
        raw,
        monitor: monitor!,
        batch,
        channels,
        reprocessOf: messageId,
        handledBy,
        sender: original?.sender ?? null,
        sourceAddress: original?.sourceAddress ?? null,
      },
      await this.settings(),
    );
    return { stored: { ...stored, channels, batch }, inboundMessageId: stored.inboundMessageId };
  }

  private async checkReprocessIdentity(
    original: { sender: string | null; sourceAddress: string | null; monitorId: string | null } | undefined,
    monitor: Awaited<ReturnType<typeof monitorForIngest>>,
    identifier: string,
  ): Promise<void> {
    if (!original) return;
    const s = original.sender;
    if (s?.startsWith('api-key:')) {
      if (s.slice('api-key:'.length) !== identifier) {
        throw new IngestRefusal('unauthorized', `The message came with the API key of monitor ${s.slice(8)}; it cannot be filed under monitor ${identifier}.`, [
          { path: 'monitorId', message: 'not the monitor of the sending key' },
        ]);
      }
      return;
    }
    if (s?.startsWith('certificate:')) {
      const [fp = '', ...subj] = s.slice('certificate:'.length).split(' ');
      const subject = subj.join(' ');
      const cn = /(?:^|,)CN=([^,]*)/.exec(subject)?.[1] ?? '';
      await this.directory.checkCovers({ kind: 'certificate', fingerprint: fp, subject, commonName: cn, address: original.sourceAddress }, monitor, identifier);
      return;
    }
    if (s?.startsWith('source:')) {
      await this.directory.checkCovers({ kind: 'source', address: s.slice('source:'.length) }, monitor, identifier);
    }
  }
}
