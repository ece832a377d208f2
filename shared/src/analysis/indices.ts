import { hasArtefact, hasHardArtefact } from './beat-quality';
import type { BreathBoundaries } from './cycles';
import { finiteOrNull, mean, median, percentVariation } from './signal-utils';
import type {
  AnalysisContext,
  AnalysisSettings,
  Beat,
  BeatSeries,
  CycleRejectReason,
  IndexValue,
  Indices,
  RespiratoryCycle,
  SampleSpan,
  SelectionReport,
} from './types';

const MIN_BEATS_PER_CYCLE = (s: AnalysisSettings): number => Math.ceil(s.minHrRrRatio + 1e-9);

/** Indices of the beats whose systolic peak lies in [start, end) (beats sorted by time). */
function beatsIn(series: BeatSeries | null, start: number, end: number): number[] {
  if (!series) return [];
  const beats = series.beats;
  let lo = 0;
  let hi = beats.length;
  while (lo < hi) {
    const mid = (lo + hi) >> 1;
    if (beats[mid].peakTime < start) lo = mid + 1;
    else hi = mid;
  }
  const out: number[] = [];
  for (let k = lo; k < beats.length && beats[k].peakTime < end; k++) out.push(k);
  return out;
}

function overlapsTime(spans: SampleSpan[], a: number, b: number): boolean {
  return spans.some((s) => s.startTime < b && s.endTime > a);
}

/** Per-cycle pulse-size variation of one beat series, null unless every beat in it is accepted. */
function cycleValues(beats: Beat[], idx: number[], minBeats: number): { ok: boolean; ectopic: boolean; rejected: boolean } {
  let ectopic = false;
  let rejected = false;
  for (const k of idx) {
    const b = beats[k];
    if (b.accepted) continue;
    if (b.rejectReasons.includes('ectopic')) ectopic = true;
    else rejected = true;
  }
  return { ok: idx.length >= minBeats && !ectopic && !rejected, ectopic, rejected };
}

/** Builds the respiratory cycles with their beats, usability and per-cycle PPV/SPV/ΔPOP. */
export function buildCycles(
  bounds: BreathBoundaries,
  abp: BeatSeries | null,
  pleth: BeatSeries | null,
  gaps: SampleSpan[],
  settings: AnalysisSettings,
): RespiratoryCycle[] {
  const fs = bounds.fs;
  const lengths: number[] = [];
  for (let j = 0; j + 1 < bounds.onsets.length; j++) lengths.push((bounds.onsets[j + 1] - bounds.onsets[j]) / fs);
  const medLen = median(lengths);
  const minBeats = MIN_BEATS_PER_CYCLE(settings);
  const primary = abp ?? pleth;
  const cycles: RespiratoryCycle[] = [];
  for (let j = 0; j + 1 < bounds.onsets.length; j++) {
    const a = bounds.onsets[j];
    const b = bounds.onsets[j + 1];
    const startTime = a / fs;
    const endTime = b / fs;
    const abpIdx = beatsIn(abp, startTime, endTime);
    const plethIdx = beatsIn(pleth, startTime, endTime);
    const reasons: CycleRejectReason[] = [];
    const primaryIdx = abp ? abpIdx : plethIdx;
    const check = primary ? cycleValues(primary.beats, primaryIdx, minBeats) : { ok: false, ectopic: false, rejected: false };
    if (primaryIdx.length < minBeats) reasons.push('too-few-beats');
    if (check.ectopic) reasons.push('ectopic-beat');
    if (check.rejected) reasons.push('rejected-beat');
    if (Math.abs(endTime - startTime - medLen) > settings.cycleLengthTolerance * medLen) reasons.push('irregular-length');
    if (overlapsTime(gaps, startTime, endTime)) reasons.push('gap');
    if (bounds.efforts.some((e) => e >= a - 0.2 * fs && e < b)) reasons.push('spontaneous-effort');
    const pp = abpIdx.map((k) => abp!.beats[k].pp as number);
    const sbp = abpIdx.map((k) => abp!.beats[k].sbp as number);
    const pop = plethIdx.map((k) => pleth!.beats[k].amplitude as number);
    const plethOk = pleth ? cycleValues(pleth.beats, plethIdx, minBeats).ok : false;
    const ppv = abp && check.ok ? percentVariation(pp) : null; // Michard 2000
    const spv = abp && check.ok && sbp.length >= 2 ? Math.max(...sbp) - Math.min(...sbp) : null; // Perel 1987
    const deltaPop = plethOk ? percentVariation(pop) : null; // Cannesson 2005
    const primaryValue = abp ? ppv : deltaPop;
    const measurable = primary ? primaryIdx.filter((k) => !hasArtefact(primary.beats[k])) : [];
    const variationAllBeats =
      primary && measurable.length >= minBeats ? percentVariation(measurable.map((k) => (abp ? abp.beats[k].pp : primary.beats[k].amplitude) as number)) : null;
    if (primaryValue !== null && (primaryValue < 0 || primaryValue > settings.plausibleMaxPercent)) reasons.push('value-implausible');
    cycles.push({
      n: j,
      source: bounds.source,
      startSample: a,
      endSample: b,
      startTime,
      endTime,
      abpBeatIndices: abpIdx,
      plethBeatIndices: plethIdx,
      usable: reasons.length === 0 && primary !== null,
      rejectReasons: reasons,
      ppv: finiteOrNull(ppv),
      spv: finiteOrNull(spv),
      deltaPop: finiteOrNull(deltaPop),
      ppMax: pp.length ? Math.max(...pp) : null,
      ppMin: pp.length ? Math.min(...pp) : null,
      sbpMax: sbp.length ? Math.max(...sbp) : null,
      sbpMin: sbp.length ? Math.min(...sbp) : null,
      popMax: pop.length ? Math.max(...pop) : null,
      popMin: pop.length ? Math.min(...pop) : null,
      usedInWindow: false,
      variationAllBeats: finiteOrNull(variationAllBeats),
    });
  }
  return cycles;
}

