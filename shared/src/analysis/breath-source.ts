import type { QualifiedBeats } from './beat-quality';
import type { ConditionedChannel } from './conditioning';
import { breathsFromAirwayPressure, breathsFromCo2, breathsInferred, type BreathBoundaries } from './cycles';
import { mean, robustPercentiles } from './signal-utils';
import type { AnalysisContext, ChannelRole } from './types';

/**
 * Breath-source stage: respiratory cycles from airway pressure, else from CO2, else from the set
 * ventilator rate with the phase fitted to the pulse itself. The reasons of each source that
 * failed are kept, so the result says why no cycles were found.
 */
export function findBreaths(byRole: Map<ChannelRole, ConditionedChannel>, primary: QualifiedBeats | null, context: AnalysisContext): BreathBoundaries | null {
  let bounds: BreathBoundaries | null = null;
  const paw = byRole.get('paw');
  const co2 = byRole.get('co2');
  const reasons: string[] = [];
  if (paw?.hasSignal) {
    bounds = breathsFromAirwayPressure(paw);
    if (bounds.reason) reasons.push(bounds.reason);
  }
  if ((!bounds || bounds.onsets.length < 2) && co2?.hasSignal) {
    bounds = breathsFromCo2(co2);
    if (bounds.reason) reasons.push(bounds.reason);
  }
  if ((!bounds || bounds.onsets.length < 2) && primary) {
    const ch = byRole.get(primary.series.source) as ConditionedChannel;
    bounds = breathsInferred(primary.series.beats, ch.fs, ch.filled.length, context.setRespiratoryRate);
    if (bounds.reason) reasons.push(bounds.reason);
  }
  if (bounds && bounds.onsets.length < 2 && reasons.length) bounds.reason = reasons.join('; ');
  return bounds;
}

/**
 * Evidence of spontaneous effort beyond the dips below PEEP (common practice; the first condition
 * of every published checklist is controlled ventilation without patient effort, e.g. Michard,
 * Anesthesiology 2005): breath intervals irregular (coefficient of variation above 10 %) or faster
 * than the set rate (by more than 10 % and 1 /min), breath shape varying from cycle to cycle (peak
 * pressure varying by more than 10 %, or a breath's correlation with the median breath under 0.9
 * in more than a quarter of breaths), and a capnogram whose cycle does not match the ventilator's
 * (breath counts differing by more than 10 % and one breath).
 */
export function spontaneousEvidence(byRole: Map<ChannelRole, ConditionedChannel>, bounds: BreathBoundaries | null, context: AnalysisContext): string[] {
  const out: string[] = [];
  if (!bounds || bounds.source === 'inferred' || bounds.onsets.length < 5) return out;
  const fs = bounds.fs;
  const lengths: number[] = [];
  for (let j = 0; j + 1 < bounds.onsets.length; j++) lengths.push((bounds.onsets[j + 1] - bounds.onsets[j]) / fs);
  const m = mean(lengths);
  const sd = Math.sqrt(mean(lengths.map((l) => (l - m) ** 2)));
  if (sd / m > 0.1) out.push(`breath intervals irregular (coefficient of variation ${((100 * sd) / m).toFixed(0)} %)`);
  const rate = 60 / m;
  const set = context.setRespiratoryRate;
  if (set !== undefined && rate > 1.1 * set && rate - set > 1) out.push(`breathing at ${rate.toFixed(1)} /min, faster than the set ${set} /min`);
  const paw = byRole.get('paw');
  if (bounds.source === 'paw' && paw) {
    const p = paw.smooth;
    // Breath shapes compared every `stride` samples: airway pressure is low-passed at a few Hz, so
    // ~25 points per second keep the shape and spare the work.
    const stride = Math.max(1, Math.floor(fs / 25));
    let shortest = Infinity;
    for (const l of lengths) if (l < shortest) shortest = l;
    const len = Math.max(4, Math.floor((shortest * fs * 0.9) / stride));
    const peaks: number[] = [];
    const shapes: Float64Array[] = [];
    for (let j = 0; j + 1 < bounds.onsets.length; j++) {
      const a = bounds.onsets[j];
      if (a + len * stride > p.length) break;
      const s = new Float64Array(len);
      let pk = -Infinity;
      for (let i = 0; i < len; i++) {
        const v = p[a + i * stride];
        s[i] = v;
        if (v > pk) pk = v;
      }
      peaks.push(pk);
      shapes.push(s);
    }
    const [base] = robustPercentiles(p, [10]);
    const swings = peaks.map((v) => v - base);
    const ms = mean(swings);
    const sds = Math.sqrt(mean(swings.map((v) => (v - ms) ** 2)));
    if (swings.length >= 4 && ms > 0 && sds / ms > 0.1) out.push(`breath size varying (peak pressure above PEEP varies by ${((100 * sds) / ms).toFixed(0)} %)`);
    else if (shapes.length >= 4) {
      const tpl = new Float64Array(len);
      for (const s of shapes) for (let i = 0; i < len; i++) tpl[i] += s[i] / shapes.length;
      const odd = shapes.filter((s) => correlation(s, tpl) < 0.9).length;
      if (odd / shapes.length > 0.25) out.push(`breath shape varying (${odd} of ${shapes.length} breaths unlike the median breath)`);
    }
    const co2 = byRole.get('co2');
    if (co2?.hasSignal) {
      const c = breathsFromCo2(co2);
      const nP = bounds.onsets.length;
      const nC = c.onsets.length;
      if (nC >= 2 && Math.abs(nC - nP) > Math.max(1, 0.1 * nP)) out.push(`capnogram shows ${nC} breaths where the ventilator gave ${nP}`);
    }
  }
  return out;
}

function correlation(a: ArrayLike<number>, b: ArrayLike<number>): number {
  const n = Math.min(a.length, b.length);
  let ma = 0;
  let mb = 0;
  for (let i = 0; i < n; i++) {
    ma += a[i];
    mb += b[i];
  }
  ma /= n;
  mb /= n;
  let cov = 0;
  let va = 0;
  let vb = 0;
  for (let i = 0; i < n; i++) {
    const x = a[i] - ma;
    const y = b[i] - mb;
    cov += x * y;
    va += x * x;
    vb += y * y;
  }
  return va > 0 && vb > 0 ? cov / Math.sqrt(va * vb) : 1;
}
