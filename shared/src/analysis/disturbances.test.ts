import { describe, expect, it } from 'vitest';
import { generateWindow, type Disturbance } from '../synthetic/index';
import { truthOverUsedCycles } from '../synthetic/test-support/grid-support';
import { analyseWindow } from './index';
import type { AnalysisContext, FlagCode } from './types';

// Disturbed synthetic windows: on each, the flag named for that disturbance must fire.
// Base windows span slow/fast heart and ventilator rates; seeds are fixed.
const BASES: [number, number, number][] = [
  [80, 15, 12],
  [110, 20, 20],
  [60, 12, 6],
  [130, 25, 15],
];
const CONTEXT: AnalysisContext = {
  tidalVolumeMl: 600,
  patientHeightCm: 175,
  patientSex: 'male',
  ventilationMode: 'controlled',
  plethScaling: 'raw',
  probeSite: 'ear',
};

const CASES: { name: string; disturbances: Disturbance[]; flag: FlagCode; source: string }[] = [
  // Noise: Sun 2006 mean-negative-slope rule and template correlation (Li & Clifford 2012).
  { name: 'heavy noise', disturbances: [{ kind: 'noise', level: 0.15 }], flag: 'noise-motion', source: 'common practice; Sun 2006 noise rule' },
  { name: 'motion artefact', disturbances: [{ kind: 'motion', start: 25, duration: 6, amplitude: 0.5 }], flag: 'noise-motion', source: 'common practice' },
  { name: 'ectopic beats', disturbances: [{ kind: 'ectopic', count: 3 }], flag: 'ectopic-beats', source: 'Ann Intensive Care 2021 checklist: arrhythmia' },
  {
    name: 'AF-like rhythm',
    disturbances: [{ kind: 'irregular-rhythm', variability: 0.3 }],
    flag: 'irregular-rhythm',
    source: 'Ann Intensive Care 2016: arrhythmia gives false positives',
  },
  { name: 'clipping', disturbances: [{ kind: 'clipping', level: 0.85 }], flag: 'clipping', source: 'common practice' },
  { name: 'over-damped line', disturbances: [{ kind: 'damping', cutoffHz: 2 }], flag: 'arterial-damped', source: 'Gardner, Anesthesiology 1981' },
  { name: 'flat line', disturbances: [{ kind: 'flat-line', start: 20, duration: 6 }], flag: 'flat-line', source: 'common practice' },
  { name: 'gap', disturbances: [{ kind: 'gap', start: 30, duration: 3 }], flag: 'gap', source: 'common practice' },
  {
    name: 'spontaneous breaths',
    disturbances: [{ kind: 'spontaneous-breaths', count: 3 }],
    flag: 'spontaneous-breathing',
    source: 'Ann Intensive Care 2021 checklist',
  },
  { name: 'fast flush', disturbances: [{ kind: 'flush', start: 40, duration: 2 }], flag: 'arterial-flush', source: 'Gardner 1981; common practice' },
];

