import type { Scenario, ScenarioId } from './types';

/**
 * The demo scenarios at "Ebbgate demo: Harrowmere General Hospital" (invented patients). Each
 * is data: the patient, the ventilator, the disturbances put in, and what Ebbgate should make of
 * it. Expectations follow the validity limits in the domain notes (Ann Intensive Care 2016 and
 * 2021 checklists; De Backer 2009) and the engine's severity → verdict rule (critical → not valid,
 * warning → questionable; flags on the pleth bear on pleth indices only).
 */
const controlled = (rate: number, tidalVolumeMlPerKg: number) => ({ mode: 'controlled' as const, rate, tidalVolumeMlPerKg, peep: 5, peakPressure: 22 });
const standardChannels = ['abp', 'pleth', 'paw'] as const;
const cleanFlags = [
  'irregular-rhythm',
  'spontaneous-breathing',
  'tidal-volume-low',
  'tidal-volume-unknown',
  'noise-motion',
  'arterial-damped',
  'low-hr-rr-ratio',
] as const;

export const SCENARIOS: Record<ScenarioId, Scenario> = {
  'fluid-responsive': {
    id: 'fluid-responsive',
    title: 'Fluid-responsive: steep part of the curve',
    story: 'Septic patient after induction, low filling pressure; a fluid bolus would likely raise output.',
    patient: { heightCm: 168, sex: 'female', heartRate: 92, spo2: 96, edp: 4, meanDbp: 58 },
    ventilator: controlled(14, 8.5),
    channels: [...standardChannels, 'co2'],
    disturbancesPerMinute: [],
    expect: {
      outcome: 'assessed',
      verdict: 'valid',
      flags: [],
      absentFlags: [...cleanFlags],
      ppvRecovered: true,
      reading: 'PPV well above 13 %, every validity condition met.',
    },
  },
  'not-responsive': {
    id: 'not-responsive',
    title: 'Not responsive: flat part of the curve',
    story: 'Well-filled patient after a litre of crystalloid; more fluid would add little.',
    patient: { heightCm: 181, sex: 'male', heartRate: 74, spo2: 98, edp: 10, meanDbp: 72 },
    ventilator: controlled(14, 8),
    channels: [...standardChannels],
    disturbancesPerMinute: [],
    expect: {
      outcome: 'assessed',
      verdict: 'valid',
      flags: [],
      absentFlags: [...cleanFlags],
      ppvRecovered: true,
      reading: 'PPV below the grey zone, valid conditions.',
    },
  },
  'atrial-fibrillation': {
    id: 'atrial-fibrillation',
    title: 'Atrial fibrillation',
    story: 'New fast atrial fibrillation: beat-to-beat filling varies with the interval, not the breath.',
    patient: { heightCm: 162, sex: 'female', heartRate: 108, spo2: 95, edp: 6 },
    ventilator: controlled(16, 8),
    channels: [...standardChannels],
    disturbancesPerMinute: [{ kind: 'irregular-rhythm', variability: 0.3 }],
    expect: {
      outcome: 'assessed',
      verdict: 'not-valid',
      flags: ['irregular-rhythm'],
      flagDirections: { 'irregular-rhythm': 'false-high' },
      absentFlags: ['spontaneous-breathing'],
      ppvRecovered: false,
      reading: 'Arrhythmia gives false-high variation: not valid.',
    },
  },
  'spontaneous-breathing': {
    id: 'spontaneous-breathing',
    title: 'Spontaneous breathing efforts',
    story: 'Sedation lightened: the patient triggers extra breaths against a controlled mode.',
    patient: { heightCm: 175, sex: 'male', heartRate: 88, spo2: 97, edp: 7 },
    ventilator: controlled(14, 8),
    channels: [...standardChannels],
    disturbancesPerMinute: [{ kind: 'spontaneous-breaths', count: 4 }],
    expect: {
      outcome: 'assessed',
      verdict: 'not-valid',
      flags: ['spontaneous-breathing'],
      flagDirections: { 'spontaneous-breathing': 'false-high' },
      absentFlags: ['irregular-rhythm'],
      ppvRecovered: false,
      reading: 'Patient effort gives false-high variation: not valid.',
    },
  },
  'motion-artefact': {
    id: 'motion-artefact',
    title: 'Motion artefact',
    story: 'Patient being repositioned on the table: large swings on the arterial line and pleth.',
    patient: { heightCm: 171, sex: 'female', heartRate: 80, spo2: 97, edp: 5 },
    ventilator: controlled(12, 8),
    channels: [...standardChannels],
    disturbancesPerMinute: [
      { kind: 'motion', start: 4, duration: 14, amplitude: 0.4 },
      { kind: 'motion', start: 34, duration: 14, amplitude: 0.4 },
    ],
    expect: {
      outcome: 'assessed',
      verdict: 'questionable',
      flags: ['noise-motion'],
      absentFlags: ['irregular-rhythm'],
      ppvRecovered: false,
      reading: 'Beats lost to artefact: the value is questionable.',
    },
  },
  'damped-arterial-line': {
    id: 'damped-arterial-line',
    title: 'Over-damped arterial line',
    story: 'Air bubble in the transducer line: the notch is gone, systolic pressure and its swing understated.',
    patient: { heightCm: 186, sex: 'male', heartRate: 84, spo2: 98, edp: 5 },
    ventilator: controlled(14, 8),
    channels: [...standardChannels],
    disturbancesPerMinute: [{ kind: 'damping', cutoffHz: 3 }],
    expect: {
      outcome: 'assessed',
      verdict: 'questionable',
      flags: ['arterial-damped'],
      flagDirections: { 'arterial-damped': 'unknown' },
      absentFlags: ['irregular-rhythm', 'spontaneous-breathing'],
      ppvRecovered: false,
      reading: 'Damped line understates systolic pressure and SPV; the direction of the PPV error is not known: questionable.',
    },
  },
  'vasopressor-finger-probe': {
    id: 'vasopressor-finger-probe',
    title: 'Vasopressor with a finger probe',
    story: 'Norepinephrine running; the pleth is read at the finger, where vasoconstriction distorts it most.',
    patient: { heightCm: 158, sex: 'female', heartRate: 86, spo2: 95, edp: 5, perfusionIndex: 0.6 },
    ventilator: controlled(14, 8),
    channels: [...standardChannels],
    vasopressorRunning: true,
    probeSite: 'finger',
    // Invented for the demo: the constricted finger pleth under-reads the swing the arterial line shows.
    deltaPopFactor: 0.6,
    disturbancesPerMinute: [],
    expect: {
      outcome: 'assessed',
      verdict: 'valid',
      flags: ['vasopressor-running', 'finger-probe'],
      absentFlags: [...cleanFlags],
      indexVerdicts: { deltaPop: 'questionable' },
      ppvRecovered: true,
      reading: 'PPV from the arterial line stays valid; ΔPOP from the finger pleth is questionable.',
    },
  },
  'low-tidal-volume': {
    id: 'low-tidal-volume',
    title: 'Low tidal volume (lung-protective ventilation)',
    story: 'ARDS on 5 mL/kg: the breath is too small to move preload, so a responder can look like a non-responder.',
    patient: { heightCm: 177, sex: 'male', heartRate: 96, spo2: 91, edp: 4 },
    ventilator: controlled(22, 5),
    channels: [...standardChannels],
    disturbancesPerMinute: [],
    expect: {
      outcome: 'assessed',
      verdict: 'not-valid',
      flags: ['tidal-volume-low'],
      flagDirections: { 'tidal-volume-low': 'false-low' },
      absentFlags: ['irregular-rhythm', 'spontaneous-breathing'],
      ppvRecovered: true,
      reading: 'Tidal volume < 8 mL/kg PBW gives false-low variation: not valid.',
    },
  },
  'unmapped-channel': {
    id: 'unmapped-channel',
    title: 'A channel the monitor profile does not map',
    story: 'A monitor was upgraded and now also sends an impedance respiration wave its profile does not list.',
    patient: { heightCm: 170, sex: 'male', heartRate: 78, spo2: 97, edp: 8 },
    ventilator: controlled(14, 8),
    channels: [...standardChannels],
    unmappedChannel: { code: 'EBB_RESP_IMPEDANCE', sampleRate: 50, unit: 'Ohm' },
    disturbancesPerMinute: [],
    expect: {
      outcome: 'quarantined',
      flags: [],
      absentFlags: [],
      ppvRecovered: false,
      reading: 'The gateway refuses each batch into the inbound quarantine, naming the unmapped code.',
    },
  },
  // Tidal volume challenge (Myatra et al., Crit Care Med 2017, from memory): at 6 mL/kg PBW the
  // window PPV is not valid (tidal volume too low); raising it to 8 mL/kg for a minute and reading
  // the rise of PPV answers instead. Baseline 120 s, so the stream is back at 6 mL/kg between steps.
  'tidal-volume-challenge-responder': {
    id: 'tidal-volume-challenge-responder',
    title: 'Tidal volume challenge: responder',
    story: 'ARDS ventilated at 6 mL/kg PBW; the clinician raises the tidal volume to 8 mL/kg for one minute, then back.',
    patient: { heightCm: 176, sex: 'male', heartRate: 94, spo2: 92, edp: 4 },
    ventilator: controlled(16, 6),
    channels: ['abp', 'paw'],
    disturbancesPerMinute: [],
    tidalVolumeChallenge: { kind: 'responder', baselineSeconds: 120, challengeSeconds: 60 },
    expect: {
      outcome: 'assessed',
      flags: [],
      absentFlags: ['irregular-rhythm', 'spontaneous-breathing'],
      ppvRecovered: false,
      reading: 'PPV rises by 3.5 points or more when the tidal volume goes to 8 mL/kg: challenge positive.',
    },
  },
  'tidal-volume-challenge-non-responder': {
    id: 'tidal-volume-challenge-non-responder',
    title: 'Tidal volume challenge: non-responder',
    story: 'Lung-protective ventilation at 6 mL/kg PBW after fluids; the one-minute step to 8 mL/kg barely moves PPV.',
    patient: { heightCm: 164, sex: 'female', heartRate: 82, spo2: 94, edp: 11 },
    ventilator: controlled(18, 6),
    channels: ['abp', 'paw'],
    disturbancesPerMinute: [],
    tidalVolumeChallenge: { kind: 'non-responder', baselineSeconds: 120, challengeSeconds: 60 },
    expect: {
      outcome: 'assessed',
      flags: [],
      absentFlags: ['irregular-rhythm', 'spontaneous-breathing'],
      ppvRecovered: false,
      reading: 'PPV rises by less than 3.5 points at 8 mL/kg: challenge negative.',
    },
  },
};

