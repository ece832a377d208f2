import type { AnalysisSettings, DecisionBand } from './types';

/**
 * Default decision bands. They are context for a trained reader, shown with their source; they
 * carry no clinical order and any site may replace them through settings.
 */
export const DEFAULT_BANDS: DecisionBand[] = [
  {
    id: 'ppv-low',
    index: 'ppv',
    lower: 0,
    upper: 9,
    unit: '%',
    label: 'below the published grey zone',
    source: 'Cannesson et al., Anesthesiology 2011 (grey zone 9–13 %; figures from memory)',
  },
  {
    id: 'ppv-grey-zone',
    index: 'ppv',
    lower: 9,
    upper: 13,
    unit: '%',
    label: 'inconclusive (grey zone)',
    source: 'Cannesson et al., Anesthesiology 2011 (grey zone 9–13 %; figures from memory)',
  },
  {
    id: 'ppv-high',
    index: 'ppv',
    lower: 13,
    upper: null,
    unit: '%',
    label: 'above the published threshold of 13 %',
    source: 'Michard et al., Am J Respir Crit Care Med 2000: PPV 13 %, sensitivity 94 %, specificity 96 % in 40 septic patients',
  },
  {
    id: 'delta-pop-high',
    index: 'deltaPop',
    lower: 13,
    upper: null,
    unit: '%',
    label: 'above the published threshold of 13 %',
    source: 'Cannesson et al., Anesthesiology 2007: ΔPOP 13 %, sensitivity 80 %, specificity 90 %',
  },
  {
    id: 'ppv-surgical-reference',
    index: 'ppv',
    lower: 2,
    upper: 16,
    unit: '%',
    label: 'reference range in elective surgery (2.5–97.5th percentile, median 7 %)',
    source: 'Anesthesiology 2017;126:249 (automated PPV in elective surgery)',
  },
];

export const DEFAULT_SETTINGS: AnalysisSettings = {
  cyclesToAverage: 3, // common practice: three consecutive respiratory cycles
  abpLowpassHz: 16, // Zong 2003 low-pass the arterial pressure at 16 Hz before the slope sum function
  abpFilterOrder: 2,
  plethBandpassHz: [0.5, 8], // Elgendi 2013
  plethFilterOrder: 2,
  respirationLowpassHz: 4,
  minHrRrRatio: 3.6, // De Backer et al., Anesthesiology 2009
  minTidalVolumeMlPerKg: 8, // De Backer et al., Intensive Care Med 2005 (from memory); Ann Intensive Care 2021 checklist
  lowComplianceMlPerCmH2O: 30, // Monnet et al. 2012, from memory
  minTemplateCorrelation: 0.86, // Li & Clifford, Physiol Meas 2012, from memory
  ectopicIntervalFraction: 0.2,
  irregularRhythmFraction: 0.15,
  cycleLengthTolerance: 0.2,
  minGapSeconds: 0.04,
  minFlatLineSeconds: 2,
  flatLineTolerance: 0.005,
  minClipSeconds: 0.04,
  plausibleMaxPercent: 50, // common practice: PPV outside 0–50 % is an artefact
  maxDroppedCycleFraction: 0.5,
  selectionBiasPoints: 2,
  challengeThresholdPoints: 3.5, // Myatra et al., Crit Care Med 2017, from memory
  challengeMinStepMlPerKg: 1.5, // Myatra 2017 stepped 6 → 8 mL/kg; 1.5 leaves room for rounding of the set volume
  challengeMinHoldSeconds: 60, // Myatra 2017: PPV read after one minute at 8 mL/kg
  bands: DEFAULT_BANDS,
};

/** Merges partial settings over the defaults and checks them; throws RangeError naming the field. */
export function resolveSettings(partial: Partial<AnalysisSettings> = {}): AnalysisSettings {
  const s: AnalysisSettings = { ...DEFAULT_SETTINGS, ...partial, bands: (partial.bands ?? DEFAULT_BANDS).map((b) => ({ ...b })) };
  s.plethBandpassHz = [s.plethBandpassHz[0], s.plethBandpassHz[1]];
  const positive: (keyof AnalysisSettings)[] = [
    'abpLowpassHz',
    'respirationLowpassHz',
    'minHrRrRatio',
    'minTidalVolumeMlPerKg',
    'lowComplianceMlPerCmH2O',
    'ectopicIntervalFraction',
    'irregularRhythmFraction',
    'cycleLengthTolerance',
    'minGapSeconds',
    'minFlatLineSeconds',
    'flatLineTolerance',
    'minClipSeconds',
    'plausibleMaxPercent',
    'maxDroppedCycleFraction',
    'selectionBiasPoints',
    'challengeThresholdPoints',
    'challengeMinStepMlPerKg',
    'challengeMinHoldSeconds',
  ];
  for (const key of positive) {
    const v = s[key];
    if (typeof v !== 'number' || !Number.isFinite(v) || v <= 0) throw new RangeError(`setting ${key} must be a positive number, got ${String(v)}`);
  }
  if (!Number.isInteger(s.cyclesToAverage) || s.cyclesToAverage < 1 || s.cyclesToAverage > 20) {
    throw new RangeError(`setting cyclesToAverage must be an integer 1–20, got ${s.cyclesToAverage}`);
  }
  if (!(s.minTemplateCorrelation > -1 && s.minTemplateCorrelation < 1)) throw new RangeError('setting minTemplateCorrelation must lie in (−1, 1)');
  if (!(s.plethBandpassHz[0] > 0 && s.plethBandpassHz[1] > s.plethBandpassHz[0]))
    throw new RangeError('setting plethBandpassHz must be [low, high] with 0 < low < high');
  return s;
}
