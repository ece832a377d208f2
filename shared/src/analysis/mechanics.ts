import type { ConditionedChannel } from './conditioning';
import type { BreathBoundaries } from './cycles';
import { median } from './signal-utils';
import type { AnalysisContext, RespiratoryMechanics } from './types';

/**
 * Respiratory-system compliance and driving pressure (common practice): C = Vt / (Pplat − PEEP),
 * ΔP = Pplat − PEEP. Per breath on the airway pressure: PEEP is the end-expiratory level before the
 * inspiration onset, the peak the maximum of the breath, the plateau the level of an
 * end-inspiratory pause (pressure within 0.5 cmH2O for at least 0.12 s after the peak, before the
 * expiratory fall) when there is one; otherwise the peak stands in and says so.
 */
export function respiratoryMechanics(
  paw: ConditionedChannel | undefined,
  bounds: BreathBoundaries | null,
  context: AnalysisContext,
): RespiratoryMechanics | null {
  const vt = context.tidalVolumeMl;
  const given = context.complianceMlPerCmH2O;
  const none: RespiratoryMechanics = {
    peepCmH2O: null,
    peakCmH2O: null,
    plateauCmH2O: null,
    plateauSource: null,
    drivingPressureCmH2O: null,
    complianceMlPerCmH2O: given ?? null,
    complianceSource: given !== undefined ? 'context' : null,
    pressureSwingCmH2O: null,
  };
  if (!paw?.hasSignal || !bounds || bounds.source !== 'paw' || bounds.onsets.length < 3) return given !== undefined ? none : null;
  const p = paw.smooth;
  const fs = paw.fs;
  const peeps: number[] = [];
  const peaks: number[] = [];
  const plateaus: number[] = [];
  const minPause = Math.round(0.12 * fs);
  for (let j = 0; j + 1 < bounds.onsets.length; j++) {
    const a = bounds.onsets[j];
    const b = bounds.onsets[j + 1];
    // The onset sits where the pressure leaves the PEEP level (15 % of the swing above it): PEEP is
    // the mean of the 0.5 s of end-expiration before it.
    const from = a - Math.round(0.6 * fs);
    if (from < 0) continue;
    let acc = 0;
    const to = a - Math.round(0.1 * fs);
    for (let i = from; i < to; i++) acc += p[i];
    const peep = acc / Math.max(1, to - from);
    // The peak lies in inspiration, which no ventilator setting makes longer than 70 % of the breath.
    let pk = a;
    const inspEnd = a + Math.ceil(0.7 * (b - a));
    for (let i = a; i < inspEnd; i++) if (p[i] > p[pk]) pk = i;
    const peak = p[pk];
    peeps.push(peep);
    peaks.push(peak);
    // End-inspiratory pause: after the peak, a run within 0.5 cmH2O (0.12 s or more) above PEEP + 40 % of the swing.
    const floor = peep + 0.4 * (peak - peep);
    let runStart = -1;
    let lo = Infinity;
    let hi = -Infinity;
    let best = Number.NaN;
    for (let i = pk + 1; i < b && p[i] > floor; i++) {
      const v = p[i];
      if (runStart < 0) {
        runStart = i;
        lo = v;
        hi = v;
        continue;
      }
      lo = Math.min(lo, v);
      hi = Math.max(hi, v);
      if (hi - lo > 0.5) {
        runStart = i;
        lo = v;
        hi = v;
      } else if (i - runStart >= minPause) best = v;
    }
    if (best === best) plateaus.push(best);
  }
  if (!peeps.length) return given !== undefined ? none : null;
  const peep = median(peeps);
  const peak = median(peaks);
  // A pause in most breaths counts; a pause now and then is not the ventilator's setting.
  const pause = plateaus.length >= 0.5 * peaks.length;
  const plateau = pause ? median(plateaus) : peak;
  const dp = plateau - peep;
  // A compliance measured with a pause beats one given in context, which beats an estimate from the peak.
  const measured = vt !== undefined && dp > 0.5 && (pause || given === undefined) ? vt / dp : null;
  const compliance = measured;
  return {
    peepCmH2O: peep,
    peakCmH2O: peak,
    plateauCmH2O: plateau,
    plateauSource: pause ? 'end-inspiratory-pause' : 'estimated-from-peak',
    drivingPressureCmH2O: dp,
    complianceMlPerCmH2O: compliance ?? given ?? null,
    complianceSource: compliance !== null ? 'airway-pressure' : given !== undefined ? 'context' : null,
    pressureSwingCmH2O: peak - peep,
  };
}
