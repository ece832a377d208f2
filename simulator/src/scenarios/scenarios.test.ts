import { describe, expect, it } from 'vitest';
import type { AnalysisContext } from '@ebbgate/shared';
import { analyseTidalVolumeChallenge, analyzeWindow } from '@ebbgate/shared/analysis';
import { generateWindow } from '@ebbgate/shared/synthetic';
import { MonitorFeed } from '../simulation/monitor-feed';
import { BedStream, type StreamChunk } from '../stream/bed-stream';
import { SCENARIOS, SCENARIO_IDS } from './catalogue';
import { checkWindow } from './ground-truth';
import { expandDisturbances, scenarioContext, scenarioSpec, scenarioSwing } from './spec';

// Window-by-window expectations hold for the steady scenarios; the challenge scenarios change
// their tidal volume on purpose and are checked as challenges below.
const assessed = SCENARIO_IDS.filter((id) => SCENARIOS[id].expect.outcome === 'assessed' && !SCENARIOS[id].tidalVolumeChallenge);
const challenges = SCENARIO_IDS.filter((id) => SCENARIOS[id].tidalVolumeChallenge);

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
    const d = expandDisturbances(
      [
        { kind: 'motion', start: 4, duration: 10, amplitude: 1 },
        { kind: 'spontaneous-breaths', count: 4 },
      ],
      180,
    );
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
      const r = analyzeWindow({
        channels: chunk.channels.map((c) => ({ role: c.role, sampleRate: 125, unit: c.unit, samples: c.samples.subarray(a, a + 30 * 125) })),
        context: scenarioContext(s),
      });
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

describe('tidal volume challenge scenarios (stream cut from generateChallenge, judged by the engine)', () => {
  it('there is one responder and one non-responder', () => {
    expect(challenges.map((id) => SCENARIOS[id].tidalVolumeChallenge!.kind).sort()).toEqual(['non-responder', 'responder']);
  });

  it.each(challenges)('%s: each 5-s chunk carries its segment context; 6 → 8 mL/kg for a minute, then back; the verdict is the generator truth', (id) => {
    const s = SCENARIOS[id];
    const c = s.tidalVolumeChallenge!;
    const stream = new BedStream({ scenario: s, seed: 31, keepTruth: true });
    const chunks: StreamChunk[] = [];
    const period = c.baselineSeconds + c.challengeSeconds;
    for (let t = 0; t < period + c.baselineSeconds; t += 5) chunks.push(stream.read(5));
    const truths = stream.challengeTruth();
    expect(truths.length).toBeGreaterThanOrEqual(2);
    const [first, second] = truths;
    expect(first!.truth.expected).toBe(c.kind === 'responder' ? 'positive' : 'negative');
    expect(first!.stepTime).toBe(c.baselineSeconds);
    expect(second!.startTime).toBe(period);
    // Generator truth: 6 and 8 mL/kg of the Devine PBW the generator computes for this patient.
    const vt = (ch: StreamChunk) => (ch.context as AnalysisContext).tidalVolumeMl;
    for (const ch of chunks) expect(ch.context).toBeDefined();
    const low = first!.truth.baselineTidalVolumeMl;
    const high = first!.truth.challengeTidalVolumeMl;
    expect(high).toBeGreaterThan(low);
    const devineKg = (s.patient.sex === 'male' ? 50 : 45.5) + 0.91 * (s.patient.heightCm - 152.4); // Devine 1974, ARDSNet 2000
    expect(low / devineKg).toBeCloseTo(6, 1);
    expect(high / devineKg).toBeCloseTo(8, 1);
    const expectedVt = (offset: number) => (offset % period < c.baselineSeconds ? low : high);
    for (const ch of chunks) expect(vt(ch), `chunk at ${ch.offset} s`).toBe(expectedVt(ch.offset));
    expect(vt(chunks[chunks.length - 1]!)).toBe(low); // back at 6 mL/kg after the minute

    // The engine judges the first challenge from the chunks, split where the context changes.
    const join = (from: number, to: number) => {
      const part = chunks.filter((ch) => ch.offset >= from && ch.offset < to);
      return {
        context: part[0]!.context as AnalysisContext,
        channels: s.channels.map((role) => {
          const all = part.map((ch) => ch.channels.find((x) => x.role === role)!);
          const samples = new Float64Array(all.reduce((n, x) => n + x.samples.length, 0));
          let at = 0;
          for (const x of all) {
            samples.set(x.samples, at);
            at += x.samples.length;
          }
          return { role, sampleRate: 125, unit: all[0]!.unit, samples };
        }),
      };
    };
    const t = analyseTidalVolumeChallenge({ segments: [join(0, c.baselineSeconds), join(c.baselineSeconds, period)] }).tidalVolumeChallenge;
    expect(t.verdict).toBe(first!.truth.expected);
    expect(t.baselinePpv).not.toBeNull();
    expect(t.challengePpv).not.toBeNull();
    expect(first!.truth.baselinePpv).not.toBeNull();
    expect(first!.truth.challengePpv).not.toBeNull();
    expect(Math.abs((t.baselinePpv as number) - (first!.truth.baselinePpv as number))).toBeLessThanOrEqual(1);
    expect(Math.abs((t.challengePpv as number) - (first!.truth.challengePpv as number))).toBeLessThanOrEqual(1);
  });

  it('the monitor feed sends each batch with the context of its segment (tidalVolumeMl switches at the step)', () => {
    const s = SCENARIOS[challenges[0]!];
    const c = s.tidalVolumeChallenge!;
    const start = new Date('2026-12-01T10:00:00Z');
    const stream = new BedStream({ scenario: s, seed: 7 });
    const feed = new MonitorFeed({ identifier: '02EB6AFFFE0000A1', scenario: s, source: stream, transport: 'http', batchSeconds: 5, startTime: start });
    const batches = feed.due(start.getTime() + (c.baselineSeconds + c.challengeSeconds + 20) * 1000);
    const truth = stream.challengeTruth()[0]!.truth;
    expect(batches.length).toBeGreaterThan(0);
    for (const b of batches) {
      const t = (Date.parse(b.startTime) - start.getTime()) / 1000;
      const inChallenge = t >= c.baselineSeconds && t < c.baselineSeconds + c.challengeSeconds;
      expect(b.context?.tidalVolumeMl, `batch at ${t} s`).toBe(inChallenge ? truth.challengeTidalVolumeMl : truth.baselineTidalVolumeMl);
    }
  });
});
