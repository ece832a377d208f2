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
