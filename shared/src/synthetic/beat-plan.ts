import type { Prng } from './prng';

/** One heart beat as planned before rendering. */
export interface PlannedBeat {
  footTime: number;
  /** Pulse-size multiplier from rhythm (ectopic, post-ectopic, irregular filling). */
  sizeFactor: number;
  ectopic: boolean;
}

export interface BeatPlanOptions {
  duration: number;
  heartRate: number;
  hrVariability: number;
  ectopicCount: number;
  irregularVariability: number;
}

/**
 * Beat foot times from a little before the window to a little after it, so every in-window beat
 * is whole. Premature beats keep a compensatory pause (the two intervals sum to two normal ones).
 */
export function planBeats(opts: BeatPlanOptions, rng: Prng): PlannedBeat[] {
  const mean = 60 / opts.heartRate;
  const beats: PlannedBeat[] = [];
  let t = -mean * rng.uniform(0.2, 1.2);
  while (t < opts.duration + 2 * mean) {
    beats.push({ footTime: t, sizeFactor: 1, ectopic: false });
    let ibi = mean * (1 + opts.hrVariability * rng.normal());
    if (opts.irregularVariability > 0) ibi = mean * (1 + rng.uniform(-opts.irregularVariability, opts.irregularVariability));
    t += ibi;
  }
  if (opts.irregularVariability > 0) {
    // Filling depends on the preceding interval (Frank–Starling): a short interval gives a small beat.
    for (let k = 1; k < beats.length; k++) {
      const prev = beats[k].footTime - beats[k - 1].footTime;
      beats[k].sizeFactor = Math.min(1.3, Math.max(0.6, Math.sqrt(prev / mean)));
    }
  }
  if (opts.ectopicCount > 0) {
    const inWindow = beats.map((b, k) => ({ b, k })).filter(({ b }) => b.footTime > 2 && b.footTime < opts.duration - 3);
    const step = inWindow.length / (opts.ectopicCount + 1);
    for (let e = 1; e <= opts.ectopicCount; e++) {
      const k = inWindow[Math.floor(e * step)]?.k;
      if (k === undefined || k < 1 || k + 1 >= beats.length) continue;
      const prev = beats[k - 1].footTime;
      const next = beats[k + 1].footTime;
      const normal = (next - prev) / 2;
      beats[k].footTime = prev + 0.6 * normal;
      beats[k].sizeFactor = 0.55;
      beats[k].ectopic = true;
      beats[k + 1].sizeFactor = 1.15; // post-extrasystolic potentiation
    }
  }
  return beats;
}

/** Mechanical breath start times covering the window (first one at or before 0). */
export function planBreaths(duration: number, respiratoryRate: number, rng: Prng): number[] {
  const period = 60 / respiratoryRate;
  const starts: number[] = [];
  for (let t = -period * rng.uniform(0.05, 0.95); t < duration + period; t += period) starts.push(t);
  return starts;
}

/** Index of the breath containing time t (starts sorted ascending), or −1 before the first. */
export function breathIndexAt(starts: number[], t: number): number {
  let lo = 0;
  let hi = starts.length - 1;
  if (t < starts[0]) return -1;
  while (lo < hi) {
    const mid = (lo + hi + 1) >> 1;
    if (starts[mid] <= t) lo = mid;
    else hi = mid - 1;
  }
  return lo;
}

/** Respiratory phase in [0, 1) of time t on the mechanical breath grid. */
export function breathPhase(starts: number[], t: number): number {
  const j = breathIndexAt(starts, t);
  if (j < 0 || j + 1 >= starts.length) {
    const period = starts[1] - starts[0];
    const base = j < 0 ? starts[0] : starts[starts.length - 1];
    return ((((t - base) / period) % 1) + 1) % 1;
  }
  return (t - starts[j]) / (starts[j + 1] - starts[j]);
}