/** Marks the latest run of `count` consecutive usable cycles (or the latest longest shorter run). */
export function selectCycles(cycles: RespiratoryCycle[], count: number): RespiratoryCycle[] {
  let bestEnd = -1;
  let bestLen = 0;
  let run = 0;
  for (let j = 0; j < cycles.length; j++) {
    run = cycles[j].usable ? run + 1 : 0;
    const len = Math.min(run, count);
    if (len > 0 && len >= bestLen) {
      bestLen = len;
      bestEnd = j;
    }
  }
  const used = bestEnd < 0 ? [] : cycles.slice(bestEnd - bestLen + 1, bestEnd + 1);
  for (const c of used) c.usedInWindow = true;
  return used;
}

function fromCycles(values: (number | null)[], unit: string, none: string): IndexValue {
  const v = values.filter((x): x is number => x !== null);
  if (v.length === 0) return { value: null, unit, spread: null, cyclesUsed: 0, notComputableReason: none };
  return { value: finiteOrNull(mean(v)), unit, spread: v.length > 1 ? Math.max(...v) - Math.min(...v) : 0, cyclesUsed: v.length };
}

const notComputable = (unit: string, reason: string): IndexValue => ({ value: null, unit, spread: null, cyclesUsed: 0, notComputableReason: reason });

