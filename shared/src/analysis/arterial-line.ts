import type { ConditionedChannel } from './conditioning';
import { FLUSH_LEVEL_MMHG } from './conditioning';
import { hasArtefact } from './beat-quality';
import { median } from './signal-utils';
import type { ArterialLineReport, BeatSeries, DampingEstimate, FlushTestResult, GardnerRegion } from './types';

/**
 * Arterial-line dynamic response (Gardner, Anesthesiology 1981;54:227). With a fast-flush test in
 * the window, natural frequency and damping ratio come from the ringing after release; without
 * one, over- and under-damping are estimated from the beat shape (no dicrotic notch and a slow
 * upstroke; oscillation riding on the systolic peak).
 */
export function checkArterialLine(ch: ConditionedChannel, series: BeatSeries, noiseSd: number | null = null): ArterialLineReport {
  const y = ch.smooth;
  const fs = ch.fs;
  const beats = series.beats;
  let withNotch = 0;
  let examined = 0;
  let ringing = 0;
  let ringExamined = 0;
  const rises: number[] = [];
  for (let k = 0; k + 1 < beats.length; k++) {
    const b = beats[k];
    // Damping shrinks the pulse (pp-low) and blurs the shape, so judge every beat free of artefact.
    if (hasArtefact(b)) continue;
    const next = beats[k + 1].footSample;
    rises.push((b.peakSample - b.footSample) / fs);
    if (b.pp !== null && b.pp > 0) {
      ringExamined++;
      if (ringsAfterPeak(ch.filled, b.peakSample, next, fs, b.pp, noiseSd ?? 0)) ringing++;
    }
    const end = next - Math.round(0.15 * (next - b.footSample));
    if (end - b.peakSample < 6) continue;
    examined++;
    if (hasNotch(y, b.peakSample, end)) withNotch++;
  }
  const notchFraction = examined ? withNotch / examined : null;
  const rise = rises.length ? median(rises) : null;
  // Beat shape (checked on a second-order catheter model over fn 5–25 Hz, ζ 0.05–1.6 in the tests):
  // over-damping removes the notch and stretches the upstroke; under-damping rings on the peak.
  const underByShape = ringExamined >= 5 && ringing / ringExamined >= 0.5;
  const ibis = beats.filter((b) => b.accepted && b.ibi !== null).map((b) => b.ibi as number);
  const interval = ibis.length ? median(ibis) : null;
  // A slow upstroke: over 0.145 s, or over 0.12 s and a quarter of the beat interval at fast rates.
  const slow = rise !== null && (rise > 0.145 || (rise > 0.12 && interval !== null && rise > 0.25 * interval));
  const overByShape = !underByShape && notchFraction !== null && notchFraction < 0.3 && slow;
  const dampingEstimate: DampingEstimate =
    notchFraction === null || rise === null ? 'unknown' : underByShape ? 'under-damped' : overByShape ? 'over-damped' : 'adequate';
  // Flush: a plateau above 250 mmHg lasting 0.3 s (runs measured during conditioning).
  const flushSuspected = ch.longestHighRun >= Math.round(0.3 * fs);
  const flushTests = flushSuspected || ch.longestHighRun >= Math.round(0.15 * fs) ? findFlushTests(ch.filled, fs) : [];
  const measured = flushTests.filter((f) => f.region !== 'unacceptable' || f.dampingRatio !== null);
  const last = measured.length ? measured[measured.length - 1] : null;
  // A measured flush test overrides the shape estimate (it is the direct test).
  const dampingSuspected = last ? last.region === 'over-damped' : dampingEstimate === 'over-damped';
  const underDampingSuspected = last
    ? last.region === 'under-damped' || (last.region === 'unacceptable' && (last.dampingRatio ?? 1) < 0.5)
    : dampingEstimate === 'under-damped';
  return { notchFraction, dampingSuspected, underDampingSuspected, flushSuspected, flushTests, dampingEstimate, upstrokeSeconds: rise };
}

/** Scratch for the notch candidates, reused from beat to beat (overwritten by every call). */
let notchRise = new Float64Array(128);
let notchStep = new Float64Array(128);