let seed = 7000;
describe('disturbed synthetic windows raise the right flag', () => {
  for (const c of CASES) {
    for (const [hr, rr, ppv] of BASES) {
      const s = ++seed;
      it(`${c.name} at HR ${hr}, RR ${rr}, PPV ${ppv} → ${c.flag} (${c.source})`, () => {
        const w = generateWindow({ seed: s, heartRate: hr, respiratoryRate: rr, ppv, channels: ['abp', 'pleth', 'paw'], disturbances: c.disturbances });
        const r = analyseWindow({ channels: w.channels, context: CONTEXT });
        expect(r.flags.map((f) => f.code)).toContain(c.flag);
        expect(r.verdict).not.toBe('valid');
        // Whatever the engine still reports must come only from cycles it judged usable.
        for (const cy of r.cycles.filter((x) => x.usedInWindow)) expect(cy.usable).toBe(true);
      });
    }
  }

  it('the direction of error is given where the literature says (Ann Intensive Care 2016, doi 10.1186/s13613-016-0216-7)', () => {
    const spont = analyseWindow({
      channels: generateWindow({ seed: 1, heartRate: 80, respiratoryRate: 15, ppv: 10, disturbances: [{ kind: 'spontaneous-breaths', count: 3 }] }).channels,
      context: CONTEXT,
    });
    expect(spont.flags.find((f) => f.code === 'spontaneous-breathing')?.direction).toBe('false-high');
    const af = analyseWindow({
      channels: generateWindow({ seed: 2, heartRate: 80, respiratoryRate: 15, ppv: 10, disturbances: [{ kind: 'irregular-rhythm', variability: 0.3 }] })
        .channels,
      context: CONTEXT,
    });
    expect(af.flags.find((f) => f.code === 'irregular-rhythm')?.direction).toBe('false-high');
    const slow = analyseWindow({ channels: generateWindow({ seed: 3, heartRate: 55, respiratoryRate: 20, ppv: 10 }).channels, context: CONTEXT });
    expect(slow.flags.find((f) => f.code === 'low-hr-rr-ratio')?.direction).toBe('false-low');
  });

  it('baseline wander is tolerated: no flag and PPV within ±1 point (PP = SBP − DBP of each beat cancels slow drift)', () => {
    for (const [hr, rr, ppv] of BASES) {
      const w = generateWindow({
        seed: hr * rr,
        heartRate: hr,
        respiratoryRate: rr,
        ppv,
        disturbances: [{ kind: 'baseline-wander', amplitude: 0.3, frequencyHz: 0.05 }],
      });
      const r = analyseWindow({ channels: w.channels, context: CONTEXT });
      expect(r.flags).toEqual([]);
      expect(Math.abs((r.indices.ppv.value as number) - (truthOverUsedCycles(r, w.truth, 'ppv') as number))).toBeLessThanOrEqual(1);
    }
  });

  it('light noise (0.5 % of PP) is tolerated within ±1 point; noise above 1 % of PP is flagged as likely false high', () => {
    for (const [hr, rr, ppv] of BASES) {
      const light = generateWindow({ seed: hr + 1, heartRate: hr, respiratoryRate: rr, ppv, disturbances: [{ kind: 'noise', level: 0.005 }] });
      const r1 = analyseWindow({ channels: light.channels, context: CONTEXT });
      expect(r1.flags).toEqual([]);
      expect(Math.abs((r1.indices.ppv.value as number) - (truthOverUsedCycles(r1, light.truth, 'ppv') as number))).toBeLessThanOrEqual(1);
      const noisy = generateWindow({ seed: hr + 2, heartRate: hr, respiratoryRate: rr, ppv, disturbances: [{ kind: 'noise', level: 0.02 }] });
      const r2 = analyseWindow({ channels: noisy.channels, context: CONTEXT });
      const flag = r2.flags.find((f) => f.code === 'noise-motion' && f.source === 'abp');
      expect(flag?.direction).toBe('false-high');
    }
  });

  it('ectopic beats are excluded: PPV from the remaining cycles stays within ±1 point', () => {
    const w = generateWindow({ seed: 42, heartRate: 90, respiratoryRate: 15, ppv: 14, disturbances: [{ kind: 'ectopic', count: 3 }] });
    const r = analyseWindow({ channels: w.channels, context: CONTEXT });
    const ectopic = r.beats.abp!.beats.filter((b) => b.rejectReasons.includes('ectopic'));
    expect(ectopic.length).toBeGreaterThanOrEqual(3);
    expect(r.cycles.filter((c) => c.rejectReasons.includes('ectopic-beat')).length).toBeGreaterThanOrEqual(3);
    expect(Math.abs((r.indices.ppv.value as number) - (truthOverUsedCycles(r, w.truth, 'ppv') as number))).toBeLessThanOrEqual(1);
  });

  it('other monitor sample rates (62.5–500 Hz): beats all found and PPV, ΔPOP within ±1 point (Zong windows scaled with fs)', () => {
    for (const fs of [62.5, 100, 250, 500]) {
      const w = generateWindow({ seed: 60 + fs, heartRate: 95, respiratoryRate: 16, ppv: 15, sampleRate: fs, channels: ['abp', 'pleth', 'paw'] });
      const r = analyseWindow({ channels: w.channels, context: CONTEXT });
      expect(r.beats.abp!.acceptedCount, `fs ${fs}`).toBeGreaterThanOrEqual(w.truth.beats.abp.length - 2);
      expect(Math.abs((r.indices.ppv.value as number) - (truthOverUsedCycles(r, w.truth, 'ppv') as number)), `fs ${fs}`).toBeLessThanOrEqual(1);
      expect(Math.abs((r.indices.deltaPop.value as number) - (truthOverUsedCycles(r, w.truth, 'deltaPop') as number)), `fs ${fs}`).toBeLessThanOrEqual(1);
    }
  });

  it('without paw, cycles come from CO2 and PPV stays within ±1 point', () => {
    const w = generateWindow({ seed: 77, heartRate: 85, respiratoryRate: 14, ppv: 16, channels: ['abp', 'co2'] });
    const r = analyseWindow({ channels: w.channels, context: CONTEXT });
    expect(r.respiration.source).toBe('co2');
    expect(r.cycles.every((c) => c.source === 'co2')).toBe(true);
    const truth = w.truth.cycles.reduce((a, c) => a + (c.ppv as number), 0) / w.truth.cycles.length;
    expect(Math.abs((r.indices.ppv.value as number) - truth)).toBeLessThanOrEqual(1);
  });

  it('without paw or CO2, cycles are inferred from the set rate, flagged, and PPV stays near the construction', () => {
    const w = generateWindow({ seed: 78, heartRate: 85, respiratoryRate: 14, ppv: 16, channels: ['abp'] });
    const r = analyseWindow({ channels: w.channels, context: { ...CONTEXT, setRespiratoryRate: 14 } });
    expect(r.respiration.source).toBe('inferred');
    expect(r.flags.map((f) => f.code)).toContain('respiration-inferred');
    expect(r.verdict).toBe('questionable');
    const truth = w.truth.cycles.reduce((a, c) => a + (c.ppv as number), 0) / w.truth.cycles.length;
    expect(Math.abs((r.indices.ppv.value as number) - truth)).toBeLessThanOrEqual(1.5);
    expect(r.indices.respiratoryRate.value).toBe(14);
  });

  it('without paw, CO2 or set rate, no cycles: indices not computable with the reason, flag no-respiration-source', () => {
    const w = generateWindow({ seed: 79, heartRate: 85, respiratoryRate: 14, ppv: 16, channels: ['abp'] });
    const r = analyseWindow({ channels: w.channels, context: CONTEXT });
    expect(r.indices.ppv.value).toBeNull();
    expect(r.indices.ppv.notComputableReason).toMatch(/set ventilator rate/);
    expect(r.flags.map((f) => f.code)).toContain('no-respiration-source');
    expect(r.verdict).toBe('not-valid');
  });
});
