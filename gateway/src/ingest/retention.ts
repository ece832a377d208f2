import type { AppContext, BackgroundService } from '../app-context';

export interface PurgeCounts {
  segments: number;
  inboundMessages: number;
  windows: number;
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

/**
 * Deletes waveform segments, inbound messages and analysis windows older than the retention
 * period, in small chunks so ingest is not blocked. Quarantined messages stay until an
 * integrator reprocesses or discards them (nothing inbound is lost unseen); assessments stay.
 */
export async function purgeExpired(ctx: AppContext, now = new Date()): Promise<PurgeCounts> {
  const cutoff = new Date(now.getTime() - ctx.config.ingest.retentionDays * 86_400_000);
  const segments = await deleteInChunks(ctx, 'DELETE FROM waveform_segment WHERE start_time < ?', [cutoff]);
  const inboundMessages = await deleteInChunks(ctx, "DELETE FROM inbound_message WHERE received_at < ? AND outcome <> 'quarantined'", [cutoff]);
  const windows = await deleteInChunks(ctx, "DELETE FROM analysis_window WHERE window_end < ? AND status <> 'due'", [cutoff]);
  return { segments, inboundMessages, windows };
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
        .then((c) => (c.segments || c.inboundMessages || c.windows) && this.ctx.logger.info(c, 'retention purge'))
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