/**
 * Dicrotic notch on the falling limb (peak, end): the slope relaxes and then steepens again, i.e. a
 * local maximum d1 of the slope (after a falling slope d0 < 0) followed later by a slope steeper
 * than d1 by 5 % of the steepest fall, d1 also exceeding d0 by 2 % of it. One backward pass: the
 * minimum of the slopes from each sample to the end runs along, and the candidates are kept until
 * the steepest fall, known only at the end, decides them (whether any candidate qualifies does not
 * depend on the order they are met in).
 */
function hasNotch(y: Float64Array, peak: number, end: number): boolean {
  if (notchRise.length < end - peak) {
    notchRise = new Float64Array(2 * (end - peak));
    notchStep = new Float64Array(2 * (end - peak));
  }
  let steepest = 0;
  // Slopes d(i) = y[i] − y[i−1] at i + 1 and i + 2 of the step that computes d(i), and the minimum of d from i + 2 on.
  let dNext = 0;
  let dNext2 = 0;
  let minFromNext = Infinity;
  let minFromNext2 = Infinity;
  let count = 0;
  for (let i = end - 1; i > peak; i--) {
    const d = y[i] - y[i - 1];
    if (d < steepest) steepest = d;
    const minFrom = d < minFromNext ? d : minFromNext;
    // Candidate c = i + 1 (needs d(c − 1), d(c), d(c + 1)), within peak + 3 ≤ c < end − 2.
    const c = i + 1;
    if (c >= peak + 3 && c < end - 2) {
      const d0 = d;
      const d1 = dNext;
      const d2 = dNext2;
      if (d1 > d0 && d1 >= d2 && d0 < 0) {
        const after = Math.min(d1, minFromNext2);
        notchRise[count] = d1 - after;
        notchStep[count] = d1 - d0;
        count++;
      }
    }
    dNext2 = dNext;
    dNext = d;
    minFromNext2 = minFromNext;
    minFromNext = minFrom;
  }
  for (let k = 0; k < count; k++) if (notchRise[k] > 0.05 * -steepest && notchStep[k] > 0.02 * -steepest) return true;
  return false;
}

/**
 * Ringing on the systolic peak: within 0.12 s after the peak (before a dicrotic notch even at fast
 * rates) the pressure falls by at least 10 % of the pulse pressure and rises again by at least
 * 2.5 % (and by four noise standard deviations). Read on the unfiltered trace: the 16 Hz low-pass
 * would flatten the ringing it is looking for.
 */
function ringsAfterPeak(x: Float64Array, peak: number, next: number, fs: number, pp: number, noiseSd: number): boolean {
  const to = Math.min(next, peak + Math.round(0.12 * fs), x.length);
  const top = x[peak];
  let low = top;
  let fell = false;
  for (let i = peak + 1; i < to; i++) {
    const v = x[i];
    if (v < low) low = v;
    if (top - low >= 0.1 * pp) fell = true;
    if (fell && v - low >= Math.max(0.025 * pp, 4 * noiseSd)) return true;
  }
  return false;
}

/** Damping coefficient from the amplitude ratio of successive flush oscillations (Gardner 1981): ζ = −ln AR / √(π² + ln² AR). */
export function dampingCoefficient(amplitudeRatio: number): number {
  if (!(amplitudeRatio > 0 && amplitudeRatio < 1)) throw new RangeError(`amplitude ratio must lie in (0, 1), got ${amplitudeRatio}`);
  const l = Math.log(amplitudeRatio);
  return -l / Math.sqrt(Math.PI * Math.PI + l * l);
}

/**
 * Region of Gardner's chart (Anesthesiology 1981;54:227, Fig. of natural frequency against damping
 * coefficient; region boundaries approximated from the chart, from memory): below ~7 Hz no
 * damping is adequate; the adequate band narrows towards ζ 0.5–0.75 as fn falls.
 */
