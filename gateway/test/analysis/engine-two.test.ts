import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { generateChallenge, generateWindow, toIngestBatch, type SyntheticWindow } from '@ebbgate/shared/synthetic';
import type { AnalysisContext } from '@ebbgate/shared';
import { analyseNextWindow, DEFAULT_ENGINE } from '../../src/analysis/analysis-worker';
import { startTestGatewayAs, type SignedInClient, type TestGateway } from '../support/harness';
import { registerMonitor } from '../devices/fixtures';

let gw: TestGateway;
let integrator: SignedInClient;
beforeAll(async () => ({ gw, client: integrator } = await startTestGatewayAs('integrator')));
afterAll(async () => gw?.stop());

const T0 = Date.parse('2026-12-01T09:00:00.000Z');

async function drain() {
  for (let i = 0; i < 200; i++) if (!(await analyseNextWindow(gw.ctx, DEFAULT_ENGINE, 'engine-two'))) break;
}

/** Sends a window as consecutive batches (10 s unless given) from `startMs`, each with the context given (or the one for its start). */
async function send(
  apiKey: string,
  monitorId: string,
  w: SyntheticWindow,
  startMs: number,
  context: AnalysisContext | ((t: number) => AnalysisContext),
  tag: string,
  batchSeconds = 10,
) {
  const fs = w.channels[0]!.sampleRate;
  const total = w.channels[0]!.samples.length / fs;
  for (let t = 0; t + batchSeconds <= total; t += batchSeconds) {
    const slice = { ...w, channels: w.channels.map((c) => ({ ...c, samples: c.samples.slice(t * fs, (t + batchSeconds) * fs) })) };
    const body = toIngestBatch(slice, {
      monitorId,
      batchId: `${tag}-${t}`,
      startTime: new Date(startMs + t * 1000).toISOString(),
      context: typeof context === 'function' ? context(t) : context,
    });
    const res = await request(gw.server)
      .post('/api/v1/ingest/batches')
      .set('Authorization', `Bearer ${apiKey}`)
      .set('Content-Type', 'application/json')
      .send(JSON.stringify(body));
    expect(res.status).toBe(202);
  }
}

