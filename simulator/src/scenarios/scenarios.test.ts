import { describe, expect, it } from 'vitest';
import { analyzeWindow } from '@ebbgate/shared/analysis';
import { generateWindow } from '@ebbgate/shared/synthetic';
import { BedStream } from '../stream/bed-stream';
import { SCENARIOS, SCENARIO_IDS } from './catalogue';
import { checkWindow } from './ground-truth';
import { expandDisturbances, scenarioContext, scenarioSpec, scenarioSwing } from './spec';

const assessed = SCENARIO_IDS.filter((id) => SCENARIOS[id].expect.outcome === 'assessed');

describe('scenario truth is what the shared generator puts in', () => {
  it.each(assessed)('%s: the generator is given the Frank–Starling PPV and its beats carry it', (id) => {
    const s = SCENARIOS[id];
    const w = generateWindow(scenarioSpec(s, 3, 60));
    expect(w.truth.nominalPpv).toBeCloseTo(scenarioSwing(s).ppv, 9);
    // Per cycle the sampled swing is at most the continuous one (few beats per breath miss the crest).
    const clean = w.truth.cycles.filter((c) => c.ppv !== null && !c.containsEctopic && !c.containsSpontaneousEffort);
    expect(clean.length).toBeGreaterThan(5);
    if (!s.disturbancesPerMinute.some((d) => d.kind === 'irregular-rhythm')) {
      for (const c of clean) expect(c.ppv!).toBeLessThanOrEqual(w.truth.nominalPpv * 1.03 + 0.1);
    }
  });

  it('puts the validity conditions in the context: 8 mL/kg stays ≥ 8 mL/kg PBW, 5 mL/kg is below it', () => {
    for (const id of assessed) {
      const s = SCENARIOS[id];
      const r = analyzeWindow({ channels: generateWindow(scenarioSpec(s, 1, 20)).channels, context: scenarioContext(s) });
      expect(r.tidalVolumeMlPerKg!).toBeGreaterThanOrEqual(s.ventilator.tidalVolumeMlPerKg);
      expect(r.tidalVolumeMlPerKg!).toBeLessThan(s.ventilator.tidalVolumeMlPerKg + 0.05);
    }
  });

  it('repeats timed disturbances every minute and scales counted ones', () => {
    const d = expandDisturbances([{ kind: 'motion', start: 4, duration: 10, amplitude: 1 }, { kind: 'spontaneous-breaths', count: 4 }], 180);
    expect(d.filter((x) => x.kind === 'motion').map((x) => (x as { start: number }).start)).toEqual([4, 64, 124]);
    expect(d.find((x) => x.kind === 'spontaneous-breaths')).toEqual({ kind: 'spontaneous-breaths', count: 12 });
  });

  it('gives each scenario a verdict, and the three verdicts all occur', () => {
    const verdicts = new Set(assessed.map((id) => SCENARIOS[id].expect.verdict));
    expect([...verdicts].sort()).toEqual(['not-valid', 'questionable', 'valid']);
  });
});

describe('the engine recovers each scenario (analyzeWindow on 30-s windows of the stream)', () => {
  it.each(assessed)('%s', (id) => {
    const s = SCENARIOS[id];
    const stream = new BedStream({ scenario: s, seed: 11, segmentSeconds: 120, keepTruth: true });
    const chunk = stream.read(70);
    const truth = stream.truthCycles(0, 70);
    for (const start of [0, 20, 40]) {
      const a = start * 125;
      const r = analyzeWindow({ channels: chunk.channels.map((c) => ({ role: c.role, sampleRate: 125, unit: c.unit, samples: c.samples.subarray(a, a + 30 * 125) })), context: scenarioContext(s) });
      const check = checkWindow(r, s.expect, truth, start);
      expect(check.problems, `${id} window at ${start} s`).toEqual([]);
    }
  });
});

describe('bed stream', () => {
  it('is continuous in time across generated stretches and hands out every sample once', () => {
    const s = SCENARIOS['fluid-responsive'];
    const a = new BedStream({ scenario: s, seed: 5, segmentSeconds: 30, keepTruth: true });
    const parts = [a.read(7), a.read(13), a.read(50)];
    expect(parts.map((p) => p.offset)).toEqual([0, 7, 20]);
    const abp = parts.flatMap((p) => [...p.channels.find((c) => c.role === 'abp')!.samples]);
    expect(abp).toHaveLength(70 * 125);
    // Joined at beat feet: no sample-to-sample step larger than the steepest upstroke within a stretch.
    let maxStep = 0;
    for (let i = 1; i < abp.length; i++) maxStep = Math.max(maxStep, Math.abs(abp[i] - abp[i - 1]));
    const one = generateWindow(scenarioSpec(s, 5, 30)).channels.find((c) => c.role === 'abp')!.samples;
    let within = 0;
    for (let i = 1; i < one.length; i++) within = Math.max(within, Math.abs(one[i] - one[i - 1]));
    expect(maxStep).toBeLessThanOrEqual(within * 1.2);
    // Truth cycles keep stream times: they start and end inside the stream, in order.
    const cycles = a.truthCycles(0, 70);
    expect(cycles.length).toBeGreaterThan(12);
    for (let i = 1; i < cycles.length; i++) expect(cycles[i].startTime).toBeGreaterThan(cycles[i - 1].startTime);
  });

  it('adds the unmapped channel only for the scenario that has one', () => {
    expect(new BedStream({ scenario: SCENARIOS['unmapped-channel'], seed: 1 }).read(5).unmapped).toHaveLength(250);
    expect(new BedStream({ scenario: SCENARIOS['not-responsive'], seed: 1 }).read(5).unmapped).toBeUndefined();
  });
});

describe('demo monitor model', () => {
  it('is a valid monitor profile (shared zod schema) that maps every code the simulator sends, but not the unmapped one', async () => {
    const { monitorProfileInputSchema } = await import('@ebbgate/shared');
    const { DEMO_MONITOR_PROFILE, channelCodesFor } = await import('./monitor-models');
    const p = monitorProfileInputSchema.parse(DEMO_MONITOR_PROFILE);
    const codes = new Set(p.channels.map((c) => c.code));
    for (const t of ['http', 'mllp'] as const) for (const code of Object.values(channelCodesFor(t))) expect(codes.has(code)).toBe(true);
    expect(codes.has(SCENARIOS['unmapped-channel'].unmappedChannel!.code)).toBe(false);
  });
});
