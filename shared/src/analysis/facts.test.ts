import { describe, expect, it } from 'vitest';
import { generateWindow } from '../synthetic/index';
import { analyseWindow, CAUTIONS, DEFAULT_SETTINGS, ENGINE_VERSION } from './index';
import type { AnalysisContext } from './types';

// Facts of the trade, checked as behaviour; each test names its published source or says
// "common practice".
const CONTEXT: AnalysisContext = {
  tidalVolumeMl: 600,
  patientHeightCm: 175,
  patientSex: 'male',
  ventilationMode: 'controlled',
  plethScaling: 'raw',
  probeSite: 'ear',
};
const window = (channels: ('abp' | 'pleth' | 'paw' | 'co2')[] = ['abp', 'pleth', 'paw'], seed = 11) =>
  generateWindow({ seed, heartRate: 84, respiratoryRate: 14, ppv: 12, channels }).channels;

describe('facts of the trade', () => {
  it('three consecutive respiratory cycles are averaged by default (common practice)', () => {
    expect(DEFAULT_SETTINGS.cyclesToAverage).toBe(3);
    const r = analyseWindow({ channels: window(), context: CONTEXT });
    expect(r.indices.ppv.cyclesUsed).toBe(3);
    const used = r.cycles.filter((c) => c.usedInWindow);
    expect(used).toHaveLength(3);
    expect(used[1].n - used[0].n).toBe(1); // consecutive
    expect(used[2].n - used[1].n).toBe(1);
  });

  it('the cycle count is a setting (common practice: make it configurable)', () => {
    const r = analyseWindow({ channels: window(), context: CONTEXT }, { cyclesToAverage: 5 });
    expect(r.indices.ppv.cyclesUsed).toBe(5);
    expect(r.settings.cyclesToAverage).toBe(5);
  });

  it('a finger probe flags the pleth-derived values (common practice: finger probes are more distorted by vasoconstriction)', () => {
    const r = analyseWindow({ channels: window(), context: { ...CONTEXT, probeSite: 'finger' } });
    const f = r.flags.find((x) => x.code === 'finger-probe');
    expect(f?.source).toBe('pleth');
    expect(r.indexVerdicts.deltaPop).toBe('questionable');
    expect(r.verdict).toBe('valid'); // PPV from the arterial line is not affected
  });

  it('a low tidal volume makes the dynamic indices not valid but leaves the measured heart rate valid (Ann Intensive Care 2021 checklist: the limits are for PPV/ΔPOP)', () => {
    const r = analyseWindow({ channels: window(), context: { ...CONTEXT, tidalVolumeMl: 300 } });
    expect(r.verdict).toBe('not-valid');
    expect(r.flags.some((f) => f.code === 'tidal-volume-low')).toBe(true);
    expect(r.indices.heartRate.value).not.toBeNull();
    expect(r.indexVerdicts.heartRate).toBe('valid');
    expect(r.indexVerdicts.respiratoryRate).toBe('valid');
  });

  it('a running vasopressor flags the pleth (common practice: norepinephrine changes vessel-wall tone)', () => {
    const r = analyseWindow({ channels: window(), context: { ...CONTEXT, vasopressorRunning: true } });
    expect(r.flags.find((x) => x.code === 'vasopressor-running')?.severity).toBe('warning');
  });

  it('PI from an auto-scaled pleth is not computable, with the reason (common practice)', () => {
    const auto = generateWindow({ seed: 5, heartRate: 84, respiratoryRate: 14, ppv: 12, channels: ['abp', 'pleth', 'paw'], plethScaling: 'auto-scaled' });
    const r = analyseWindow({ channels: auto.channels, context: { ...CONTEXT, plethScaling: 'auto-scaled' } });
    expect(r.indices.perfusionIndex.value).toBeNull();
    expect(r.indices.perfusionIndex.notComputableReason).toMatch(/auto-scaled/);
    expect(r.flags.map((f) => f.code)).toContain('pleth-auto-scaled');
    expect(r.indices.deltaPop.value).not.toBeNull(); // ΔPOP is a ratio, kept but flagged
  });

  it('PI = 100 × AC / DC of a raw pleth (common practice) matches the value put in within 5 %', () => {
    const w = generateWindow({ seed: 6, heartRate: 84, respiratoryRate: 14, ppv: 12, channels: ['pleth', 'paw'], perfusionIndex: 3 });
    const r = analyseWindow({ channels: w.channels, context: CONTEXT });
    expect(Math.abs((r.indices.perfusionIndex.value as number) - 3) / 3).toBeLessThan(0.05);
  });

  it('an undeclared pleth processing is flagged on the pleth (common practice: a pleth value carries the processing of its source)', () => {
    const r = analyseWindow({ channels: window(), context: { ...CONTEXT, plethScaling: undefined } });
    expect(r.flags.find((f) => f.code === 'pleth-processing-unknown')?.source).toBe('pleth');
    expect(r.indexVerdicts.deltaPop).toBe('questionable');
  });

  it('a pleth with a 4 s dropout fails the PPG window rules (Orphanidou et al., IEEE JBHI 2015)', () => {
    const w = generateWindow({
      seed: 16,
      heartRate: 84,
      respiratoryRate: 14,
      ppv: 12,
      channels: ['abp', 'pleth', 'paw'],
      disturbances: [{ kind: 'gap', start: 20, duration: 4, roles: ['pleth'] }],
    });
    const r = analyseWindow({ channels: w.channels, context: CONTEXT });
    expect(r.flags.find((f) => f.code === 'pleth-quality-low')?.reason).toMatch(/3 s/);
    expect(r.verdict).toBe('valid'); // the arterial PPV is not affected by a pleth dropout
  });

  it('declared monitor filtering is carried as a flag and in the channel report (common practice: the filtering a monitor applies must be known and declared)', () => {
    const r = analyseWindow({ channels: window(), context: { ...CONTEXT, builtInFiltering: 'display filter 0.5–10 Hz' } });
    expect(r.flags.find((f) => f.code === 'monitor-filtering-declared')?.reason).toMatch(/0.5–10 Hz/);
    expect(r.channels.find((c) => c.role === 'pleth')?.declaredFiltering).toBe('display filter 0.5–10 Hz');
  });

  it('tidal volume below 8 mL/kg PBW is not valid, likely false low (Ann Intensive Care 2016; Devine PBW)', () => {
    const r = analyseWindow({ channels: window(), context: { ...CONTEXT, tidalVolumeMl: 420 } });
    const f = r.flags.find((x) => x.code === 'tidal-volume-low');
    expect(f?.direction).toBe('false-low');
    expect(r.verdict).toBe('not-valid');
    expect(r.tidalVolumeMlPerKg).toBeCloseTo(420 / 70.566, 3);
  });

  it('unknown tidal volume makes the result questionable, not valid', () => {
    const r = analyseWindow({ channels: window(), context: { ventilationMode: 'controlled' } });
    expect(r.flags.map((f) => f.code)).toContain('tidal-volume-unknown');
    expect(r.verdict).toBe('questionable');
  });

  it('low compliance (≤ 30 mL/cmH2O, Monnet 2012 from memory) is flagged false low', () => {
    const r = analyseWindow({ channels: window(), context: { ...CONTEXT, complianceMlPerCmH2O: 25 } });
    expect(r.flags.find((x) => x.code === 'compliance-low')?.direction).toBe('false-low');
  });

  it('declared assisted ventilation is not valid (dynamic indices assume controlled ventilation)', () => {
    const r = analyseWindow({ channels: window(), context: { ...CONTEXT, ventilationMode: 'assisted' } });
    expect(r.flags.map((f) => f.code)).toContain('ventilation-not-controlled');
    expect(r.verdict).toBe('not-valid');
  });

  it('every result carries the cautions, the decision bands with their source, and the engine version', () => {
    const r = analyseWindow({ channels: window(), context: CONTEXT });
    expect(r.engineVersion).toBe(ENGINE_VERSION);
    expect(ENGINE_VERSION).toMatch(/^\d+\.\d+\.\d+$/);
    expect(r.cautions).toEqual([...CAUTIONS]);
    const text = r.cautions.join(' ');
    for (const needle of [
      'does not diagnose',
      'does not order fluid',
      'not hypotensive',
      'airway obstruction',
      'not valid, with the reason',
      'local protocols',
    ]) {
      expect(text).toContain(needle);
    }
    const grey = r.bands.find((b) => b.id === 'ppv-grey-zone');
    expect([grey?.lower, grey?.upper]).toEqual([9, 13]);
    expect(grey?.source).toMatch(/Cannesson/);
    expect(r.bands.find((b) => b.id === 'ppv-high')?.source).toMatch(/Michard/);
    for (const b of r.bands) expect(b.label).not.toMatch(/give fluid|administer/i);
  });

  it('cautions are present even when nothing can be computed', () => {
    const r = analyseWindow({ channels: [{ role: 'abp', sampleRate: 125, unit: 'mmHg', samples: new Float64Array(1250).fill(Number.NaN) }] });
    expect(r.cautions.length).toBe(CAUTIONS.length);
    expect(r.verdict).toBe('not-valid');
    expect(r.flags.map((f) => f.code)).toContain('no-pulse-source');
  });
});