export function gardnerRegion(fn: number | null, zeta: number | null): GardnerRegion {
  if (zeta === null) return 'over-damped';
  if (fn === null) return zeta > 1 ? 'over-damped' : 'unacceptable';
  const upper = Math.min(1.05, 0.6 + 0.02 * fn);
  const lower = Math.max(0.1, 0.65 - 0.022 * fn);
  if (zeta > upper) return 'over-damped';
  if (fn < 7) return 'unacceptable';
  if (zeta < lower) return 'under-damped';
  if (fn >= 12 && zeta >= lower + 0.15 && zeta <= upper - 0.1) return 'optimal';
  return 'adequate';
}

const REGION_TEXT: Record<GardnerRegion, string> = {
  optimal: 'optimal: the line reproduces the waveform faithfully',
  adequate: 'adequate: small distortion of the waveform',
  'over-damped': 'over-damped: systolic pressure and its swing understated, diastolic overstated',
  'under-damped': 'under-damped: systolic overshoot and ringing, systolic pressure and its swing overstated',
  unacceptable: 'unacceptable: natural frequency too low for any damping to reproduce the waveform',
};

export function gardnerRegionText(r: GardnerRegion): string {
  return REGION_TEXT[r];
}

/**
 * Fast-flush tests: a plateau above 250 mmHg for at least 0.15 s, then the square-wave release.
 * After release the zig-zag extrema (hysteresis max(1 mmHg, 1 % of the step)) give the swings
 * D1, D2 … of the ringing; the amplitude ratio D2/D1 gives ζ by Gardner's relation and the time
 * between two minima the damped period Td, so fn = 1 / (Td √(1 − ζ²)). No ringing at all is an
 * over-damped line (ζ beyond ~0.9 leaves no measurable overshoot).
 */
export function findFlushTests(x: Float64Array, fs: number): FlushTestResult[] {
  const out: FlushTestResult[] = [];
  const minRun = Math.round(0.15 * fs);
  let run = 0;
  for (let i = 0; i < x.length; i++) {
    if (x[i] > FLUSH_LEVEL_MMHG) {
      run++;
      continue;
    }
    if (run >= minRun) {
      const plateauStart = i - run;
      const plateau = median(Array.from(x.subarray(Math.max(plateauStart, i - Math.round(0.1 * fs)), i)));
      const r = measureRinging(x, fs, i - 1, plateau);
      if (r) out.push(r);
    }
    run = 0;
  }
  return out;
}

