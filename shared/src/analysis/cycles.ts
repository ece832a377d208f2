import type { ConditionedChannel } from './conditioning';
import { overlapsAny, robustPercentiles } from './signal-utils';
import type { Beat, CycleSource } from './types';

/** Breath boundaries found on some channel, before beats are assigned. */
export interface BreathBoundaries {
  source: CycleSource;
  /** Rate the sample indices refer to. */
  fs: number;
  /** Inspiration onsets, sample indices, ascending; cycle j = [onsets[j], onsets[j+1]). */
  onsets: number[];
  /** Suspected spontaneous efforts (dips of airway pressure below PEEP), sample indices. */
  efforts: number[];
  reason: string | null;
}

/**
 * Inspiration onsets from airway pressure: upward crossings of the midpoint between PEEP level
 * (10th percentile) and peak level (90th), with hysteresis, each moved back to where the
 * pressure leaves the PEEP level. Dips below PEEP are kept as suspected patient efforts.
 */
export function breathsFromAirwayPressure(ch: ConditionedChannel): BreathBoundaries {
  const p = ch.smooth;
  const fs = ch.fs;
  const [lo, hi] = robustPercentiles(p, [10, 90]);
  const range = hi - lo;
  if (!(range >= 2)) return { source: 'paw', fs, onsets: [], efforts: [], reason: 'airway pressure shows no ventilator breaths (swing under 2 cmH2O)' };
  const onsets: number[] = [];
  const efforts: number[] = [];
  const arm = lo + 0.3 * range;
  const trigger = lo + 0.5 * range;
  const leave = lo + 0.15 * range;
  const dip = lo - Math.max(1, 0.1 * range);
  let armed = false;
  let lastEffort = -Infinity;
  const refractory = Math.round(0.5 * fs);
  for (let i = 0; i < p.length; i++) {
    const v = p[i];
    if (v < dip && i - lastEffort > refractory && !overlapsAny(ch.report.gaps, i, i + 1)) {
      efforts.push(i);
      lastEffort = i;
    }
    if (v < arm) armed = true;
    else if (armed && v >= trigger) {
      let j = i;
      const stop = Math.max(0, i - Math.round(1.5 * fs));
      while (j > stop && p[j - 1] > leave) j--;
      onsets.push(j);
      armed = false;
    }
  }
  return { source: 'paw', fs, onsets, efforts, reason: onsets.length < 2 ? 'fewer than two breaths found on airway pressure' : null };
}

/** Inspiration onsets from CO2: the fall of the capnogram at the end of each expiration. */
export function breathsFromCo2(ch: ConditionedChannel): BreathBoundaries {
  const c = ch.smooth;
  const fs = ch.fs;
  const [lo, hi] = robustPercentiles(c, [5, 95]);
  const range = hi - lo;
  if (!(range >= 5)) return { source: 'co2', fs, onsets: [], efforts: [], reason: 'CO2 shows no breaths (swing under 5 mmHg)' };
  const onsets: number[] = [];
  let armed = false;
  for (let i = 0; i < c.length; i++) {
    if (c[i] > lo + 0.7 * range) armed = true;
    else if (armed && c[i] <= lo + 0.5 * range) {
      let j = i;
      const stop = Math.max(0, i - Math.round(1 * fs));
      while (j > stop && c[j - 1] < hi - 0.15 * range && c[j - 1] >= c[j]) j--;
      onsets.push(j);
      armed = false;
    }
  }
  return { source: 'co2', fs, onsets, efforts: [], reason: onsets.length < 2 ? 'fewer than two breaths found on CO2' : null };
}

/**
 * Breaths from the set ventilator rate, with the phase found in the signal itself: a least-squares
 * fit of a + b·cos ωt + c·sin ωt to the accepted beats' pulse size; cycles start where the fitted
 * swing crosses its mean upwards, so each cycle holds one maximum and one minimum.
 */
export function breathsInferred(beats: Beat[], fs: number, n: number, setRate: number | undefined): BreathBoundaries {
  if (!setRate) return { source: 'inferred', fs, onsets: [], efforts: [], reason: 'no airway pressure, no CO2 and no set ventilator rate' };
  const w = (2 * Math.PI * setRate) / 60;
  const pts = beats.filter((b) => b.accepted).map((b) => ({ t: b.peakTime, v: (b.pp ?? b.amplitude) as number }));
  if (pts.length < 6) return { source: 'inferred', fs, onsets: [], efforts: [], reason: 'too few accepted beats to find the respiratory phase' };
  // Normal equations for [1, cos, sin].
  const m = [
    [0, 0, 0],
    [0, 0, 0],
    [0, 0, 0],
  ];
  const r = [0, 0, 0];
  for (const { t, v } of pts) {
    const f = [1, Math.cos(w * t), Math.sin(w * t)];
    for (let a = 0; a < 3; a++) {
      r[a] += f[a] * v;
      for (let b = 0; b < 3; b++) m[a][b] += f[a] * f[b];
    }
  }
  const sol = solve3(m, r);
  const psi = Math.atan2(sol[2], sol[1]); // v ≈ a + R cos(ωt − ψ)
  const period = 60 / setRate;
  let t0 = (psi - Math.PI / 2) / w;
  t0 = ((t0 % period) + period) % period;
  const onsets: number[] = [];
  for (let t = t0; t < n / fs; t += period) onsets.push(Math.round(t * fs));
  return { source: 'inferred', fs, onsets, efforts: [], reason: null };
}

function solve3(m: number[][], r: number[]): number[] {
  const det = (a: number[][]): number =>
    a[0][0] * (a[1][1] * a[2][2] - a[1][2] * a[2][1]) - a[0][1] * (a[1][0] * a[2][2] - a[1][2] * a[2][0]) + a[0][2] * (a[1][0] * a[2][1] - a[1][1] * a[2][0]);
  const d = det(m);
  if (Math.abs(d) < 1e-12) return [0, 0, 0];
  return [0, 1, 2].map((c) => det(m.map((row, i) => row.map((v, j) => (j === c ? r[i] : v)))) / d);
}
