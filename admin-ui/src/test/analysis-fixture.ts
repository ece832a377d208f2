import type { AnalysisResult, Beat, RespiratoryCycle, Waveform } from '@/lib/analysis';

/**
 * A small, hand-built window: 30 s of arterial pressure at 125 Hz with a beat every 0.8 s and a
 * ventilator cycle every 4 s. Which beats and cycles are rejected is chosen here, so a test can
 * count the marks it expects. Not engine output: the plot only draws what it is given.
 */
export function fixtureWindow(
  opts: { rejected?: Record<number, Beat['rejectReasons']>; unusableCycles?: Record<number, RespiratoryCycle['rejectReasons']> } = {},
) {
  const fs = 125;
  const duration = 30;
  const n = fs * duration;
  const abp: number[] = [];
  const paw: number[] = [];
  for (let i = 0; i < n; i++) {
    const t = i / fs;
    const phase = (t % 0.8) / 0.8;
    const pulse = phase < 0.25 ? Math.sin((phase / 0.25) * (Math.PI / 2)) : Math.exp(-(phase - 0.25) * 3.2);
    const resp = Math.sin((2 * Math.PI * t) / 4);
    abp.push(70 + 45 * pulse + 4 * resp);
    paw.push(5 + 10 * Math.max(0, resp));
  }
  const waveform: Waveform = {
    startTime: '2026-12-01T21:00:00.000Z',
    channels: [
      { role: 'abp', unit: 'mmHg', sampleRate: fs, samples: abp },
      { role: 'paw', unit: 'cmH2O', sampleRate: fs, samples: paw },
    ],
  };
  const beats: Beat[] = [];
  for (let k = 0; k * 0.8 + 0.2 < duration; k++) {
    const foot = k * 0.8;
    const peak = foot + 0.2;
    const reasons = opts.rejected?.[k] ?? [];
    beats.push({
      n: k,
      footSample: Math.round(foot * fs),
      footTime: foot,
      peakSample: Math.round(peak * fs),
      peakTime: peak,
      sbp: 115,
      dbp: 70,
      pp: 45,
      map: 85,
      amplitude: null,
      dc: null,
      ibi: k === 0 ? null : 0.8,
      templateCorrelation: 0.97,
      accepted: reasons.length === 0,
      rejectReasons: reasons,
    });
  }
  const cycles: RespiratoryCycle[] = [];
  for (let c = 0; c * 4 < duration; c++) {
    const start = c * 4;
    const end = Math.min(duration, start + 4);
    const reasons = opts.unusableCycles?.[c] ?? [];
    cycles.push({
      n: c,
      source: 'paw',
      startSample: start * fs,
      endSample: end * fs,
      startTime: start,
      endTime: end,
      abpBeatIndices: beats.filter((b) => b.peakTime >= start && b.peakTime < end).map((b) => b.n),
      plethBeatIndices: [],
      usable: reasons.length === 0,
      rejectReasons: reasons,
      ppv: reasons.length ? null : 11.8,
      spv: reasons.length ? null : 8,
      deltaPop: null,
      ppMax: 48,
      ppMin: 42.6,
      sbpMax: 119,
      sbpMin: 111,
      popMax: null,
      popMin: null,
      usedInWindow: reasons.length === 0 && c >= 1 && c <= 3,
      variationAllBeats: reasons.length ? null : 11.8,
    });
  }
  const iv = (value: number | null, unit: string, cyclesUsed = 3) => ({ value, unit, spread: value === null ? null : 1.2, cyclesUsed });
  const analysis: AnalysisResult = {
    engineVersion: '1.0.0',
    settings: {} as AnalysisResult['settings'],
    startTime: waveform.startTime,
    durationSeconds: duration,
    channels: [],
    beats: {
      abp: {
        source: 'abp',
        sampleRate: fs,
        method: 'zong-2003-ssf',
        beats,
        acceptedCount: beats.filter((b) => b.accepted).length,
        rejectedCount: beats.filter((b) => !b.accepted).length,
      },
      pleth: null,
    },
    respiration: { source: 'paw', sampleRate: fs, rateSource: 'measured', reason: null },
    cycles,
    indices: {
      ppv: iv(11.8, '%'),
      spv: iv(8, 'mmHg'),
      deltaPop: { ...iv(null, '%', 0), notComputableReason: 'no pleth channel' },
      perfusionIndex: { ...iv(null, '%', 0), notComputableReason: 'no pleth channel' },
      heartRate: iv(75, '/min'),
      respiratoryRate: iv(15, '/min'),
      hrRrRatio: iv(5, '1'),
    },
    verdict: 'questionable',
    indexVerdicts: {},
    flags: [
      { code: 'tidal-volume-unknown', severity: 'warning', direction: 'false-low', reason: 'Tidal volume not given: cannot check the 8 mL/kg PBW condition.' },
    ],
    arterialLine: {
      notchFraction: 0.9,
      dampingSuspected: false,
      underDampingSuspected: false,
      flushSuspected: false,
      flushTests: [],
      dampingEstimate: 'adequate',
      upstrokeSeconds: 0.12,
    },
    cautions: ['Decision support for trained clinicians only: Ebbgate does not diagnose and does not order fluid.', 'Defer to local protocols.'],
    bands: [
      {
        id: 'ppv-grey-zone',
        index: 'ppv',
        lower: 9,
        upper: 13,
        unit: '%',
        label: 'Grey zone: inconclusive',
        source: 'Cannesson et al., Anesthesiology 2011 (from memory)',
      },
    ],
    predictedBodyWeightKg: null,
    tidalVolumeMlPerKg: null,
    respiratoryMechanics: null,
    selection: {
      cyclesTotal: cycles.length,
      cyclesDropped: cycles.filter((c) => !c.usable).length,
      droppedFraction: cycles.filter((c) => !c.usable).length / cycles.length,
      ppvAllCycles: 11.8,
      pulsePressureDifference: 0,
    },
  };
  return { waveform, analysis };
}