describe('plausibility', () => {
  it('cycle variation above 50 % is an artefact, not a measurement (common practice): cycles left out and flagged', () => {
    const w = generateWindow({ seed: 14, heartRate: 90, respiratoryRate: 15, ppv: 70 });
    const r = analyseWindow({ channels: w.channels, context: CONTEXT });
    expect(r.cycles.some((c) => c.rejectReasons.includes('value-implausible'))).toBe(true);
    expect(r.flags.map((f) => f.code)).toContain('value-implausible');
    expect(r.verdict).toBe('not-valid');
  });
});

describe('result contract', () => {
  it('accepts Float32Array samples (the float32 ingest encoding) with the same result to 0.01 points', () => {
    const w = generateWindow({ seed: 15, heartRate: 80, respiratoryRate: 15, ppv: 11 });
    const f32 = w.channels.map((c) => ({ ...c, samples: Float32Array.from(c.samples) }));
    const a = analyseWindow({ channels: w.channels, context: CONTEXT }).indices.ppv.value as number;
    const b = analyseWindow({ channels: f32, context: CONTEXT }).indices.ppv.value as number;
    expect(Math.abs(a - b)).toBeLessThan(0.01);
  });

  it('is plain JSON: survives a round trip unchanged, with no NaN anywhere', () => {
    const w = generateWindow({
      seed: 9,
      heartRate: 90,
      respiratoryRate: 16,
      ppv: 14,
      channels: ['abp', 'pleth', 'paw'],
      disturbances: [{ kind: 'gap', start: 10, duration: 2 }],
    });
    const r = analyseWindow({ channels: w.channels, context: CONTEXT, startTime: '2026-12-01T08:00:00Z' });
    const text = JSON.stringify(r);
    expect(text).not.toMatch(/NaN|Infinity/);
    expect(JSON.parse(text)).toEqual(r);
    expect(r.startTime).toBe('2026-12-01T08:00:00Z');
  });

  it('same input, same output, bit for bit', () => {
    const a = JSON.stringify(analyseWindow({ channels: window(['abp', 'pleth', 'paw'], 21), context: CONTEXT }));
    const b = JSON.stringify(analyseWindow({ channels: window(['abp', 'pleth', 'paw'], 21), context: CONTEXT }));
    expect(a).toBe(b);
  });

  it('every rejected beat and every unusable cycle carries a reason code', () => {
    const w = generateWindow({
      seed: 12,
      heartRate: 95,
      respiratoryRate: 18,
      ppv: 15,
      channels: ['abp', 'paw'],
      disturbances: [
        { kind: 'ectopic', count: 2 },
        { kind: 'motion', start: 30, duration: 5, amplitude: 0.5 },
      ],
    });
    const r = analyseWindow({ channels: w.channels, context: CONTEXT });
    for (const b of r.beats.abp!.beats) expect(b.accepted).toBe(b.rejectReasons.length === 0);
    for (const c of r.cycles) expect(c.usable).toBe(c.rejectReasons.length === 0);
    expect(r.beats.abp!.rejectedCount).toBeGreaterThan(0);
  });

  it('kPa input is converted to mmHg and reported (conditioning)', () => {
    const w = generateWindow({ seed: 13, heartRate: 80, respiratoryRate: 15, ppv: 10 });
    const kpa = w.channels.map((c) => (c.role === 'abp' ? { ...c, unit: 'kPa', samples: c.samples.map((v) => v / 7.500617) } : c));
    const r1 = analyseWindow({ channels: w.channels, context: CONTEXT });
    const r2 = analyseWindow({ channels: kpa, context: CONTEXT });
    expect(r2.channels[0]).toMatchObject({ unitFrom: 'kPa', unitTo: 'mmHg' });
    expect(r2.indices.ppv.value).toBeCloseTo(r1.indices.ppv.value as number, 6);
  });

  it('rejects duplicate roles and bad sample rates with a clear error', () => {
    const ch = { role: 'abp' as const, sampleRate: 125, unit: 'mmHg', samples: new Float64Array(500) };
    expect(() => analyseWindow({ channels: [ch, ch] })).toThrow(/more than one abp/);
    expect(() => analyseWindow({ channels: [{ ...ch, sampleRate: 0 }] })).toThrow(/sample rate/);
    expect(() => analyseWindow({ channels: [] })).toThrow(/no channels/);
    expect(() => analyseWindow({ channels: [ch] }, { cyclesToAverage: 0 })).toThrow(/cyclesToAverage/);
  });
});