function measureRinging(x: Float64Array, fs: number, lastHigh: number, plateau: number): FlushTestResult | null {
  const end = Math.min(x.length, lastHigh + Math.round(1.0 * fs));
  if (end - lastHigh < Math.round(0.2 * fs)) return null;
  // Resting level after the ringing: median of 0.6–1.0 s after release.
  const restFrom = Math.min(end - 1, lastHigh + Math.round(0.6 * fs));
  const rest = median(Array.from(x.subarray(restFrom, end)));
  const step = plateau - rest;
  if (!(step > 20)) return null;
  // Release: where the pressure has fallen by 20 % of the step (clear of any ringing left on the
  // plateau), moved back by the time a second-order step response takes to fall that far.
  const level = plateau - 0.2 * step;
  let c = Math.max(1, lastHigh - Math.round(0.05 * fs));
  while (c < end && x[c] >= level) c++;
  const cross = (c - 1 + (x[c - 1] - level) / (x[c - 1] - x[c])) / fs;
  const r = c;
  const h = Math.max(0.5, 0.003 * step);
  // Zig-zag extrema after release, starting downwards.
  const ext: { i: number; v: number }[] = [];
  let dir = -1;
  let ei = r;
  let ev = x[r];
  for (let i = r + 1; i < end && ext.length < 7; i++) {
    const v = x[i];
    if (dir < 0) {
      if (v < ev) {
        ev = v;
        ei = i;
      } else if (v - ev > h) {
        ext.push({ i: ei, v: ev });
        dir = 1;
        ev = v;
        ei = i;
      }
    } else if (v > ev) {
      ev = v;
      ei = i;
    } else if (ev - v > h) {
      ext.push({ i: ei, v: ev });
      dir = -1;
      ev = v;
      ei = i;
    }
  }
  const pts = ext.map((e) => refine(x, e.i, fs));
  const noRinging = (): FlushTestResult => {
    const region = gardnerRegion(null, null);
    return {
      releaseTime: cross,
      naturalFrequencyHz: null,
      dampingRatio: null,
      amplitudeRatio: null,
      oscillations: 0,
      region,
      regionText: gardnerRegionText(region),
    };
  };
  // The first extremum is the undershoot; it must lie below the resting level to be ringing.
  if (pts.length === 0 || pts[0].v > rest - h) return noRinging();
  // Extrema of a step response fall at multiples of Td/2 after release.
  const q0 = (rest - pts[0].v) / step;
  let zeta = q0 > 0 && q0 < 1 ? dampingCoefficient(q0) : null;
  const z0 = zeta ?? 0.3;
  let td = 2 * (pts[0].t - cross);
  for (let it = 0; it < 4; it++) {
    const wn = (2 * Math.PI) / (td * Math.sqrt(1 - z0 * z0));
    td = 2 * (pts[0].t - (cross - fallTime(z0, 0.2) / wn));
  }
  const releaseTime = cross - fallTime(z0, 0.2) / ((2 * Math.PI) / (td * Math.sqrt(1 - z0 * z0)));
  let ar: number | null = zeta !== null ? q0 : null;
  let n = 1;
  // Later extrema at the expected spacing (±30 %) give the amplitude ratio of successive swings
  // (Gardner's measurement) and the period between two minima; otherwise the undershoot alone.
  const spaced = (k: number): boolean => k < pts.length && Math.abs(pts[k].t - pts[k - 1].t - td / 2) <= 0.3 * (td / 2);
  if (spaced(1) && spaced(2)) {
    const d1 = pts[1].v - pts[0].v;
    const d2 = pts[1].v - pts[2].v;
    if (d1 > 0 && d2 > 0 && d2 < d1) {
      ar = d2 / d1;
      zeta = dampingCoefficient(ar);
      td = pts[2].t - pts[0].t;
      n = 3;
      while (spaced(n)) n++;
    }
  }
  if (zeta === null || ar === null) return noRinging();
  const fn = td > 0 ? 1 / (td * Math.sqrt(Math.max(1e-6, 1 - zeta * zeta))) : null;
  // A "ringing" slower than 3 Hz is the pulse itself returning, not the line: no ringing.
  if (fn === null || fn < 3) return noRinging();
  const region = gardnerRegion(fn, zeta);
  return { releaseTime, naturalFrequencyHz: fn, dampingRatio: zeta, amplitudeRatio: ar, oscillations: n, region, regionText: gardnerRegionText(region) };
}

/**
 * ωn·t at which an under-damped second-order step response has covered `fraction` of the step:
 * 1 − e^(−ζτ)(cos(√(1−ζ²)τ) + ζ/√(1−ζ²)·sin(√(1−ζ²)τ)) = fraction, by bisection.
 */
function fallTime(zeta: number, fraction: number): number {
  const wd = Math.sqrt(Math.max(1e-9, 1 - zeta * zeta));
  const y = (t: number): number => 1 - Math.exp(-zeta * t) * (Math.cos(wd * t) + (zeta / wd) * Math.sin(wd * t));
  let lo = 0;
  let hi = Math.PI / wd;
  for (let k = 0; k < 50; k++) {
    const mid = (lo + hi) / 2;
    if (y(mid) < fraction) lo = mid;
    else hi = mid;
  }
  return (lo + hi) / 2;
}

/** Sub-sample time (s) and value of an extremum by a parabola through its neighbours. */
function refine(x: Float64Array, i: number, fs: number): { t: number; v: number } {
  if (i <= 0 || i + 1 >= x.length) return { t: i / fs, v: x[i] };
  const a = x[i - 1];
  const b = x[i];
  const c = x[i + 1];
  const den = a - 2 * b + c;
  if (den === 0) return { t: i / fs, v: b };
  const off = (0.5 * (a - c)) / den;
  if (!(off > -1 && off < 1)) return { t: i / fs, v: b };
  return { t: (i + off) / fs, v: b - 0.25 * (a - c) * off };
}
