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
import { AnalysisInputError, filterChannels, scanChannel, type ConditionedChannel, type ScannedChannel } from './conditioning';
import { findBreaths, spontaneousEvidence } from './breath-source';
import { buildCycles, computeIndices, keptVersusDropped, selectCycles, selectionReport } from './indices';
import { respiratoryMechanics } from './mechanics';
import { predictedBodyWeightKg } from './pbw';
import { resolveSettings } from './settings';
import { evaluateTidalVolumeChallenge } from './challenge';
import type { AnalysisInput, AnalysisResult, AnalysisSettings, ChallengeInput, ChannelRole, SampleSpan } from './types';
import { buildFlags, judge, type ResolvedChecklist } from './verdict';
import { CHECKLIST_CONTEXT_KEYS, type ChecklistContext } from '../schemas/ingest';
import { ENGINE_VERSION } from './version';

export * from './types';
export { ENGINE_VERSION } from './version';
export { DEFAULT_SETTINGS, DEFAULT_BANDS, resolveSettings } from './settings';
export { CAUTIONS } from './cautions';
export { predictedBodyWeightKg, tidalVolumePerKg } from './pbw';
export { AnalysisInputError, unitConversion } from './conditioning';
export { butter, butterSos, filtfilt, sosfiltfilt, lfilter, lfilterZi } from './filters';
export { percentVariation } from './signal-utils';
export { dampingCoefficient, findFlushTests, gardnerRegion, gardnerRegionText } from './arterial-line';
export { SIGNAL_LOSS_PULSE_MMHG } from './signal-loss';
export { formatSummary } from './summary';
export { ventilatorSettingChanges } from './setting-changes';
export {
  DEFAULT_CODE_ROLES,
  roleForCode,
  batchToAnalysisInput,
  parseBatchJson,
  parseCsvCapture,
  readCapture,
  readChallengeCapture,
  CaptureParseError,
} from './input';

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
    // (templateCorrelation goes through finiteOrNull); cycle values are sample times, maxima and
    // minima of finite beats, or go through finiteOrNull. So the largest arrays are skipped.
    for (const k of Object.keys(rec)) if ((k !== 'beats' && k !== 'cycles') || !Array.isArray(rec[k])) rec[k] = sanitize(rec[k]);
  }
  return value;
}

/** Checklist items from the batch, else from the bed settings; each remembers where it came from. */
function resolveChecklist(batch: ChecklistContext, bed: ChecklistContext | undefined): ResolvedChecklist {
  const out: ResolvedChecklist = {};
  for (const key of CHECKLIST_CONTEXT_KEYS) {
    if (batch[key] !== undefined) {
      if (batch[key]) out[key] = 'batch';
    } else if (bed?.[key]) out[key] = 'bed';
  }
  return out;
}

/** Analyses one window. Throws AnalysisInputError for input it cannot read (unit, rate, duplicates). */
export function analyseWindow(input: AnalysisInput, partialSettings?: Partial<AnalysisSettings>): AnalysisResult {
  const settings = resolveSettings(partialSettings);
  const context = input.context ?? {};
  if (!input.channels || input.channels.length === 0) throw new AnalysisInputError('no channels in the analysis window');
  const scanned: ScannedChannel[] = [];
  for (const ch of input.channels) {
    if (scanned.some((s) => s.ch.role === ch.role)) throw new AnalysisInputError(`more than one ${ch.role} channel in the window`);
    const declared = ch.role === 'pleth' || ch.role === 'abp' ? (context.builtInFiltering ?? null) : null;
    scanned.push(scanChannel(ch, settings, declared));
  }
  const conditioned = filterChannels(scanned, settings);
  const byRole = new Map<ChannelRole, ConditionedChannel>(conditioned.map((c) => [c.role, c]));
  const abpQ = beatsFor(byRole.get('abp'), settings);
  const plethQ = beatsFor(byRole.get('pleth'), settings);
  const arterialLine = abpQ ? checkArterialLine(byRole.get('abp') as ConditionedChannel, abpQ.series, abpQ.noiseSd) : null;

  const settingChanges = input.settingChanges ?? [];
  const bounds = findBreaths(byRole, abpQ ?? plethQ, context);
  const gaps: SampleSpan[] = conditioned.flatMap((c) => c.report.gaps);
  const cycles = bounds && bounds.onsets.length >= 2 ? buildCycles(bounds, abpQ?.series ?? null, plethQ?.series ?? null, gaps, settings) : [];
  const used = selectCycles(cycles, settings.cyclesToAverage);
  const indices = computeIndices(used, cycles, abpQ?.series ?? null, plethQ?.series ?? null, bounds, context);

  const pbw = context.patientHeightCm !== undefined && context.patientSex ? predictedBodyWeightKg(context.patientHeightCm, context.patientSex) : null;
  const vtPerKg = pbw !== null && pbw > 0 && context.tidalVolumeMl !== undefined ? context.tidalVolumeMl / pbw : null;
  const channels = conditioned.map((c) => c.report);
  const mechanics = respiratoryMechanics(byRole.get('paw'), bounds, context);
  const selection = selectionReport(cycles, abpQ?.series ?? null);
  const kvd = keptVersusDropped(cycles);
  const flags = buildFlags({
    context,
    settings,
    channels,
    abp: abpQ,
    pleth: plethQ,
    arterialLine,
    bounds,
    cycles,
    used,
    indices,
    tidalVolumeMlPerKg: vtPerKg,
    checklist: resolveChecklist(context, input.bedContext),
    mechanics,
    // A setting change inside the window changes breath size, shape or timing by itself: that
    // variation is not read as patient effort (dips below PEEP still are); the window is flagged.
    effortEvidence: settingChanges.length ? [] : spontaneousEvidence(byRole, bounds, context),
    settingChanges,
    selection: { ...kvd, droppedFraction: selection.droppedFraction, total: selection.cyclesTotal },
  });
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
    respiratoryMechanics: mechanics,
    selection,
  };
  return sanitize(result);
}

/** American spelling kept as an alias for callers written before 2.0.0. */
export const analyzeWindow = analyseWindow;

export { CHALLENGE_THRESHOLD_SOURCE, concatenateSegments, splitAtContextChanges } from './challenge';

/**
 * Tidal volume challenge over a whole challenge (segments before and after the step, each with its
 * context): baseline PPV, challenge PPV, ΔPPV, threshold with its source, verdict and reasons.
 */
export function analyseTidalVolumeChallenge(input: ChallengeInput, partialSettings?: Partial<AnalysisSettings>) {
  return evaluateTidalVolumeChallenge(input, analyseWindow, partialSettings);
}