describe('engine 2.0 in the gateway', () => {
  it('checklist items set on the bed are audited and reach every analysis of its monitor as flags from the bed', async () => {
    const m = await registerMonitor(integrator, 'A2B1C2D3E4F51001');
    const bed = await integrator.post('/api/v1/beds', { name: 'ICU-2 bed 7', unit: 'ICU-2', locationIdentifier: 'urn:harrowmere:loc|ICU2-07' });
    expect(bed.status).toBe(201);
    expect(bed.body.checklist).toBeNull();
    const set = await integrator.patch(`/api/v1/beds/${bed.body.id}`, { checklist: { openChest: true, pronePosition: false } });
    expect(set.status).toBe(200);
    expect(set.body.checklist).toEqual({ openChest: true, pronePosition: false });
    expect((await integrator.patch(`/api/v1/beds/${bed.body.id}`, { checklist: { openChest: 'yes' } })).status).toBe(400);
    expect((await integrator.patch(`/api/v1/monitors/${m.monitorId}`, { bedId: bed.body.id })).status).toBe(200);
    const admin = await gw.signIn('admin');
    const audit = (await admin.get('/api/v1/audit?action=bed.update')).body.items as {
      entityId: string;
      before: { checklist: unknown };
      after: { checklist: unknown };
    }[];
    const mine = audit.find((a) => a.entityId === bed.body.id);
    expect(mine).toBeDefined();
    expect(mine!.before.checklist).toBeNull();
    expect(mine!.after.checklist).toEqual({ openChest: true, pronePosition: false });

    const w = generateWindow({ seed: 3, durationSeconds: 30, heartRate: 85, respiratoryRate: 15, ppv: 12 });
    await send(m.apiKey, 'A2B1C2D3E4F51001', w, T0, { ventilationMode: 'controlled', tidalVolumeMl: 600, patientHeightCm: 175, patientSex: 'male' }, 'bed');
    await drain();
    const [row] = (await gw.ctx.ds.query('SELECT verdict, result FROM assessment WHERE monitor_id = ?', [m.monitorId])) as {
      verdict: string;
      result: string;
    }[];
    expect(row).toBeDefined();
    const flag = (JSON.parse(row!.result) as { flags: { code: string; contextSource?: string }[] }).flags.find((f) => f.code === 'open-chest');
    expect(flag).toMatchObject({ code: 'open-chest', contextSource: 'bed' });
    expect(row!.verdict).toBe('not-valid');
  });

  it('a tidal volume challenge streamed in batches is judged once and stored on the assessment that completes it', async () => {
    const m = await registerMonitor(integrator, 'A2B1C2D3E4F51002');
    const g = generateChallenge({ seed: 301, kind: 'responder', baselineSeconds: 30, challengeSeconds: 70 });
    const [low, high] = g.segments;
    await send(m.apiKey, 'A2B1C2D3E4F51002', { channels: low!.channels, truth: low!.truth }, T0, low!.context, 'tvc-low');
    await send(m.apiKey, 'A2B1C2D3E4F51002', { channels: high!.channels, truth: high!.truth }, T0 + 30_000, high!.context, 'tvc-high');
    await drain();
    const rows = (await gw.ctx.ds.query(
      'SELECT id, window_end, tidal_volume_challenge, challenge_delta_ppv, challenge_verdict, challenge_step_at FROM assessment WHERE monitor_id = ? AND tidal_volume_challenge IS NOT NULL',
      [m.monitorId],
    )) as Record<string, unknown>[];
    expect(rows).toHaveLength(1);
    const r = rows[0]!;
    expect((r.challenge_step_at as Date).getTime()).toBe(T0 + 30_000);
    expect((r.window_end as Date).getTime()).toBeGreaterThanOrEqual(T0 + 90_000);
    expect(r.challenge_verdict).toBe('positive');
    const tvc = JSON.parse(r.tidal_volume_challenge as string) as {
      deltaPpv: number;
      baselinePpv: number;
      challengePpv: number;
      threshold: number;
      thresholdSource: string;
    };
    expect(tvc.deltaPpv).toBeCloseTo(r.challenge_delta_ppv as number, 9);
    expect(Math.abs(tvc.baselinePpv - (g.truth.baselinePpv as number))).toBeLessThanOrEqual(1);
    expect(Math.abs(tvc.challengePpv - (g.truth.challengePpv as number))).toBeLessThanOrEqual(1);
    expect(tvc.threshold).toBe(3.5);
    expect(tvc.thresholdSource).toMatch(/Myatra/);
    // The console reads it with the assessment's detail.
    const reviewer = await gw.signIn('reviewer');
    const detail = await reviewer.get(`/api/v1/assessments/${r.id as string}`);
    expect(detail.status).toBe(200);
    expect(detail.body.assessment.tidalVolumeChallenge).toMatchObject({ verdict: 'positive', threshold: 3.5 });
  });

  it('a window spanning batches with different ventilator settings is flagged settings-changed, not blamed on patient effort', async () => {
    const m = await registerMonitor(integrator, 'A2B1C2D3E4F51003');
    // Generator truth: from 15 s on the airway pressure above PEEP is a third higher, as the tidal
    // volume step 450 → 600 mL the batches from 15 s on declare. Windows (30 s, every 10 s) at 0
    // and 10 s span the step; the one at 20 s lies after it.
    const w = generateWindow({ seed: 131, durationSeconds: 50, heartRate: 85, respiratoryRate: 15, ppv: 12 });
    const paw = w.channels.find((c) => c.role === 'paw')!;
    for (let i = 15 * paw.sampleRate; i < paw.samples.length; i++) paw.samples[i] = 5 + (paw.samples[i]! - 5) * (4 / 3);
    const base: AnalysisContext = { ventilationMode: 'controlled', patientHeightCm: 175, patientSex: 'male', setRespiratoryRate: 15 };
    await send(m.apiKey, 'A2B1C2D3E4F51003', w, T0, (t) => ({ ...base, tidalVolumeMl: t < 15 ? 450 : 600 }), 'step', 5);
    await drain();
    const rows = (await gw.ctx.ds.query('SELECT window_start, verdict, result FROM assessment WHERE monitor_id = ? ORDER BY window_start', [m.monitorId])) as {
      window_start: Date;
      verdict: string;
      result: string;
    }[];
    expect(rows.map((r) => r.window_start.getTime())).toEqual([T0, T0 + 10_000, T0 + 20_000]);
    const flags = rows.map((r) => (JSON.parse(r.result) as { flags: { code: string; reason: string }[] }).flags);
    for (const i of [0, 1]) {
      const changed = flags[i]!.find((f) => f.code === 'settings-changed');
      expect(changed?.reason).toContain('tidal volume 450 → 600 mL');
      expect(flags[i]!.map((f) => f.code)).not.toContain('spontaneous-breathing');
      expect(rows[i]!.verdict).toBe('not-valid');
    }
    // The last window lies within the new setting: no change to report.
    expect(flags[2]!.map((f) => f.code)).not.toContain('settings-changed');
  });
});
