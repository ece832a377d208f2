import { CAUTIONS } from './cautions';
import { AnalysisInputError } from './conditioning';
import { predictedBodyWeightKg } from './pbw';
import { resolveSettings } from './settings';
import type {
  AnalysisChannel,
  AnalysisContext,
  AnalysisInput,
  AnalysisResult,
  AnalysisSettings,
  ChallengeInput,
  ChallengeReason,
  ContextChange,
  FlagCode,
  TidalVolumeChallengeResult,
} from './types';
import { ENGINE_VERSION } from './version';

export const CHALLENGE_THRESHOLD_SOURCE =
  'Myatra et al., Crit Care Med 2017: in patients ventilated at 6 mL/kg PBW, a rise of PPV of 3.5 points or more after one minute at 8 mL/kg predicted fluid responsiveness (figures from memory)';

/** Flags that a challenge expects at the low volume (that is why it is done) and so does not count against it. */
const EXPECTED: FlagCode[] = ['tidal-volume-low', 'tidal-volume-unknown', 'compliance-low', 'compliance-estimated'];

const REASON_TEXT: Record<ChallengeReason, string> = {
  'no-step': 'no rise of tidal volume (or of the airway-pressure swing) found between the segments',
  'step-too-small': 'the step of tidal volume is too small',
  'step-too-short': 'the higher tidal volume was not held long enough',
  'baseline-not-low': 'baseline tidal volume is not low: at 8 mL/kg PBW or more PPV applies directly',
  'airway-pressure-not-risen': 'the airway-pressure swing did not rise with the step: the volume step is not confirmed',
  'baseline-not-valid': 'no valid PPV at the low volume',
  'challenge-not-valid': 'no valid PPV at the higher volume',
  'irregular-rhythm': 'irregular rhythm or ectopic beats',
  'spontaneous-effort': 'spontaneous breathing effort',
  'ventilation-unconfirmed': 'controlled ventilation not confirmed',
};

/** Maps a flag that spoils a window to the challenge reason it gives. */
function reasonFor(code: FlagCode, side: 'baseline' | 'challenge'): ChallengeReason {
  if (code === 'irregular-rhythm' || code === 'ectopic-beats') return 'irregular-rhythm';
  if (code === 'spontaneous-breathing' || code === 'ventilation-not-controlled') return 'spontaneous-effort';
  if (code === 'ventilation-unconfirmed') return 'ventilation-unconfirmed';
  return side === 'baseline' ? 'baseline-not-valid' : 'challenge-not-valid';
}

/** Joins consecutive segments channel by channel (same roles and rates), context of the last one. */
export function concatenateSegments(segments: AnalysisInput[]): AnalysisInput {
  if (segments.length === 1) return segments[0];
  const first = segments[0];
  const channels: AnalysisChannel[] = first.channels.map((c) => {
    const parts = segments.map((s) => {
      const m = s.channels.find((x) => x.role === c.role);
      if (!m || m.sampleRate !== c.sampleRate || m.unit !== c.unit)
        throw new AnalysisInputError(`challenge segments differ in their ${c.role} channel (role, rate or unit)`);
      return m.samples;
    });
    const out = new Float64Array(parts.reduce((a, p) => a + p.length, 0));
    let o = 0;
    for (const p of parts) {
      out.set(p, o);
      o += p.length;
    }
    return { role: c.role, sampleRate: c.sampleRate, unit: c.unit, samples: out };
  });
  const last = segments[segments.length - 1];
  return { channels, context: last.context, bedContext: last.bedContext, startTime: first.startTime };
}

/** Splits one window at its context changes: from each `atSeconds` on, that context applies. */
export function splitAtContextChanges(input: AnalysisInput, changes: ContextChange[]): AnalysisInput[] {
  const sorted = [...changes].sort((a, b) => a.atSeconds - b.atSeconds);
  const cuts = [0, ...sorted.map((c) => c.atSeconds)];
  const contexts = [input.context ?? {}, ...sorted.map((c) => ({ ...(input.context ?? {}), ...c.context }))];
  const out: AnalysisInput[] = [];
  for (let k = 0; k < cuts.length; k++) {
    const from = cuts[k];
    const to = k + 1 < cuts.length ? cuts[k + 1] : Infinity;
    const channels = input.channels.map((c) => {
      const a = Math.min(c.samples.length, Math.round(from * c.sampleRate));
      const b = to === Infinity ? c.samples.length : Math.min(c.samples.length, Math.round(to * c.sampleRate));
      return { ...c, samples: c.samples.slice(a, b) };
    });
    if (channels.every((c) => c.samples.length >= 2)) out.push({ channels, context: contexts[k], bedContext: input.bedContext, startTime: input.startTime });
  }
  return out;
}

