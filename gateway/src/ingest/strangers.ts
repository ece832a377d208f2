import type { AppContext } from '../app-context';
import type { EdgeCounters } from './edge-counters';
import { recordInbound, type InboundRecord } from './inbound-store';

/**
 * What strangers (no key, an unknown or revoked key, a certificate that does not cover the
 * monitor) can make the gateway store: the metadata and the first `keepBytes` of the message,
 * at most `perSourcePerMinute` records per source address (beyond that only counted), purged
 * after their own retention. A stranger cannot fill the database or the quarantine.
 */
export class StrangerKeeper {
  private readonly windows = new Map<string, { start: number; n: number }>();

  constructor(
    private readonly ctx: AppContext,
    private readonly counters: EdgeCounters,
  ) {}

  /** Keeps the record (capped) unless the source is over its rate; returns the message id or null. */
  async keep(r: InboundRecord & { sourceAddress: string | null }): Promise<string | null> {
    const { keepBytes, perSourcePerMinute } = this.ctx.config.ingest.strangers;
    const now = Date.now();
    const src = r.sourceAddress ?? 'unknown';
    let w = this.windows.get(src);
    if (!w || now - w.start >= 60_000) {
      if (this.windows.size > 10_000) this.windows.clear();
      this.windows.set(src, (w = { start: now, n: 0 }));
    }
    if (++w.n > perSourcePerMinute) {
      this.counters.inc('stranger-rate-limited');
      return null;
    }
    const size = r.sizeBytes ?? r.raw.length;
    const raw = r.raw.length > keepBytes ? Buffer.from(r.raw.subarray(0, keepBytes)) : r.raw;
    const note = raw.length < size ? ` Only the first ${raw.length} of ${size} bytes are kept (unauthenticated sender).` : '';
    const id = await recordInbound(this.ctx.ds, { ...r, raw, sizeBytes: size, reason: `${r.reason ?? ''}${note}`, stranger: true });
    this.counters.inc('stranger-kept');
    this.counters.addStrangerBytes(raw.length);
    return id;
  }
}
