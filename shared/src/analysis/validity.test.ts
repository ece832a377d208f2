import { describe, expect, it } from 'vitest';
import { generateWindow } from '../synthetic/index';
import { truthLastCleanCycles } from '../synthetic/test-support/grid-support';
import { analyseWindow, SIGNAL_LOSS_PULSE_MMHG } from './index';
import { keptVersusDropped } from './indices';
import type { AnalysisContext, RespiratoryCycle } from './types';

// Each "what was seen" of the Engine 2.0 issue, reproduced on signals whose truth comes from the
// generator (its own beats and cycles), never from the cycles the engine chose.
const CONTEXT: AnalysisContext = {
  tidalVolumeMl: 600,
  patientHeightCm: 175,
  patientSex: 'male',
  ventilationMode: 'controlled',
  plethScaling: 'raw',
  probeSite: 'ear',
  setRespiratoryRate: 15,
};
const codes = (r: ReturnType<typeof analyseWindow>): string[] => r.flags.map((f) => f.code);

describe('ventilation not confirmed is never valid (Michard, Anesthesiology 2005: controlled ventilation is the first condition)', () => {
  const w = generateWindow({ seed: 101, heartRate: 80, respiratoryRate: 15, ppv: 12 });
  for (const mode of [undefined, 'unknown'] as const) {
    it(`ventilation mode ${mode ?? 'absent'} → at most questionable, flag ventilation-unconfirmed, direction either`, () => {
      const { ventilationMode: _drop, ...rest } = CONTEXT;
      const r = analyseWindow({ channels: w.channels, context: mode ? { ...rest, ventilationMode: mode } : rest });
      expect(r.verdict).not.toBe('valid');
      const f = r.flags.find((x) => x.code === 'ventilation-unconfirmed');
      expect(f).toBeDefined();
      expect(f!.direction).toBe('either');
    });
  }

  it('breathing faster than the set rate is evidence of effort (set 12 /min, breathing 16 /min)', () => {
    const fast = generateWindow({ seed: 102, heartRate: 90, respiratoryRate: 16, ppv: 12 });
    const r = analyseWindow({ channels: fast.channels, context: { ...CONTEXT, setRespiratoryRate: 12 } });
    expect(codes(r)).toContain('spontaneous-breathing');
    expect(r.flags.find((f) => f.code === 'spontaneous-breathing')!.direction).toBe('false-high');
    expect(r.verdict).toBe('not-valid');
  });

  it('breath size varying from breath to breath is evidence of effort (peak above PEEP × 1 ± 0.3)', () => {
    const v = generateWindow({ seed: 103, heartRate: 90, respiratoryRate: 15, ppv: 12 });
    const paw = v.channels.find((c) => c.role === 'paw')!;
    for (let i = 0; i < paw.samples.length; i++) paw.samples[i] = 5 + (paw.samples[i] - 5) * (1 + 0.3 * Math.sin((2 * Math.PI * i) / (125 * 9)));
    const r = analyseWindow({ channels: v.channels, context: CONTEXT });
    expect(codes(r)).toContain('spontaneous-breathing');
  });

  it('a capnogram whose cycle does not match the ventilator is evidence of effort (CO2 at 22 /min, ventilator 15 /min)', () => {
    const vent = generateWindow({ seed: 104, heartRate: 90, respiratoryRate: 15, ppv: 12, channels: ['abp', 'paw'] });
    const own = generateWindow({ seed: 105, heartRate: 90, respiratoryRate: 22, ppv: 12, channels: ['co2'] });
    const r = analyseWindow({ channels: [...vent.channels, ...own.channels], context: CONTEXT });
    expect(codes(r)).toContain('spontaneous-breathing');
    const matched = generateWindow({ seed: 104, heartRate: 90, respiratoryRate: 15, ppv: 12, channels: ['abp', 'paw', 'co2'] });
    expect(codes(analyseWindow({ channels: matched.channels, context: CONTEXT }))).not.toContain('spontaneous-breathing');
  });
});