const durationOf = (s: AnalysisInput): number => Math.max(...s.channels.map((c) => c.samples.length / c.sampleRate));

function pbwOf(cx: AnalysisContext | undefined): number | null {
  return cx?.patientHeightCm !== undefined && cx.patientSex ? predictedBodyWeightKg(cx.patientHeightCm, cx.patientSex) : null;
}

/**
 * Tidal volume challenge (Myatra et al., Crit Care Med 2017, from memory). The step is found from
 * the tidal volume in context (the last rise between consecutive segments), or, without volumes,
 * from a rise of the airway-pressure swing of at least 20 %. Baseline PPV: the low-volume segments
 * joined, their last cycles; challenge PPV: the higher-volume segments joined, their last cycles,
 * which end once the volume has been held for at least the minimum time. The analyse function is
 * passed in so the challenge reuses the window engine unchanged.
 */
export function evaluateTidalVolumeChallenge(
  input: ChallengeInput,
  analyse: (i: AnalysisInput, s?: Partial<AnalysisSettings>) => AnalysisResult,
  partialSettings?: Partial<AnalysisSettings>,
): { tidalVolumeChallenge: TidalVolumeChallengeResult; baseline: AnalysisResult | null; challenge: AnalysisResult | null } {
  const s = resolveSettings(partialSettings);
  const segs = input.segments;
  if (segs.length < 2) throw new AnalysisInputError('a tidal volume challenge needs at least two segments (before and after the step)');
  const reasons: ChallengeReason[] = [];
  const texts: string[] = [];
  const why = (r: ChallengeReason, detail?: string): void => {
    if (!reasons.includes(r)) reasons.push(r);
    texts.push(detail ? `${REASON_TEXT[r]} (${detail})` : REASON_TEXT[r]);
  };
  const vts = segs.map((x) => x.context?.tidalVolumeMl);
  let step = -1;
  for (let k = 1; k < segs.length; k++) {
    const a = vts[k - 1];
    const b = vts[k];
    if (a !== undefined && b !== undefined && b > a) step = k;
  }
  let fromPressure = false;
  let results: (AnalysisResult | null)[] = segs.map(() => null);
  const analyseAt = (k: number): AnalysisResult => (results[k] ??= analyse(segs[k], s));
  if (step < 0 && vts.every((v) => v === undefined)) {
    // No volumes: a rise of the airway-pressure swing marks the step.
    for (let k = 1; k < segs.length; k++) {
      const a = analyseAt(k - 1).respiratoryMechanics?.pressureSwingCmH2O ?? null;
      const b = analyseAt(k).respiratoryMechanics?.pressureSwingCmH2O ?? null;
      if (a !== null && b !== null && b >= 1.2 * a) {
        step = k;
        fromPressure = true;
      }
    }
  }
  const base: TidalVolumeChallengeResult = {
    engineVersion: ENGINE_VERSION,
    baselinePpv: null,
    challengePpv: null,
    deltaPpv: null,
    threshold: s.challengeThresholdPoints,
    thresholdSource: CHALLENGE_THRESHOLD_SOURCE,
    verdict: 'cannot-be-judged',
    reasons,
    reasonTexts: texts,
    baselineTidalVolumeMl: null,
    challengeTidalVolumeMl: null,
    baselineMlPerKg: null,
    challengeMlPerKg: null,
    stepAtSeconds: null,
    challengeHeldSeconds: null,
    baselineVerdict: null,
    challengeVerdict: null,
    baselinePressureSwingCmH2O: null,
    challengePressureSwingCmH2O: null,
    baselineFlags: [],
    challengeFlags: [],
    cautions: [
      ...CAUTIONS,
      'A tidal volume challenge is a bedside test with its own limits; the decision rests with the treating clinician and local protocol.',
    ],
  };
  if (step < 0) {
    why('no-step');
    return { tidalVolumeChallenge: base, baseline: null, challenge: null };
  }
  // The runs of segments at the low and at the high volume on either side of the step.
  const same = (k: number, ref: number): boolean => (fromPressure ? true : vts[k] === vts[ref]);
  let lo = step - 1;
  while (lo > 0 && same(lo - 1, step - 1) && !fromPressure) lo--;
  let hi = step;
  while (hi + 1 < segs.length && same(hi + 1, step) && !fromPressure) hi++;
  const before = concatenateSegments(segs.slice(lo, step));
  const after = concatenateSegments(segs.slice(step, hi + 1));
  results = [];
  const b = analyse(before, s);
  const c = analyse(after, s);
  const held = durationOf(after);
  base.stepAtSeconds = segs.slice(0, step).reduce((a, x) => a + durationOf(x), 0);
  base.challengeHeldSeconds = held;
  base.baselineTidalVolumeMl = vts[step - 1] ?? null;
  base.challengeTidalVolumeMl = vts[step] ?? null;
  const pbw = pbwOf(segs[step].context) ?? pbwOf(segs[step - 1].context);
  if (pbw !== null && base.baselineTidalVolumeMl !== null && base.challengeTidalVolumeMl !== null) {
    base.baselineMlPerKg = base.baselineTidalVolumeMl / pbw;
    base.challengeMlPerKg = base.challengeTidalVolumeMl / pbw;
  }
  base.baselinePressureSwingCmH2O = b.respiratoryMechanics?.pressureSwingCmH2O ?? null;
  base.challengePressureSwingCmH2O = c.respiratoryMechanics?.pressureSwingCmH2O ?? null;
  base.baselineVerdict = b.verdict;
  base.challengeVerdict = c.verdict;
  base.baselineFlags = b.flags.map((f) => f.code);
  base.challengeFlags = c.flags.map((f) => f.code);
  base.baselinePpv = b.indices.ppv.value;
  base.challengePpv = c.indices.ppv.value;
  if (base.baselinePpv !== null && base.challengePpv !== null) base.deltaPpv = base.challengePpv - base.baselinePpv;

  // The step: large enough, held long enough, baseline at a low volume, and seen on airway pressure.
  if (base.baselineMlPerKg !== null && base.challengeMlPerKg !== null) {
    const d = base.challengeMlPerKg - base.baselineMlPerKg;
    if (d < s.challengeMinStepMlPerKg) why('step-too-small', `${d.toFixed(1)} mL/kg PBW, at least ${s.challengeMinStepMlPerKg} wanted`);
    if (base.baselineMlPerKg >= s.minTidalVolumeMlPerKg) why('baseline-not-low', `${base.baselineMlPerKg.toFixed(1)} mL/kg PBW`);
  } else if (base.baselineTidalVolumeMl !== null && base.challengeTidalVolumeMl !== null) {
    // Without PBW: Myatra's 6 → 8 mL/kg is a rise by a third; ask for at least a quarter.
    const ratio = base.challengeTidalVolumeMl / base.baselineTidalVolumeMl;
    if (ratio < 1.25) why('step-too-small', `volume raised by ${Math.round((ratio - 1) * 100)} % (height or sex unknown, so no mL/kg), at least 25 % wanted`);
  }
  if (held < s.challengeMinHoldSeconds - 0.5) why('step-too-short', `${held.toFixed(0)} s, at least ${s.challengeMinHoldSeconds} s wanted`);
  const pb = base.baselinePressureSwingCmH2O;
  const pc = base.challengePressureSwingCmH2O;
  if (!fromPressure && pb !== null && pc !== null && pc < 1.1 * pb) why('airway-pressure-not-risen', `swing ${pb.toFixed(1)} → ${pc.toFixed(1)} cmH2O`);
  for (const [side, r] of [
    ['baseline', b],
    ['challenge', c],
  ] as const) {
    const spoilers = r.flags.filter((f) => f.severity !== 'info' && !EXPECTED.includes(f.code));
    for (const f of spoilers) why(reasonFor(f.code, side), `${side}: ${f.code}`);
    if (r.indices.ppv.value === null) why(side === 'baseline' ? 'baseline-not-valid' : 'challenge-not-valid', r.indices.ppv.notComputableReason);
  }
  if (reasons.length === 0 && base.deltaPpv !== null) base.verdict = base.deltaPpv >= s.challengeThresholdPoints ? 'positive' : 'negative';
  return { tidalVolumeChallenge: base, baseline: b, challenge: c };
}
