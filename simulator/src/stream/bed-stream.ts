import type { AnalysisContext, ChannelRole } from '@ebbgate/shared';
import { generateChallenge, generateWindow, type SyntheticChallenge, type SyntheticWindow, type TruthCycle } from '@ebbgate/shared/synthetic';
import { scenarioSpec } from '../scenarios/spec';
import type { Scenario } from '../scenarios/types';

export interface BedStreamOptions {
  scenario: Scenario;
  seed: number;
  /** Length of each generated stretch, s (default 300). */
  segmentSeconds?: number;
  sampleRate?: number;
  /** Keep every generated stretch so `truthCycles` can answer for the past (tests). */
  keepTruth?: boolean;
}

interface Segment {
  window: SyntheticWindow;
  /** Kept samples [first, end) of the generated window: from one arterial beat foot to another. */
  first: number;
  end: number;
  /** Stream sample index of sample `first`. */
  start: number;
  /** The batch context of this stretch (challenge scenarios: its own tidal volume). */
  context?: AnalysisContext;
}

export interface StreamChunk {
  /** Stream time of the first sample, s. */
  offset: number;
  channels: { role: ChannelRole; unit: string; samples: Float64Array }[];
  /** The scenario's unmapped extra channel, when it has one. */
  unmapped?: Float64Array;
  /** Context in force at the chunk's first sample, when the stream changes it (tidal volume challenge). */
  context?: AnalysisContext;
}

/** One challenge (low volume, then high) as generated, with its stream start time, s. */
export interface ChallengeTruth {
  startTime: number;
  stepTime: number;
  truth: SyntheticChallenge['truth'];
}

/**
 * An endless stream of one bed, cut from long windows of the shared synthetic generator (which
 * makes one window at a time). Stretches are joined at arterial beat feet, so the pressure is
 * continuous at the join; the breath grid restarts there (one odd respiratory cycle per stretch).
 */
export class BedStream {
  readonly sampleRate: number;
  private readonly segmentSeconds: number;
  private segments: Segment[] = [];
  private challenges: ChallengeTruth[] = [];
  private history: Segment[] = [];
  private generated = 0;
  /** Stream sample index where the next generated stretch begins. */
  private nextStart = 0;
  /** Samples handed out so far. */
  private position = 0;

  constructor(private readonly opts: BedStreamOptions) {
    this.sampleRate = opts.sampleRate ?? 125;
    this.segmentSeconds = opts.segmentSeconds ?? 300;
  }

  get scenario(): Scenario {
    return this.opts.scenario;
  }

  /** Stream time of the next sample, s. */
  get time(): number {
    return this.position / this.sampleRate;
  }

  /** The next `seconds` of every channel. */
  read(seconds: number): StreamChunk {
    const fs = this.sampleRate;
    const n = Math.round(seconds * fs);
    const roles = this.opts.scenario.channels;
    const out = roles.map(() => new Float64Array(n));
    const offset = this.time;
    const context = this.opts.scenario.tidalVolumeChallenge ? this.segmentAt(this.position).context : undefined;
    let filled = 0;
    while (filled < n) {
      const seg = this.segmentAt(this.position + filled);
      const from = seg.first + (this.position + filled - seg.start);
      const take = Math.min(n - filled, seg.end - from);
      roles.forEach((role, k) => {
        const ch = seg.window.channels.find((c) => c.role === role)!;
        out[k].set(ch.samples.subarray(from, from + take), filled);
      });
      filled += take;
    }
    this.position += n;
    this.dropBefore(this.position);
    const unit = (role: ChannelRole) => (role === 'abp' || role === 'co2' ? 'mmHg' : role === 'paw' ? 'cmH2O' : 'au');
    const chunk: StreamChunk = { offset, channels: roles.map((role, k) => ({ role, unit: unit(role), samples: out[k] })), ...(context ? { context } : {}) };
    const extra = this.opts.scenario.unmappedChannel;
    if (extra) {
      // Not a physiological channel the engine reads: a plain breathing-rate sinusoid is enough.
      const m = Math.round(seconds * extra.sampleRate);
      const rr = this.opts.scenario.ventilator.rate / 60;
      chunk.unmapped = Float64Array.from({ length: m }, (_, i) => 500 + 2 * Math.sin(2 * Math.PI * rr * (offset + i / extra.sampleRate)));
    }
    return chunk;
  }

