import { describe, expect, it } from 'vitest';
import { ingestBatchSchema } from '../schemas/ingest';
import { createPrng, generateWindow, toCsvCapture, toIngestBatch } from './index';

describe('synthetic generator', () => {
  it('is deterministic: the same seed gives the same samples bit for bit', () => {
    const a = generateWindow({
      seed: 4,
      heartRate: 75,
      respiratoryRate: 14,
      ppv: 10,
      channels: ['abp', 'pleth', 'paw', 'co2'],
      disturbances: [{ kind: 'noise', level: 0.05 }],
    });
    const b = generateWindow({
      seed: 4,
      heartRate: 75,
      respiratoryRate: 14,
      ppv: 10,
      channels: ['abp', 'pleth', 'paw', 'co2'],
      disturbances: [{ kind: 'noise', level: 0.05 }],
    });
    for (let c = 0; c < a.channels.length; c++) expect(Buffer.from(a.channels[c].samples.buffer).equals(Buffer.from(b.channels[c].samples.buffer))).toBe(true);
    const c2 = generateWindow({ seed: 5, heartRate: 75, respiratoryRate: 14, ppv: 10, disturbances: [{ kind: 'noise', level: 0.05 }] });
    expect(c2.channels[0].samples[100]).not.toBe(a.channels[0].samples[100]);
  });

  it('PRNG is uniform on [0, 1) with mean ½ and normal draws with sd 1 (law of large numbers)', () => {
    const r = createPrng(1);
    let s = 0;
    let s2 = 0;
    const n = 20000;
    for (let i = 0; i < n; i++) s += r.next();
    for (let i = 0; i < n; i++) s2 += r.normal() ** 2;
    expect(Math.abs(s / n - 0.5)).toBeLessThan(0.01);
    expect(Math.abs(s2 / n - 1)).toBeLessThan(0.05);
  });

  it('each arterial beat reaches its SBP and DBP as put in (the waveform is built so max = SBP, foot = DBP)', () => {
    const w = generateWindow({ seed: 8, heartRate: 90, respiratoryRate: 15, ppv: 15, sampleRate: 1000, durationSeconds: 20 });
    const x = w.channels[0].samples;
    for (const b of w.truth.beats.abp.slice(1, -1)) {
      const a = Math.round(b.footTime * 1000);
      const e = Math.round((b.footTime + (60 / 90) * 0.9) * 1000);
      let mx = -Infinity;
      for (let i = a; i < e; i++) mx = Math.max(mx, x[i]);
      expect(mx).toBeCloseTo(b.sbp, 1);
      expect(x[a]).toBeCloseTo(b.dbp, 1);
    }
  });

  it('per-cycle truth PPV approaches the nominal PPV when many beats sample each breath (Michard 2000 form)', () => {
    const w = generateWindow({ seed: 9, heartRate: 140, respiratoryRate: 8, ppv: 20 });
    for (const c of w.truth.cycles) expect(Math.abs((c.ppv as number) - 20)).toBeLessThan(0.6);
  });

  it('heart rate and respiratory rate put in are what the truth reports', () => {
    const w = generateWindow({ seed: 10, heartRate: 72, respiratoryRate: 18, ppv: 8 });
    expect(Math.abs(w.truth.heartRate - 72)).toBeLessThan(1.5);
    const lens = w.truth.cycles.map((c) => c.endTime - c.startTime);
    for (const l of lens) expect(l).toBeCloseTo(60 / 18, 6);
  });

  it('ectopic beats are premature with a compensatory pause and marked in the truth', () => {
    const w = generateWindow({ seed: 11, heartRate: 80, respiratoryRate: 15, ppv: 10, disturbances: [{ kind: 'ectopic', count: 3 }] });
    const beats = w.truth.beats.abp;
    const ect = beats.map((b, k) => ({ b, k })).filter(({ b }) => b.ectopic);
    expect(ect).toHaveLength(3);
    for (const { k } of ect) {
      const before = beats[k].footTime - beats[k - 1].footTime;
      const after = beats[k + 1].footTime - beats[k].footTime;
      expect(before).toBeLessThan(0.7 * (60 / 80));
      expect(before + after).toBeCloseTo(2 * (60 / 80), 1);
    }
  });

  it('gaps are NaN and auto-scaling removes the DC level', () => {
    const w = generateWindow({
      seed: 12,
      heartRate: 80,
      respiratoryRate: 15,
      ppv: 10,
      channels: ['abp', 'pleth'],
      plethScaling: 'auto-scaled',
      disturbances: [{ kind: 'gap', start: 10, duration: 1 }],
    });
    expect(Number.isNaN(w.channels[0].samples[1312])).toBe(true);
    const pleth = w.channels[1].samples.filter((v) => !Number.isNaN(v));
    expect(Math.min(...pleth)).toBeCloseTo(0, 6);
    expect(Math.max(...pleth)).toBeCloseTo(100, 6);
    expect(w.truth.perfusionIndex).toBeNull();
  });

  it('exports a schema-valid ingest batch and a CSV capture with the role[unit] header', () => {
    const w = generateWindow({ seed: 13, heartRate: 80, respiratoryRate: 15, ppv: 10, durationSeconds: 5 });
    const batch = toIngestBatch(w, { monitorId: 'HGH-ICU-03', batchId: 'x', startTime: '2026-12-01T08:00:00Z', context: { tidalVolumeMl: 500 } });
    expect(ingestBatchSchema.safeParse(batch).success).toBe(true);
    expect(toCsvCapture(w).split('\n')[0]).toBe('time,abp[mmHg],paw[cmH2O]');
  });
});
