import type { IngestBatch } from '@ebbgate/shared';
import { SampleBatcher, type BatcherChannel } from '../adapter/sample-batcher';
import { channelCodesFor } from '../scenarios/monitor-models';
import { scenarioContext } from '../scenarios/spec';
import type { Scenario } from '../scenarios/types';
import type { StreamChunk } from '../stream/bed-stream';

/** Something that yields the next seconds of one bed (an own BedStream, or a shared loop under load). */
export interface ChunkSource {
  read(seconds: number): StreamChunk;
}

export interface MonitorFeedOptions {
  identifier: string;
  scenario: Scenario;
  source: ChunkSource;
  transport: 'http' | 'mllp';
  batchSeconds: number;
  /** Time of the first sample (in the past for a backfill). */
  startTime: Date;
}

/**
 * One simulated monitor: cuts its bed's stream into batches on the monitor's time base. `due(now)`
 * returns every whole batch whose last sample lies at or before `now`, so a start time in the past
 * sends the backfill at once and real time thereafter.
 */
export class MonitorFeed {
  private readonly batcher: SampleBatcher;
  private readonly codes: Record<string, string>;
  private produced = 0;

  constructor(private readonly opts: MonitorFeedOptions) {
    const codes = channelCodesFor(opts.transport);
    this.codes = codes;
    const channels: BatcherChannel[] = opts.scenario.channels.map((role) => ({
      code: codes[role],
      sampleRate: 125,
      unit: role === 'pleth' ? '1' : role === 'paw' ? 'cmH2O' : 'mmHg',
    }));
    const extra = opts.scenario.unmappedChannel;
    if (extra) channels.push({ code: extra.code, sampleRate: extra.sampleRate, unit: extra.unit });
    this.batcher = new SampleBatcher({
      monitorId: opts.identifier,
      channels,
      batchSeconds: opts.batchSeconds,
      startTime: opts.startTime,
      // Batch ids are random UUIDs: a restarted simulator generates other samples for the same
      // times, which must count as an overlap, not as a 409 conflict on a reused id.
      context: scenarioContext(opts.scenario),
    });
  }

  get identifier(): string {
    return this.opts.identifier;
  }

  get scenario(): Scenario {
    return this.opts.scenario;
  }

  /** End time of the next batch. */
  get nextBatchEnd(): number {
    return this.opts.startTime.getTime() + (this.produced + 1) * this.opts.batchSeconds * 1000;
  }

  due(now: number): IngestBatch[] {
    const out: IngestBatch[] = [];
    while (this.nextBatchEnd <= now) {
      const chunk = this.opts.source.read(this.opts.batchSeconds);
      // A stream that changes the context (tidal volume challenge) says so per chunk: each batch carries its own.
      if (chunk.context) this.batcher.setContext(chunk.context);
      for (const c of chunk.channels) out.push(...this.batcher.push(this.codes[c.role], c.samples));
      if (chunk.unmapped && this.opts.scenario.unmappedChannel) out.push(...this.batcher.push(this.opts.scenario.unmappedChannel.code, chunk.unmapped));
      this.produced++;
    }
    return out;
  }
}
