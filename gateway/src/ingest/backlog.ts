import type { DataSource } from 'typeorm';

/**
 * Number of analysis windows waiting, read at most once per second per process: ingest asks on
 * every batch, and an exact figure matters less than not adding a query to the hot path.
 */
export class BacklogGauge {
  private value = 0;
  private readAt = 0;
  private pending: Promise<number> | null = null;

  constructor(
    private readonly ds: DataSource,
    private readonly maxAgeMs = 1_000,
  ) {}

  async current(): Promise<number> {
    if (Date.now() - this.readAt < this.maxAgeMs) return this.value;
    this.pending ??= this.ds
      .query("SELECT COUNT(*) AS n FROM analysis_window WHERE status = 'due'")
      .then((rows: { n: string | number }[]) => {
        this.value = Number(rows[0]?.n ?? 0);
        this.readAt = Date.now();
        return this.value;
      })
      .finally(() => {
        this.pending = null;
      });
    return this.pending;
  }
}

/**
 * Analysis windows waiting per monitor (read at most once per second per monitor), so one sender
 * flooding its monitor meets its own quota instead of pushing every monitor into 429.
 */
export class MonitorBacklog {
  private readonly cache = new Map<string, { value: number; readAt: number }>();

  constructor(
    private readonly ds: DataSource,
    private readonly maxAgeMs = 1_000,
  ) {}

  async current(monitorId: string): Promise<number> {
    const hit = this.cache.get(monitorId);
    if (hit && Date.now() - hit.readAt < this.maxAgeMs) return hit.value;
    const rows = (await this.ds.query("SELECT COUNT(*) AS n FROM analysis_window WHERE monitor_id = ? AND status = 'due'", [monitorId])) as {
      n: string | number;
    }[];
    const value = Number(rows[0]?.n ?? 0);
    if (this.cache.size > 50_000) this.cache.clear();
    this.cache.set(monitorId, { value, readAt: Date.now() });
    return value;
  }
}
