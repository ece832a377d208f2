import type { ConditionedChannel } from './conditioning';
import { hasArtefact } from './beat-quality';
import { median } from './signal-utils';
import type { ArterialLineReport, BeatSeries } from './types';

/**
 * Arterial-line checks (Gardner, Anesthesiology 1981; common practice): an over-damped line loses
 * the dicrotic notch and slows the upstroke; a fast flush shows a plateau near the bag pressure.
 */
export function checkArterialLine(ch: ConditionedChannel, series: BeatSeries): ArterialLineReport {
  const y = ch.smooth;
  const fs = ch.fs;
  const beats = series.beats;
  let withNotch = 0;
  let examined = 0;
  const rises: number[] = [];
  let suffix = new Float64Array(256);
  for (let k = 0; k + 1 < beats.length; k++) {
    const b = beats[k];
    // Damping shrinks the pulse (pp-low) and blurs the shape, so judge every beat free of artefact.
    if (hasArtefact(b)) continue;
    const next = beats[k + 1].footSample;
    rises.push((b.peakSample - b.footSample) / fs);
    const end = next - Math.round(0.15 * (next - b.footSample));
    if (end - b.peakSample < 6) continue;
    examined++;
    // Notch: the falling slope relaxes and then steepens again (a local maximum of the derivative
    // followed by a clearly steeper slope). Suffix minima of the slope make this one pass each way.
    const len = end - b.peakSample;
    if (suffix.length < len + 1) suffix = new Float64Array(2 * len + 2);
    let steepest = 0;
    suffix[len] = Infinity;
    for (let i = end - 1; i > b.peakSample; i--) {
      const d = y[i] - y[i - 1];
      if (d < steepest) steepest = d;
      const q = i - b.peakSample;
      suffix[q] = d < suffix[q + 1] ? d : suffix[q + 1];
    }
    let found = false;
    for (let i = b.peakSample + 3; i < end - 2 && !found; i++) {
      const d0 = y[i - 1] - y[i - 2];
      const d1 = y[i] - y[i - 1];
      const d2 = y[i + 1] - y[i];
      if (d1 > d0 && d1 >= d2 && d0 < 0) {
        const after = Math.min(d1, suffix[i + 1 - b.peakSample]);
        if (d1 - after > 0.05 * -steepest && d1 - d0 > 0.02 * -steepest) found = true;
      }
    }
    if (found) withNotch++;
  }
  const notchFraction = examined ? withNotch / examined : null;
  const rise = median(rises);
  const dampingSuspected = notchFraction !== null && notchFraction < 0.3 && rise > 0.15;
  // Flush: a plateau above 250 mmHg lasting 0.3 s (runs measured during conditioning).
  const flushSuspected = ch.longestHighRun >= Math.round(0.3 * fs);
  return { notchFraction, dampingSuspected, flushSuspected };
}

/** Damping coefficient from the amplitude ratio of successive flush oscillations (Gardner 1981): ζ = −ln AR / √(π² + ln² AR). */
export function dampingCoefficient(amplitudeRatio: number): number {
  if (!(amplitudeRatio > 0 && amplitudeRatio < 1)) throw new RangeError(`amplitude ratio must lie in (0, 1), got ${amplitudeRatio}`);
  const l = Math.log(amplitudeRatio);
  return -l / Math.sqrt(Math.PI * Math.PI + l * l);
}