/** Window indices: mean over the selected cycles with the cycle-to-cycle spread. */
export function computeIndices(
  used: RespiratoryCycle[],
  cycles: RespiratoryCycle[],
  abp: BeatSeries | null,
  pleth: BeatSeries | null,
  bounds: BreathBoundaries | null,
  context: AnalysisContext,
): Indices {
  const noCycles = cycles.length === 0 ? (bounds?.reason ?? 'no respiratory cycles found') : 'no usable respiratory cycle in the window';
  const ppv = abp
    ? fromCycles(
        used.map((c) => c.ppv),
        '%',
        noCycles,
      )
    : notComputable('%', 'no arterial pressure channel');
  const spv = abp
    ? fromCycles(
        used.map((c) => c.spv),
        'mm[Hg]',
        noCycles,
      )
    : notComputable('mm[Hg]', 'no arterial pressure channel');
  const deltaPop = pleth
    ? fromCycles(
        used.map((c) => c.deltaPop),
        '%',
        noCycles,
      )
    : notComputable('%', 'no pleth channel');
  let perfusionIndex: IndexValue;
  if (!pleth) perfusionIndex = notComputable('%', 'no pleth channel');
  else if (context.plethScaling === 'auto-scaled')
    perfusionIndex = notComputable('%', 'pleth is auto-scaled by the monitor: its DC level is lost, so AC/DC cannot be formed');
  else if (context.plethScaling !== 'raw') perfusionIndex = notComputable('%', 'pleth scaling not declared: PI needs a raw pleth with its DC level');
  else {
    // Perfusion index = 100 × AC / DC of the raw PPG (common practice).
    const ok = pleth.beats.filter((b) => b.accepted);
    const ac = mean(ok.map((b) => b.amplitude as number));
    const dc = mean(ok.map((b) => b.dc as number));
    perfusionIndex =
      ok.length && dc > 0
        ? { value: (100 * ac) / dc, unit: '%', spread: null, cyclesUsed: 0 }
        : notComputable('%', 'no accepted pleth beat or non-positive DC level');
  }
  const primary = abp ?? pleth;
  const ibis = primary ? primary.beats.filter((b) => b.accepted && b.ibi !== null).map((b) => b.ibi as number) : [];
  const heartRate: IndexValue = ibis.length
    ? { value: 60 / mean(ibis), unit: '/min', spread: null, cyclesUsed: 0 }
    : notComputable('/min', primary ? 'no accepted beat interval' : 'no arterial pressure or pleth channel');
  let respiratoryRate: IndexValue;
  if (bounds && bounds.source === 'inferred' && context.setRespiratoryRate && cycles.length) {
    respiratoryRate = { value: context.setRespiratoryRate, unit: '/min', spread: null, cyclesUsed: 0 };
  } else if (cycles.length) {
    const lens = cycles.map((c) => c.endTime - c.startTime);
    respiratoryRate = { value: 60 / mean(lens), unit: '/min', spread: null, cyclesUsed: cycles.length };
  } else respiratoryRate = notComputable('/min', bounds?.reason ?? 'no respiratory cycles found');
  const hrRrRatio: IndexValue =
    heartRate.value !== null && respiratoryRate.value !== null
      ? { value: heartRate.value / respiratoryRate.value, unit: '1', spread: null, cyclesUsed: 0 }
      : notComputable('1', 'heart rate or respiratory rate not computable');
  return { ppv, spv, deltaPop, perfusionIndex, heartRate, respiratoryRate, hrRrRatio };
}

/** Reasons a cycle is dropped that have their own flag (so they say nothing about selection bias). */
const FLAGGED_ELSEWHERE: CycleRejectReason[] = ['ectopic-beat', 'gap', 'spontaneous-effort', 'irregular-length', 'partial'];

/**
 * Kept against dropped cycles: the share dropped, the mean variation of every cycle (whatever was
 * kept), and the pulse pressure of kept against dropped cycles. A selection that keeps only the
 * cycles with the least swing reads low; this is what the selection-bias flag looks at.
 */
export function selectionReport(cycles: RespiratoryCycle[], abp: BeatSeries | null): SelectionReport {
  const dropped = cycles.filter((c) => !c.usable);
  const all = cycles.map((c) => c.variationAllBeats).filter((v): v is number => v !== null);
  let pulsePressureDifference: number | null = null;
  if (abp) {
    const pp = (cs: RespiratoryCycle[]): number[] =>
      cs.flatMap((c) => c.abpBeatIndices.filter((k) => !hasHardArtefact(abp.beats[k])).map((k) => abp.beats[k].pp as number));
    const kept = pp(cycles.filter((c) => c.usable));
    const out = pp(dropped.filter((c) => !c.rejectReasons.some((r) => FLAGGED_ELSEWHERE.includes(r))));
    if (kept.length && out.length) pulsePressureDifference = mean(kept) - mean(out);
  }
  return {
    cyclesTotal: cycles.length,
    cyclesDropped: dropped.length,
    droppedFraction: cycles.length ? dropped.length / cycles.length : 0,
    ppvAllCycles: all.length ? finiteOrNull(mean(all)) : null,
    pulsePressureDifference: finiteOrNull(pulsePressureDifference),
  };
}

/**
 * Mean variation of the kept (usable) cycles and of the cycles dropped for a reason without a flag
 * of its own (a rejected beat, too few beats, an implausible value), over every measurable beat.
 */
export function keptVersusDropped(cycles: RespiratoryCycle[]): { kept: number | null; dropped: number | null; droppedCount: number } {
  const kept = cycles.filter((c) => c.usable && c.variationAllBeats !== null).map((c) => c.variationAllBeats as number);
  const dropped = cycles
    .filter((c) => !c.usable && c.variationAllBeats !== null && !c.rejectReasons.some((r) => FLAGGED_ELSEWHERE.includes(r)))
    .map((c) => c.variationAllBeats as number);
  return { kept: kept.length ? mean(kept) : null, dropped: dropped.length ? mean(dropped) : null, droppedCount: dropped.length };
}