  /** Truth cycles put in between stream times [from, to), times in stream seconds. */
  truthCycles(from: number, to: number): TruthCycle[] {
    const out: TruthCycle[] = [];
    for (const seg of this.allSegments()) {
      const shift = (seg.start - seg.first) / this.sampleRate;
      const keptFrom = seg.first / this.sampleRate;
      const keptTo = seg.end / this.sampleRate;
      for (const c of seg.window.truth.cycles) {
        if (c.startTime < keptFrom || c.endTime > keptTo) continue;
        const s = c.startTime + shift;
        const e = c.endTime + shift;
        if (s >= from && e <= to) out.push({ ...c, startTime: s, endTime: e });
      }
    }
    return out;
  }

  /** The challenges generated so far (challenge scenarios), with their stream times. */
  challengeTruth(): ChallengeTruth[] {
    return [...this.challenges];
  }

  /** Stretches still needed for reading, plus all earlier ones when `keepTruth` is on. */
  private allSegments(): Segment[] {
    return this.opts.keepTruth ? this.history : this.segments;
  }

  private segmentAt(sample: number): Segment {
    for (;;) {
      const seg = this.segments.find((s) => sample >= s.start && sample < s.start + (s.end - s.first));
      if (seg) return seg;
      this.generateNext();
    }
  }

  private generateNext(): void {
    if (this.opts.scenario.tidalVolumeChallenge) return this.generateChallenge();
    const fs = this.sampleRate;
    const window = generateWindow(scenarioSpec(this.opts.scenario, this.opts.seed + this.generated, this.segmentSeconds, fs));
    this.generated++;
    const beats = window.truth.beats.abp.length ? window.truth.beats.abp : window.truth.beats.pleth;
    const first = beats.length ? Math.round(beats[0].footTime * fs) : 0;
    const end = beats.length > 1 ? Math.round(beats[beats.length - 1].footTime * fs) : window.channels[0].samples.length;
    const seg: Segment = { window, first, end, start: this.nextStart };
    this.nextStart += end - first;
    this.segments.push(seg);
    if (this.opts.keepTruth) this.history.push(seg);
  }

  /**
   * A challenge scenario's next stretch: the two segments of `generateChallenge` (low, then high
   * tidal volume), kept whole so each lasts exactly its seconds and a batch cut on whole seconds
   * that divide them lies inside one segment with one context. The join is the generator's own
   * (as an adapter sends the segments); the next challenge's low segment is the "back to 6 mL/kg".
   */
  private generateChallenge(): void {
    const s = this.opts.scenario;
    const c = s.tidalVolumeChallenge!;
    const g = generateChallenge({
      seed: this.opts.seed + this.generated,
      kind: c.kind,
      heartRate: s.patient.heartRate,
      respiratoryRate: s.ventilator.rate,
      baselineSeconds: c.baselineSeconds,
      challengeSeconds: c.challengeSeconds,
      sampleRate: this.sampleRate,
      patientHeightCm: s.patient.heightCm,
      patientSex: s.patient.sex,
    });
    this.generated++;
    const startTime = this.nextStart / this.sampleRate;
    for (const part of g.segments) {
      const window: SyntheticWindow = { channels: part.channels, truth: part.truth };
      const n = part.channels[0].samples.length;
      const seg: Segment = { window, first: 0, end: n, start: this.nextStart, context: part.context };
      this.nextStart += n;
      this.segments.push(seg);
      if (this.opts.keepTruth) this.history.push(seg);
    }
    this.challenges.push({ startTime, stepTime: startTime + g.segments[0].durationSeconds, truth: g.truth });
  }

  private dropBefore(sample: number): void {
    this.segments = this.segments.filter((s) => s.start + (s.end - s.first) > sample);
  }
}
