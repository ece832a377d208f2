import type { AnalysisResult, ChannelRole, Waveform } from '@/lib/analysis';

/** Vertical band of the plot each trace is drawn in, as fractions of the height from the bottom. */
export const LANES: Record<'abp' | 'pleth' | 'resp', [number, number]> = {
  abp: [0.46, 0.97],
  pleth: [0.24, 0.43],
  resp: [0.03, 0.2],
};

export interface Trace {
  key: 'abp' | 'pleth' | 'resp';
  role: ChannelRole;
  unit: string;
  sampleRate: number;
  samples: (number | null)[];
  /** Scale range chosen so the trace's own min..max fills its lane. */
  range: [number, number];
  /** The trace's own finite min..max (axis ticks outside it belong to other lanes). */
  extent: [number, number];
}

export interface PlotData {
  /** Seconds from the window start, on the finest sample grid among the traces. */
  x: number[];
  traces: Trace[];
  /** Trace values resampled onto `x`, in `traces` order (null = gap). */
  ys: (number | null)[][];
  durationSeconds: number;
}

export interface BeatMark {
  id: string;
  source: 'abp' | 'pleth';
  n: number;
  time: number;
  /** Waveform value at the beat's peak, for placing the mark on the trace. */
  value: number | null;
  accepted: boolean;
  reasons: string[];
}

export interface CycleMark {
  n: number;
  start: number;
  end: number;
  usable: boolean;
  usedInWindow: boolean;
  reasons: string[];
}

function laneRange(lo: number, hi: number, lane: [number, number]): [number, number] {
  if (!(hi > lo)) {
    hi = lo + 1;
    lo -= 1;
  }
  const perFraction = (hi - lo) / (lane[1] - lane[0]);
  return [lo - lane[0] * perFraction, hi + (1 - lane[1]) * perFraction];
}

function finiteExtent(values: (number | null)[]): [number, number] {
  let lo = Infinity;
  let hi = -Infinity;
  for (const v of values)
    if (v !== null && Number.isFinite(v)) {
      if (v < lo) lo = v;
      if (v > hi) hi = v;
    }
  return Number.isFinite(lo) ? [lo, hi] : [0, 1];
}

/** Linear interpolation of one channel at time t (s); null inside or beside a gap. */
function sampleAt(samples: (number | null)[], rate: number, t: number): number | null {
  const pos = t * rate;
  const i = Math.floor(pos);
  const a = samples[i];
  if (a === undefined || a === null) return null;
  const frac = pos - i;
  if (frac < 1e-9) return a;
  const b = samples[i + 1];
  if (b === undefined || b === null) return a;
  return a + (b - a) * frac;
}

/** Picks the traces to draw (ABP, pleth, then airway pressure or CO2) and puts them on one time base. */
export function buildPlotData(waveform: Waveform): PlotData {
  const traces: Trace[] = [];
  const pick = (key: Trace['key'], roles: ChannelRole[]) => {
    const ch = waveform.channels.find((c) => roles.includes(c.role));
    if (!ch) return;
    const extent = finiteExtent(ch.samples);
    traces.push({
      key,
      role: ch.role,
      unit: ch.unit,
      sampleRate: ch.sampleRate,
      samples: ch.samples,
      range: laneRange(extent[0], extent[1], LANES[key]),
      extent,
    });
  };
  pick('abp', ['abp']);
  pick('pleth', ['pleth']);
  pick('resp', ['paw', 'co2']);
  if (traces.length === 0) return { x: [], traces, ys: [], durationSeconds: 0 };

  const finest = traces.reduce((a, b) => (b.sampleRate > a.sampleRate ? b : a));
  const durationSeconds = Math.max(...traces.map((t) => t.samples.length / t.sampleRate));
  const n = Math.floor(durationSeconds * finest.sampleRate);
  const x = Array.from({ length: n }, (_, i) => i / finest.sampleRate);
  const ys = traces.map((t) =>
    t === finest || t.sampleRate === finest.sampleRate ? x.map((_, i) => t.samples[i] ?? null) : x.map((tt) => sampleAt(t.samples, t.sampleRate, tt)),
  );
  return { x, traces, ys, durationSeconds };
}

/** One mark per detected beat of each series, with the engine's reject reasons. */
export function beatMarks(analysis: AnalysisResult, waveform: Waveform | null): BeatMark[] {
  const out: BeatMark[] = [];
  for (const source of ['abp', 'pleth'] as const) {
    const series = analysis.beats[source];
    if (!series) continue;
    const channel = waveform?.channels.find((c) => c.role === source);
    for (const b of series.beats) {
      const v = channel?.samples[b.peakSample];
      out.push({
        id: `${source}-${b.n}`,
        source,
        n: b.n,
        time: b.peakTime,
        value: v === undefined ? (source === 'abp' ? b.sbp : null) : v,
        accepted: b.accepted,
        reasons: b.rejectReasons,
      });
    }
  }
  return out;
}

export function cycleMarks(analysis: AnalysisResult): CycleMark[] {
  return analysis.cycles.map((c) => ({ n: c.n, start: c.startTime, end: c.endTime, usable: c.usable, usedInWindow: c.usedInWindow, reasons: c.rejectReasons }));
}

/** Where a value sits vertically in its lane, 0 = bottom of the plot, 1 = top. */
export function yFraction(range: [number, number], v: number): number {
  return (v - range[0]) / (range[1] - range[0]);
}