export const SCENARIO_IDS = Object.keys(SCENARIOS) as ScenarioId[];

/**
 * EHR outage of the demo, through the mock EHR's fault admin API (PUT /_admin/faults). Two
 * phases, because during a full outage the gateway never gets as far as posting an Observation
 * (its token and patient-context requests fail first): first the EHR refuses the next Observation
 * posts with 422 (deliveries the outbox marks failed at once); once those refusals have happened
 * (the rule removes itself) or after `refusalWaitSeconds`, every request is answered 503 with Retry-After until the faults are
 * cleared `durationSeconds` later (deliveries wait, retry and go through).
 */
export const EHR_OUTAGE = {
  atSeconds: 40,
  durationSeconds: 60,
  refusalWaitSeconds: 20,
  // Three refusals: a 422 on a transaction Bundle makes the gateway resend its entries one by one
  // to find the bad one, so the first refusal may land on a Bundle and the next on a single post.
  refusalRules: [{ scope: 'Observation', errorRate: 1, statusCodes: [422], remaining: 3 }],
  outageRules: [{ scope: 'all', errorRate: 1, statusCodes: [503], retryAfterSeconds: 5 }],
  expect:
    'one delivery failed with the EHR OperationOutcome; others pending and retried, delivered once the faults are cleared; an alert mail when the destination counts as down',
} as const;
