import type { Metrics } from '../http/metrics';

/** What the device edge refused or closed, by reason (exported on /metrics when a registry is given). */
export type EdgeEvent =
  | 'source-not-allowed'
  | 'connection-limit'
  | 'source-connection-limit'
  | 'idle-closed'
  | 'frame-timeout'
  | 'tls-handshake-failed'
  | 'stranger-kept'
  | 'stranger-rate-limited'
  | 'unauthorized-sender'
  | 'storage-unavailable'
  | 'monitor-backlog'
  | 'conflicting-stream';

export class EdgeCounters {
  readonly counts = new Map<EdgeEvent, number>();
  private counter: { inc: (labels: { reason: string }) => void } | null = null;
  private bytesCounter: { inc: (n: number) => void } | null = null;
  /** Bytes kept from unauthenticated or unknown senders since start. */
  strangerBytes = 0;

  attach(metrics: Metrics | undefined): void {
    if (!metrics || this.counter) return;
    this.counter = metrics.counter('ebbgate_edge_events_total', 'Connections and messages the device edge refused, closed or limited, by reason', ['reason']);
    this.bytesCounter = metrics.counter('ebbgate_edge_stranger_bytes_total', 'Bytes kept from unauthenticated or unknown senders');
  }

  inc(event: EdgeEvent): void {
    this.counts.set(event, (this.counts.get(event) ?? 0) + 1);
    this.counter?.inc({ reason: event });
  }

  addStrangerBytes(n: number): void {
    this.strangerBytes += n;
    this.bytesCounter?.inc(n);
  }

  get(event: EdgeEvent): number {
    return this.counts.get(event) ?? 0;
  }
}

/** Open connections over every MLLP listener, in total and per source address. */
export class ConnectionGate {
  private total = 0;
  private readonly bySource = new Map<string, number>();

  constructor(
    private readonly maxTotal: number,
    private readonly maxPerSource: number,
  ) {}

  get open(): number {
    return this.total;
  }

  /** Takes a slot, or says which limit is full. */
  acquire(source: string): 'ok' | 'connection-limit' | 'source-connection-limit' {
    if (this.total >= this.maxTotal) return 'connection-limit';
    const n = this.bySource.get(source) ?? 0;
    if (n >= this.maxPerSource) return 'source-connection-limit';
    this.total++;
    this.bySource.set(source, n + 1);
    return 'ok';
  }

  release(source: string): void {
    this.total--;
    const n = (this.bySource.get(source) ?? 1) - 1;
    if (n <= 0) this.bySource.delete(source);
    else this.bySource.set(source, n);
  }
}
