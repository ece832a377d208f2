import type { FlagCode } from '@/lib/analysis';
import { humanize } from '@/lib/format';

const CODES: FlagCode[] = [
  'irregular-rhythm',
  'ectopic-beats',
  'too-few-cycles',
  'low-hr-rr-ratio',
  'spontaneous-breathing',
  'ventilation-not-controlled',
  'tidal-volume-low',
  'tidal-volume-unknown',
  'compliance-low',
  'arterial-damped',
  'arterial-flush',
  'clipping',
  'flat-line',
  'gap',
  'noise-motion',
  'vasopressor-running',
  'finger-probe',
  'pleth-auto-scaled',
  'monitor-filtering-declared',
  'respiration-inferred',
  'no-respiration-source',
  'no-pulse-source',
  'value-implausible',
  'pleth-quality-low',
  'pleth-processing-unknown',
];

export const FLAG_OPTIONS = CODES.map((c) => ({ value: c, label: humanize(c) }));
