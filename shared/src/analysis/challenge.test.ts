import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { generateChallenge, toIngestBatch, type ChallengeKind, type SyntheticChallenge } from '../synthetic/index';
import { analyseTidalVolumeChallenge, splitAtContextChanges } from './index';
import type { AnalysisInput } from './types';

// Tidal volume challenge (Myatra et al., Crit Care Med 2017, from memory: 6 → 8 mL/kg PBW for one
// minute; a PPV rise of 3.5 points or more predicted fluid responsiveness). Truth: the PPV the
// generator put into the last three clean cycles of each segment.
const segmentsOf = (g: SyntheticChallenge): AnalysisInput[] => g.segments.map((s) => ({ channels: s.channels, context: s.context }));

describe('tidal volume challenge', () => {
  for (const [kind, seed] of [
    ['responder', 201],
    ['responder', 202],
    ['non-responder', 203],
    ['non-responder', 204],
  ] as [ChallengeKind, number][]) {
    it(`${kind} (seed ${seed}): baseline and challenge PPV within 1 point of the truth, verdict as the truth says`, () => {
      const g = generateChallenge({ seed, kind });
      const t = analyseTidalVolumeChallenge({ segments: segmentsOf(g) }).tidalVolumeChallenge;
      expect(t.reasons).toEqual([]);
      expect(t.baselinePpv).not.toBeNull();
      expect(t.challengePpv).not.toBeNull();
      expect(t.deltaPpv).not.toBeNull();
      expect(Math.abs((t.baselinePpv as number) - (g.truth.baselinePpv as number))).toBeLessThanOrEqual(1);
      expect(Math.abs((t.challengePpv as number) - (g.truth.challengePpv as number))).toBeLessThanOrEqual(1);
      expect(t.deltaPpv).toBeCloseTo((t.challengePpv as number) - (t.baselinePpv as number), 9);
      expect(t.verdict).toBe(g.truth.expected);
      expect(t.verdict).toBe(kind === 'responder' ? 'positive' : 'negative');
      expect(t.threshold).toBe(3.5);
      expect(t.thresholdSource).toMatch(/Myatra/);
      expect(t.baselineMlPerKg).toBeCloseTo(6, 1);
      expect(t.challengeMlPerKg).toBeCloseTo(8, 1);
      expect(t.challengePressureSwingCmH2O as number).toBeGreaterThan(t.baselinePressureSwingCmH2O as number);
    });
  }

  for (const [kind, reason] of [
    ['too-short', 'step-too-short'],
    ['too-small', 'step-too-small'],
    ['ectopy', 'irregular-rhythm'],
  ] as const) {
    it(`${kind} → cannot be judged, reason ${reason}`, () => {
      const g = generateChallenge({ seed: 210, kind });
      const t = analyseTidalVolumeChallenge({ segments: segmentsOf(g) }).tidalVolumeChallenge;
      expect(g.truth.expected).toBe('cannot-be-judged');
      expect(t.verdict).toBe('cannot-be-judged');
      expect(t.reasons).toContain(reason);
      expect(t.reasonTexts.length).toBeGreaterThan(0);
    });
  }

  it('no step between the segments → cannot be judged (no-step)', () => {
    const g = generateChallenge({ seed: 211, kind: 'responder' });
    const segs = segmentsOf(g);
    segs[1].context = { ...segs[1].context, tidalVolumeMl: segs[0].context!.tidalVolumeMl };
    expect(analyseTidalVolumeChallenge({ segments: segs }).tidalVolumeChallenge.reasons).toEqual(['no-step']);
  });

  it('spontaneous efforts at the higher volume → cannot be judged (spontaneous-effort)', () => {
    const g = generateChallenge({ seed: 212, kind: 'responder' });
    const segs = segmentsOf(g);
    segs[1].context = { ...segs[1].context, ventilationMode: 'assisted' };
    expect(analyseTidalVolumeChallenge({ segments: segs }).tidalVolumeChallenge.reasons).toContain('spontaneous-effort');
  });

  it('one window with a context change at the step gives the same result as two segments', () => {
    const g = generateChallenge({ seed: 213, kind: 'responder' });
    const joined: AnalysisInput = {
      channels: g.segments[0].channels.map((c, k) => {
        const other = g.segments[1].channels[k].samples;
        const s = new Float64Array(c.samples.length + other.length);
        s.set(c.samples);
        s.set(other, c.samples.length);
        return { ...c, samples: s };
      }),
      context: g.segments[0].context,
    };
    const split = splitAtContextChanges(joined, [{ atSeconds: 60, context: { tidalVolumeMl: g.truth.challengeTidalVolumeMl } }]);
    expect(split).toHaveLength(2);
    const a = analyseTidalVolumeChallenge({ segments: split }).tidalVolumeChallenge;
    const b = analyseTidalVolumeChallenge({ segments: segmentsOf(g) }).tidalVolumeChallenge;
    expect(a.baselinePpv).toBe(b.baselinePpv);
    expect(a.challengePpv).toBe(b.challengePpv);
    expect(a.verdict).toBe(b.verdict);
  });

  it('the CLI reads a JSON array of batches and prints the result under tidalVolumeChallenge', () => {
    const g = generateChallenge({ seed: 214, kind: 'responder' });
    const dir = mkdtempSync(join(tmpdir(), 'ebbgate-tvc-'));
    try {
      const batches = g.segments.map((s, k) =>
        toIngestBatch(
          { channels: s.channels, truth: s.truth },
          { monitorId: '02-00-5e-ff-fe-00-00-01', batchId: `tvc-${k}`, startTime: new Date(Date.UTC(2026, 0, 1, 8, k)).toISOString(), context: s.context },
        ),
      );
      const file = join(dir, 'challenge.json');
      writeFileSync(file, JSON.stringify(batches));
      const run = spawnSync(process.execPath, ['--import', 'tsx', 'shared/src/analysis/cli.ts', file], { encoding: 'utf8', timeout: 60_000 });
      expect(run.status, run.stderr).toBe(0);
      const out = JSON.parse(run.stdout) as { tidalVolumeChallenge: { verdict: string; deltaPpv: number } };
      expect(out.tidalVolumeChallenge.verdict).toBe('positive');
      expect(out.tidalVolumeChallenge.deltaPpv).toBeGreaterThanOrEqual(3.5);
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });
});
