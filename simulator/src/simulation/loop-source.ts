import type { ChannelRole } from '@ebbgate/shared';
import { BedStream, type StreamChunk } from '../stream/bed-stream';
import type { Scenario } from '../scenarios/types';
import type { ChunkSource } from './monitor-feed';

/**
 * For load runs: one pre-generated stretch per scenario, read in a loop by many monitors at their
 * own offsets (thousands of monitors cannot each run the generator). The loop point is a seam once
 * per loop length; load runs measure throughput, not indices.
 */
export class SharedLoop {
  private readonly chunk: StreamChunk;
  readonly samples: number;

  constructor(
    readonly scenario: Scenario,
    seconds = 120,
    seed = 1,
  ) {
    this.chunk = new BedStream({ scenario, seed, segmentSeconds: seconds + 10 }).read(seconds);
    this.samples = this.chunk.channels[0].samples.length;
  }

  /** A reader starting `offsetSeconds` into the loop. */
  reader(offsetSeconds: number): ChunkSource {
    const fs = 125;
    let pos = Math.round(offsetSeconds * fs) % this.samples;
    const extraRate = this.scenario.unmappedChannel?.sampleRate;
    return {
      read: (seconds: number): StreamChunk => {
        const n = Math.round(seconds * fs);
        const take = (src: Float64Array, at: number, count: number) => {
          const out = new Float64Array(count);
          for (let i = 0; i < count; i++) out[i] = src[(at + i) % src.length];
          return out;
        };
        const channels = this.chunk.channels.map((c) => ({ role: c.role as ChannelRole, unit: c.unit, samples: take(c.samples, pos, n) }));
        const out: StreamChunk = { offset: pos / fs, channels };
        if (extraRate && this.chunk.unmapped) out.unmapped = take(this.chunk.unmapped, Math.round((pos / fs) * extraRate), Math.round(seconds * extraRate));
        pos = (pos + n) % this.samples;
        return out;
      },
    };
  }
}
