import { randomUUID } from 'node:crypto';
import { encodeSamplesFloat32, type AnalysisContext, type IngestBatch } from '@ebbgate/shared';

export interface BatcherChannel {
  /** Inbound code as the monitor profile knows it (MDC code or the adapter's own label). */
  code: string;
  sampleRate: number;
  unit?: string;
}

export interface SampleBatcherOptions {
  monitorId: string;
  channels: BatcherChannel[];
  /** Length of each batch, s (default 5). */
  batchSeconds?: number;
  /** Time of the first sample pushed. */
  startTime: Date;
  context?: AnalysisContext;
  /** Idempotency key of each batch (default a random UUID; it is kept with the batch in the spool). */
  batchId?: (monitorId: string, startTime: Date) => string;
  /** JSON number arrays instead of base64 float32 (larger; easier to read in captures). */
  plainSamples?: boolean;
}

/**
 * Collects samples of one monitor as they arrive, in any chunk size per channel, and cuts them
 * into batches of whole seconds with a time base derived from the sample count (not the clock),
 * so consecutive batches tile exactly: batch k starts at startTime + k · batchSeconds.
 */
export class SampleBatcher {
  private readonly buffers: number[][];
  private emittedSeconds = 0;
  private context: AnalysisContext | undefined;
  readonly batchSeconds: number;

  constructor(private readonly opts: SampleBatcherOptions) {
    this.batchSeconds = opts.batchSeconds ?? 5;
    this.buffers = opts.channels.map(() => []);
    this.context = opts.context;
    for (const c of opts.channels) {
      const n = c.sampleRate * this.batchSeconds;
      if (Math.abs(n - Math.round(n)) > 1e-9) throw new RangeError(`${c.code}: ${c.sampleRate} Hz × ${this.batchSeconds} s is not a whole number of samples`);
    }
  }

  /** Context sent with every following batch (ventilator settings, tidal volume …). */
  setContext(context: AnalysisContext | undefined): void {
    this.context = context;
  }

  /** Appends samples of one channel (NaN marks a gap); returns the batches now complete. */
  push(code: string, samples: ArrayLike<number>): IngestBatch[] {
    const k = this.opts.channels.findIndex((c) => c.code === code);
    if (k < 0) throw new RangeError(`unknown channel ${code}`);
    const buf = this.buffers[k];
    for (let i = 0; i < samples.length; i++) buf.push(samples[i]);
    return this.take(false);
  }

  /** Emits whatever is buffered as a last, shorter batch (channels cut to the same duration). */
  flush(): IngestBatch[] {
    return this.take(true);
  }

  private take(partial: boolean): IngestBatch[] {
    const out: IngestBatch[] = [];
    for (;;) {
      const seconds = Math.min(...this.opts.channels.map((c, k) => this.buffers[k].length / c.sampleRate));
      const span = seconds >= this.batchSeconds ? this.batchSeconds : partial ? Math.floor(seconds) : 0;
      if (span <= 0) return out;
      out.push(this.cut(span));
    }
  }

  private cut(seconds: number): IngestBatch {
    const start = new Date(this.opts.startTime.getTime() + Math.round(this.emittedSeconds * 1000));
    const channels = this.opts.channels.map((c, k) => {
      const n = Math.round(c.sampleRate * seconds);
      const values = this.buffers[k].splice(0, n);
      const samples = this.opts.plainSamples ? values.map((v) => (Number.isNaN(v) ? null : v)) : encodeSamplesFloat32(values);
      return { code: c.code, sampleRate: c.sampleRate, ...(c.unit ? { unit: c.unit } : {}), samples };
    });
    this.emittedSeconds += seconds;
    const batchId = this.opts.batchId?.(this.opts.monitorId, start) ?? randomUUID();
    return { monitorId: this.opts.monitorId, batchId, startTime: start.toISOString(), channels, ...(this.context ? { context: this.context } : {}) };
  }
}