describe('selection without bias: narrow pulse pressure (truth over the last three clean cycles put in)', () => {
  // Uniformly narrow PP (shock): the old fixed "PP < 20 mmHg" rule rejected the smallest beats of
  // each breath and kept the cycles with the least swing (measured: truth 17.4 %, engine 13.8 %).
  for (const [seed, pp, dbp, ppv, hr, rr] of [
    [111, 16, 40, 18, 110, 16],
    [112, 15, 35, 20, 120, 18],
    [113, 18, 45, 17, 95, 14],
  ]) {
    it(`PP ${pp} / DBP ${dbp} mmHg, PPV ${ppv} %: engine within 1 point of the generator's last three clean cycles and of all cycles`, () => {
      const w = generateWindow({ seed, heartRate: hr, respiratoryRate: rr, ppv, meanPp: pp, meanDbp: dbp });
      const r = analyseWindow({ channels: w.channels, context: CONTEXT });
      expect(r.indices.ppv.value).not.toBeNull();
      const truth = truthLastCleanCycles(w.truth, 'ppv');
      expect(truth).not.toBeNull();
      expect(Math.abs((r.indices.ppv.value as number) - (truth as number))).toBeLessThanOrEqual(1);
      expect(w.truth.ppvAllCycles).not.toBeNull();
      expect(Math.abs((r.indices.ppv.value as number) - (w.truth.ppvAllCycles as number))).toBeLessThanOrEqual(1);
      expect(r.selection.cyclesDropped).toBe(0);
    });
  }

  it('a wide pulse with a large swing (PP 70, PPV 30 %): no cycle dropped for its own swing (Sun 2006 SBP-jump limit scaled)', () => {
    const w = generateWindow({ seed: 114, heartRate: 72, respiratoryRate: 18, ppv: 30, meanPp: 70, meanDbp: 60 });
    const r = analyseWindow({ channels: w.channels, context: CONTEXT });
    const truth = truthLastCleanCycles(w.truth, 'ppv') as number;
    expect(r.indices.ppv.value).not.toBeNull();
    expect(Math.abs((r.indices.ppv.value as number) - truth)).toBeLessThanOrEqual(1);
    expect(r.cycles.filter((c) => c.rejectReasons.includes('rejected-beat'))).toEqual([]);
  });

  it('kept against dropped cycles: a systematic difference is measured with its sign (constructed cycles)', () => {
    const cyc = (usable: boolean, v: number, reasons: RespiratoryCycle['rejectReasons'] = []): RespiratoryCycle =>
      ({ usable, variationAllBeats: v, rejectReasons: usable ? [] : reasons }) as unknown as RespiratoryCycle;
    const k = keptVersusDropped([
      cyc(true, 10),
      cyc(true, 11),
      cyc(false, 16, ['rejected-beat']),
      cyc(false, 18, ['rejected-beat']),
      cyc(false, 40, ['ectopic-beat']),
    ]);
    expect(k.kept).toBeCloseTo(10.5, 9);
    // The ectopic cycle has a flag of its own and stays out of the comparison.
    expect(k.dropped).toBeCloseTo(17, 9);
    expect(k.droppedCount).toBe(2);
  });
});

describe('signal loss with noise (slope sum detector threshold floor)', () => {
  it(`a line that goes flat with 0.3 mmHg of noise: no beats in the noise, signal-loss flagged (pulse under ${SIGNAL_LOSS_PULSE_MMHG} mmHg)`, () => {
    const w = generateWindow({
      seed: 121,
      heartRate: 80,
      respiratoryRate: 15,
      ppv: 12,
      disturbances: [
        { kind: 'flat-line', start: 20, duration: 40 },
        { kind: 'noise', level: 0.3 / 45, roles: ['abp'] },
      ],
    });
    const r = analyseWindow({ channels: w.channels, context: CONTEXT });
    const inNoise = r.beats.abp!.beats.filter((b) => b.footTime > 21);
    expect(inNoise).toEqual([]);
    expect(codes(r)).toContain('signal-loss');
    expect(r.verdict).toBe('not-valid');
  });

  it('a whole window of noise on a lost line: no beats at all', () => {
    const w = generateWindow({
      seed: 122,
      heartRate: 80,
      respiratoryRate: 15,
      ppv: 12,
      disturbances: [
        { kind: 'flat-line', start: 0, duration: 60, value: 12 },
        { kind: 'noise', level: 0.5 / 45, roles: ['abp'] },
      ],
    });
    const r = analyseWindow({ channels: w.channels, context: CONTEXT });
    expect(r.beats.abp === null || r.beats.abp.beats.length === 0).toBe(true);
    expect(r.indices.ppv.value).toBeNull();
    expect(r.verdict).toBe('not-valid');
  });
});

describe('checklist context: each a flag with its source and direction', () => {
  const w = generateWindow({ seed: 131, heartRate: 85, respiratoryRate: 15, ppv: 12 });
  const CASES = [
    ['openChest', 'open-chest', 'false-low', 'not-valid'],
    ['intraAbdominalPressureHigh', 'intra-abdominal-pressure-high', 'false-high', 'questionable'],
    ['rightVentricularDysfunction', 'right-ventricular-dysfunction', 'false-high', 'questionable'],
    ['extracorporealSupport', 'extracorporeal-support', 'unknown', 'not-valid'],
    ['pronePosition', 'prone-position', 'unknown', 'questionable'],
    ['paediatricPatient', 'paediatric-patient', 'unknown', 'questionable'],
  ] as const;
  for (const [key, code, direction, verdict] of CASES) {
    it(`${key} in the batch → ${code} (${direction}), ${verdict}; from the bed settings → same flag, source bed`, () => {
      const r = analyseWindow({ channels: w.channels, context: { ...CONTEXT, [key]: true } });
      const f = r.flags.find((x) => x.code === code);
      expect(f).toBeDefined();
      expect(f!.direction).toBe(direction);
      expect(f!.contextSource).toBe('batch');
      expect(f!.reference).toBeTruthy();
      expect(r.verdict).toBe(verdict);
      const bed = analyseWindow({ channels: w.channels, context: CONTEXT, bedContext: { [key]: true } });
      expect(bed.flags.find((x) => x.code === code)?.contextSource).toBe('bed');
      // The batch's own explicit "no" wins over the bed setting.
      const no = analyseWindow({ channels: w.channels, context: { ...CONTEXT, [key]: false }, bedContext: { [key]: true } });
      expect(codes(no)).not.toContain(code);
    });
  }

  it('a window after sternotomy is never valid', () => {
    expect(analyseWindow({ channels: w.channels, context: { ...CONTEXT, openChest: true } }).verdict).toBe('not-valid');
  });

  it('height below the adult range of the PBW formula (140 cm) is flagged', () => {
    expect(codes(analyseWindow({ channels: w.channels, context: { ...CONTEXT, patientHeightCm: 140 } }))).toContain('paediatric-patient');
  });
});

