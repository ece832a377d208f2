import type { AppContext, BackgroundService } from '../app-context';

export interface PurgeCounts {
  segments: number;
  /** Stored data's messages (accepted, duplicate, reprocessed, discarded) past `retentionDays`. */
  inboundMessages: number;
  windows: number;
  /** Rejected and conflicting messages past `rejectedRetentionDays`. */
  rejected: number;
  /** Quarantined messages nobody handled within `quarantineRetentionDays`. */
  quarantined: number;
  /** Strangers' prefixes past `strangers.retentionDays`. */
  strangers: number;
}

const CHUNK = 5_000;

async function deleteInChunks(ctx: AppContext, sql: string, params: unknown[]): Promise<number> {
  let total = 0;
  for (let i = 0; i < 10_000; i++) {
    const res = (await ctx.ds.query(`${sql} LIMIT ${CHUNK}`, params)) as { affectedRows: number };
    total += res.affectedRows;
    if (res.affectedRows < CHUNK) break;
  }
  return total;
}

const before = (now: Date, days: number) => new Date(now.getTime() - days * 86_400_000);

/**
 * Deletes waveform segments, inbound messages and analysis windows older than their retention,
 * in small chunks so ingest is not blocked. Each kind of inbound message has its own period:
 * stored data's messages `retentionDays`, rejected and conflicting ones `rejectedRetentionDays`,
 * quarantined ones (unless handled sooner) `quarantineRetentionDays`, strangers' prefixes
 * `strangers.retentionDays`. Assessments stay.
 */
export async function purgeExpired(ctx: AppContext, now = new Date()): Promise<PurgeCounts> {
  const { ingest } = ctx.config;
  const cutoff = before(now, ingest.retentionDays);
  const segments = await deleteInChunks(ctx, 'DELETE FROM waveform_segment WHERE start_time < ?', [cutoff]);
  const inboundMessages = await deleteInChunks(
    ctx,
    "DELETE FROM inbound_message WHERE received_at < ? AND stranger = 0 AND outcome NOT IN ('quarantined', 'rejected', 'conflicting')",
    [cutoff],
  );
  const rejected = await deleteInChunks(ctx, "DELETE FROM inbound_message WHERE received_at < ? AND stranger = 0 AND outcome IN ('rejected', 'conflicting')", [
    before(now, ingest.rejectedRetentionDays),
  ]);
  const quarantined = await deleteInChunks(ctx, "DELETE FROM inbound_message WHERE received_at < ? AND stranger = 0 AND outcome = 'quarantined'", [
    before(now, ingest.quarantineRetentionDays),
  ]);
  const strangers = await deleteInChunks(ctx, 'DELETE FROM inbound_message WHERE received_at < ? AND stranger = 1', [
    before(now, ingest.strangers.retentionDays),
  ]);
  const windows = await deleteInChunks(ctx, "DELETE FROM analysis_window WHERE window_end < ? AND status <> 'due'", [cutoff]);
  return { segments, inboundMessages, windows, rejected, quarantined, strangers };
}

export class RetentionPurge implements BackgroundService {
  readonly name = 'retention-purge';
  private timer: NodeJS.Timeout | null = null;
  private running: Promise<unknown> | null = null;

  constructor(private readonly ctx: AppContext) {}

  async start(): Promise<void> {
    const every = this.ctx.config.ingest.purgeIntervalMinutes * 60_000;
    const tick = () => {
      this.running = purgeExpired(this.ctx)
        .then((c) => Object.values(c).some((n) => n > 0) && this.ctx.logger.info(c, 'retention purge'))
        .catch((err: unknown) => this.ctx.logger.error({ err }, 'retention purge failed'));
    };
    this.timer = setInterval(tick, every);
    this.timer.unref();
  }

  async stop(): Promise<void> {
    if (this.timer) clearInterval(this.timer);
    await this.running;
  }
}
