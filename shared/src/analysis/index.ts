/**
 * Ebbgate analysis engine (`@ebbgate/shared/analysis`): one window of synchronised bedside
 * channels in, PPV / SPV / ΔPOP / perfusion index per respiratory cycle and per window out, with
 * every beat and cycle decision, quality flags, a verdict, decision bands and cautions.
 * Pure and deterministic: no I/O, no clock, no randomness.
 */
import { checkArterialLine } from './arterial-line';
import { qualifyBeats, type QualifiedBeats } from './beat-quality';
import { detectArterialBeats } from './beats-abp';
import { detectPlethBeats } from './beats-pleth';
import { CAUTIONS } from './cautions';
import { AnalysisInputError, conditionChannel, type ConditionedChannel } from './conditioning';
import { breathsFromAirwayPressure, breathsFromCo2, breathsInferred, type BreathBoundaries } from './cycles';
import { buildCycles, computeIndices, selectCycles } from './indices';
import { predictedBodyWeightKg } from './pbw';
import { resolveSettings } from './settings';
import type { AnalysisInput, AnalysisResult, AnalysisSettings, ChannelRole, SampleSpan } from './types';
import { buildFlags, judge } from './verdict';
import { ENGINE_VERSION } from './version';

export * from './types';
export { ENGINE_VERSION } from './version';
export { DEFAULT_SETTINGS, DEFAULT_BANDS, resolveSettings } from './settings';
export { CAUTIONS } from './cautions';
export { predictedBodyWeightKg, tidalVolumePerKg } from './pbw';
export { AnalysisInputError, unitConversion } from './conditioning';
export { butter, butterSos, filtfilt, sosfiltfilt, lfilter, lfilterZi } from './filters';
export { percentVariation } from './signal-utils';
export { dampingCoefficient } from './arterial-line';
export { formatSummary } from './summary';
export { DEFAULT_CODE_ROLES, roleForCode, batchToAnalysisInput, parseBatchJson, parseCsvCapture, readCapture, CaptureParseError } from './input';

function beatsFor(ch: ConditionedChannel | undefined, settings: AnalysisSettings): QualifiedBeats | null {
  if (!ch || !ch.hasSignal || ch.filled.length < 2 * ch.fs) return null;
  const lm =
    ch.role === 'abp'
      ? detectArterialBeats(ch.smooth, ch.fs)
      : detectPlethBeats(ch.smooth, ch.filled, ch.fs, settings.plethBandpassHz, settings.plethFilterOrder);
  return qualifyBeats(ch, lm, ch.role === 'abp' ? 'abp' : 'pleth', settings);
}

/** Recursively replaces non-finite numbers by null (results must be plain JSON). */
function sanitize<T>(value: T): T {
  if (typeof value === 'number') return (Number.isFinite(value) ? value : null) as T;
  if (Array.isArray(value)) {
    for (let i = 0; i < value.length; i++) value[i] = sanitize(value[i]);
    return value;
  }
  if (value && typeof value === 'object') {
    const rec = value as Record<string, unknown>;
    // Beat values are read from the gap-bridged, filtered signal and are finite by construction
    // (templateCorrelation goes through finiteOrNull), so the largest arrays are skipped.
    for (const k of Object.keys(rec)) if (k !== 'beats' || !Array.isArray(rec[k])) rec[k] = sanitize(rec[k]);
  }
  return value;
}

/** Analyses one window. Throws AnalysisInputError for input it cannot read (unit, rate, duplicates). */
export function analyzeWindow(input: AnalysisInput, partialSettings?: Partial<AnalysisSettings>): AnalysisResult {
  const settings = resolveSettings(partialSettings);
  const context = input.context ?? {};
  if (!input.channels || input.channels.length === 0) throw new AnalysisInputError('no channels in the analysis window');
  const byRole = new Map<ChannelRole, ConditionedChannel>();
  for (const ch of input.channels) {
    if (byRole.has(ch.role)) throw new AnalysisInputError(`more than one ${ch.role} channel in the window`);
    const declared = ch.role === 'pleth' || ch.role === 'abp' ? (context.builtInFiltering ?? null) : null;
    byRole.set(ch.role, conditionChannel(ch, settings, declared));
  }
  const conditioned = [...byRole.values()];
  const abpQ = beatsFor(byRole.get('abp'), settings);
  const plethQ = beatsFor(byRole.get('pleth'), settings);
  const arterialLine = abpQ ? checkArterialLine(byRole.get('abp') as ConditionedChannel, abpQ.series) : null;

  // Respiratory cycles: airway pressure, else CO2, else the set rate with the phase from the pulse.
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
  const primary = abpQ ?? plethQ;
  if ((!bounds || bounds.onsets.length < 2) && primary) {
    const ch = byRole.get(primary.series.source) as ConditionedChannel;
    bounds = breathsInferred(primary.series.beats, ch.fs, ch.filled.length, context.setRespiratoryRate);
    if (bounds.reason) reasons.push(bounds.reason);
  }
  if (bounds && bounds.onsets.length < 2 && reasons.length) bounds.reason = reasons.join('; ');

  const gaps: SampleSpan[] = conditioned.flatMap((c) => c.report.gaps);
  const cycles = bounds && bounds.onsets.length >= 2 ? buildCycles(bounds, abpQ?.series ?? null, plethQ?.series ?? null, gaps, settings) : [];
  const used = selectCycles(cycles, settings.cyclesToAverage);
  const indices = computeIndices(used, cycles, abpQ?.series ?? null, plethQ?.series ?? null, bounds, context);

  const pbw = context.patientHeightCm !== undefined && context.patientSex ? predictedBodyWeightKg(context.patientHeightCm, context.patientSex) : null;
  const vtPerKg = pbw !== null && pbw > 0 && context.tidalVolumeMl !== undefined ? context.tidalVolumeMl / pbw : null;
  const channels = conditioned.map((c) => c.report);
  const flags = buildFlags({ context, settings, channels, abp: abpQ, pleth: plethQ, arterialLine, bounds, cycles, used, indices, tidalVolumeMlPerKg: vtPerKg });
  const { verdict, indexVerdicts } = judge(flags, indices, abpQ !== null);

  const result: AnalysisResult = {
    engineVersion: ENGINE_VERSION,
    settings,
    startTime: input.startTime ?? null,
    durationSeconds: Math.max(...channels.map((c) => c.durationSeconds)),
    channels,
    beats: { abp: abpQ?.series ?? null, pleth: plethQ?.series ?? null },
    respiration: {
      source: bounds && bounds.onsets.length >= 2 ? bounds.source : null,
      sampleRate: bounds ? bounds.fs : null,
      rateSource: cycles.length === 0 ? null : bounds?.source === 'inferred' ? 'set' : 'measured',
      reason: bounds?.reason ?? (bounds ? null : 'no respiration channel and no pulse channel'),
    },
    cycles,
    indices,
    verdict,
    indexVerdicts,
    flags,
    arterialLine,
    cautions: [...CAUTIONS],
    bands: settings.bands.map((b) => ({ ...b })),
    predictedBodyWeightKg: pbw,
    tidalVolumeMlPerKg: vtPerKg,
  };
  return sanitize(result);
}