describe('respiratory-system compliance Vt / (plateau − PEEP) and driving pressure (common practice)', () => {
  for (const [c, pause] of [
    [15, 0.3],
    [25, 0.3],
    [45, 0.3],
    [60, 0.3],
    [25, 0],
    [45, 0],
  ] as const) {
    it(`compliance ${c} mL/cmH2O, ${pause ? 'end-inspiratory pause' : 'no pause'}: value, plateau source, low-compliance flag at ≤ 30 (Monnet et al., Crit Care Med 2012, from memory)`, () => {
      const w = generateWindow({
        seed: 140 + c,
        heartRate: 85,
        respiratoryRate: 15,
        ppv: 12,
        tidalVolumeMl: 500,
        complianceMlPerCmH2O: c,
        inspiratoryPauseSeconds: pause,
      });
      const r = analyseWindow({ channels: w.channels, context: { ...CONTEXT, tidalVolumeMl: 500 } });
      const m = r.respiratoryMechanics;
      expect(m).not.toBeNull();
      expect(m!.complianceMlPerCmH2O).not.toBeNull();
      expect(m!.drivingPressureCmH2O).not.toBeNull();
      if (pause) {
        expect(m!.plateauSource).toBe('end-inspiratory-pause');
        // Truth: Vt / (plateau − PEEP) as put into the generator.
        expect(Math.abs((m!.complianceMlPerCmH2O as number) / c - 1)).toBeLessThanOrEqual(0.05);
        expect(Math.abs((m!.drivingPressureCmH2O as number) - (w.truth.airway.drivingPressure as number))).toBeLessThanOrEqual(0.5);
      } else {
        expect(m!.plateauSource).toBe('estimated-from-peak');
        // The peak stands in for the plateau: compliance understated, never overstated.
        expect(m!.complianceMlPerCmH2O as number).toBeLessThan(c);
      }
      const low = (m!.complianceMlPerCmH2O as number) <= 30;
      // Measured with a pause: "low" at ≤ 30 (a warning, reads low). From the peak the value is only
      // a lower bound of the compliance: "possibly low" as information, never the warning.
      expect(codes(r).includes('compliance-low')).toBe(low && pause > 0);
      expect(codes(r).includes('compliance-estimated')).toBe(low && pause === 0);
      if (low && pause) expect(r.flags.find((f) => f.code === 'compliance-low')!.direction).toBe('false-low');
    });
  }
});

describe('a ventilator setting change inside the window (steady state is common practice; Michard, Anesthesiology 2005)', () => {
  // Generator truth: the second half of the window is ventilated with a third more volume, so the
  // airway pressure above PEEP steps up by a third, as a tidal volume step 6 → 8 mL/kg does.
  const stepped = () => {
    const w = generateWindow({ seed: 131, heartRate: 85, respiratoryRate: 15, ppv: 12 });
    const paw = w.channels.find((c) => c.role === 'paw')!;
    const half = Math.floor(paw.samples.length / 2);
    for (let i = half; i < paw.samples.length; i++) paw.samples[i] = 5 + (paw.samples[i] - 5) * (4 / 3);
    return w;
  };

  it('without the change known, the step reads as varying breath size (evidence of effort)', () => {
    expect(codes(analyseWindow({ channels: stepped().channels, context: CONTEXT }))).toContain('spontaneous-breathing');
  });

  it('with the change known: not valid with settings-changed (direction either, the change in words), not blamed on the patient', () => {
    const r = analyseWindow({ channels: stepped().channels, context: CONTEXT, settingChanges: ['tidal volume 450 → 600 mL'] });
    expect(r.verdict).toBe('not-valid');
    const f = r.flags.find((x) => x.code === 'settings-changed');
    expect(f).toMatchObject({ severity: 'critical', direction: 'either' });
    expect(f!.reason).toContain('tidal volume 450 → 600 mL');
    expect(codes(r)).not.toContain('spontaneous-breathing');
  });

  it('dips below PEEP are still patient effort when the settings changed', () => {
    const w = generateWindow({ seed: 132, heartRate: 85, respiratoryRate: 15, ppv: 12, disturbances: [{ kind: 'spontaneous-breaths', count: 3 }] });
    const r = analyseWindow({ channels: w.channels, context: CONTEXT, settingChanges: ['set rate 15 → 16 /min'] });
    expect(codes(r)).toEqual(expect.arrayContaining(['settings-changed', 'spontaneous-breathing']));
  });
});
