import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { analyseWindow } from '@ebbgate/shared/analysis';
import {
  adoptStrandedWindows,
  analyseNextWindow,
  AnalysisWorker,
  compareVersions,
  DEFAULT_ENGINE,
  requestReanalysis,
  STRANDED_AFTER_MS,
  type Engine,
} from '../../src/analysis/analysis-worker';
import { assembleWindow } from '../../src/analysis/window-assembly';
import { assessmentEvents } from '../../src/assessments/events';
import { startTestGatewayAs, type SignedInClient, type TestGateway } from '../support/harness';
import { registerMonitor } from '../devices/fixtures';
import { sendRecording } from './ingest-helpers';

let gw: TestGateway;
let integrator: SignedInClient;
beforeAll(async () => ({ gw, client: integrator } = await startTestGatewayAs('integrator')));
afterAll(async () => gw?.stop());

const T0 = Date.parse('2026-11-30T10:00:00.000Z');
const spec = { seed: 7, durationSeconds: 40, heartRate: 80, respiratoryRate: 15, ppv: 14, channels: ['abp', 'paw'] as ('abp' | 'paw')[] };

async function drain(engine: Engine = DEFAULT_ENGINE, workerId = 'test') {
  const out = [];
  for (let i = 0; i < 100; i++) {
    const r = await analyseNextWindow(gw.ctx, engine, workerId);
    if (!r) break;
    out.push(r);
  }
  return out;
}

describe('analysis scheduling', () => {
  it('rebuilds a window from consecutive batches on one time base, identical to the recording', async () => {
    const m = await registerMonitor(integrator, 'A2B1C2D3E4F50001');
    const { whole, statuses } = await sendRecording(gw, m.apiKey, 'A2B1C2D3E4F50001', T0, spec);
    expect(statuses).toEqual([202, 202, 202, 202]);
    const { input } = await assembleWindow(gw.ctx.ds, m.monitorId, new Date(T0 + 10_000), new Date(T0 + 40_000));
    const abp = input.channels.find((c) => c.role === 'abp')!;
    expect(abp.samples.length).toBe(3750);
    // Same samples as the generator's, after float32 rounding (Math.fround is the IEEE 754 binary32 rounding).
    const expected = whole.channels[0]!.samples.slice(1250, 5000);
    let maxDiff = 0;
    for (let i = 0; i < expected.length; i++) maxDiff = Math.max(maxDiff, Math.abs((abp.samples[i] as number) - Math.fround(expected[i] as number)));
    expect(maxDiff).toBe(0);
  });

  it('analyses each due window once and stores the assessment with values, cycles, beats, flags and engine version', async () => {
    const m = await registerMonitor(integrator, 'A2B1C2D3E4F50002');
    await sendRecording(gw, m.apiKey, 'A2B1C2D3E4F50002', T0, spec);
    const stored: string[] = [];
    assessmentEvents(gw.ctx.ds).stored.push(async (_m, a) => void stored.push(a.id));
    const done = await drain();
    assessmentEvents(gw.ctx.ds).stored.pop();
    const mine = (await gw.ctx.ds.query('SELECT * FROM assessment WHERE monitor_id = ? ORDER BY window_start', [m.monitorId])) as Record<string, unknown>[];
    expect(mine.map((a) => (a.window_start as Date).getTime() - T0)).toEqual([0, 10_000]);
    expect(done.filter((d) => d.status === 'done').length).toBeGreaterThanOrEqual(2);
    expect(stored).toEqual(expect.arrayContaining(mine.map((a) => a.id)));
    const result = JSON.parse(mine[0]!.result as string);
    expect(result.engineVersion).toBe(DEFAULT_ENGINE.version);
    expect(mine[0]!.engine_version).toBe(DEFAULT_ENGINE.version);
    expect(result.beats.abp.beats.length).toBeGreaterThan(30); // 80 /min over 30 s
    expect(result.cycles.length).toBeGreaterThan(3);
    // PPV 14 % by construction of the synthetic signal; the engine's accuracy is tested in
    // shared/analysis, here we check the stored column is the engine's own window value.
    expect(mine[0]!.ppv).toBe(result.indices.ppv.value);
    expect(mine[0]!.ppv).not.toBeNull();
    expect(Math.abs((mine[0]!.ppv as number) - 14)).toBeLessThan(3);
    // The same window analysed directly gives the same result: storage changed nothing.
    const { input } = await assembleWindow(gw.ctx.ds, m.monitorId, new Date(T0), new Date(T0 + 30_000));
    input.context = { probeSite: 'finger', plethScaling: 'raw', ventilationMode: 'controlled', tidalVolumeMl: 500, patientHeightCm: 175, patientSex: 'male' };
    const direct = analyseWindow(input, { cyclesToAverage: 3 });
    expect(direct.indices.ppv.value).toBe(result.indices.ppv.value);
    expect(direct.verdict).toBe(mine[0]!.verdict);
    const windows = await gw.ctx.ds.query('SELECT status, assessment_id FROM analysis_window WHERE monitor_id = ?', [m.monitorId]);
    expect(windows.every((w: { status: string; assessment_id: string }) => w.status === 'done' && w.assessment_id)).toBe(true);
  });

  it('closes a window as failed with the reason when the engine cannot read it', async () => {
    const m = await registerMonitor(integrator, 'A2B1C2D3E4F50003');
    await sendRecording(gw, m.apiKey, 'A2B1C2D3E4F50003', T0, spec);
    const broken: Engine = {
      version: DEFAULT_ENGINE.version,
      analyse: () => {
        throw new Error('unit "furlong" is not understood');
      },
    };
    await drain(broken);
    const rows = await gw.ctx.ds.query('SELECT status, last_error FROM analysis_window WHERE monitor_id = ?', [m.monitorId]);
    expect(rows.map((r: { status: string }) => r.status)).toEqual(['failed', 'failed']);
    expect(rows[0].last_error).toMatch(/furlong/);
  });

  it('keeps both results when stored data is re-analysed with a newer engine version', async () => {
    const m = await registerMonitor(integrator, 'A2B1C2D3E4F50004');
    await sendRecording(gw, m.apiKey, 'A2B1C2D3E4F50004', T0, spec);
    await drain();
    const newer: Engine = { version: '99.0.0-test', analyse: (i, s) => ({ ...analyseWindow(i, s), engineVersion: '99.0.0-test' }) };
    expect(await requestReanalysis(gw.ctx, { engineVersion: newer.version, monitorId: m.monitorId })).toBe(2);
    expect(await requestReanalysis(gw.ctx, { engineVersion: newer.version, monitorId: m.monitorId })).toBe(0); // idempotent
    // A worker of the old version does not take the newer version's windows.
    expect((await drain()).length).toBe(0);
    await drain(newer);
    const rows = await gw.ctx.ds.query('SELECT engine_version, window_start FROM assessment WHERE monitor_id = ? ORDER BY engine_version, window_start', [
      m.monitorId,
    ]);
    expect(rows.map((r: { engine_version: string }) => r.engine_version)).toEqual([
      DEFAULT_ENGINE.version,
      DEFAULT_ENGINE.version,
      '99.0.0-test',
      '99.0.0-test',
    ]);
  });

  it('an integrator queues re-analysis with the running engine through the API; audited, reviewers refused', async () => {
    const m = await registerMonitor(integrator, 'A2B1C2D3E4F50006');
    await sendRecording(gw, m.apiKey, 'A2B1C2D3E4F50006', T0, spec);
    await drain();
    // As if an older engine had analysed them.
    await gw.ctx.ds.query("UPDATE analysis_window SET engine_version = '0.9.0' WHERE monitor_id = ?", [m.monitorId]);
    await gw.ctx.ds.query("UPDATE assessment SET engine_version = '0.9.0' WHERE monitor_id = ?", [m.monitorId]);
    const res = await integrator.post('/api/v1/analysis/reanalyse', { monitorId: m.monitorId });
    expect(res.status).toBe(202);
    expect(res.body).toEqual({ engineVersion: DEFAULT_ENGINE.version, queued: 2 });
    expect((await drain()).length).toBe(2);
    const reviewer = await gw.signIn('reviewer');
    expect((await reviewer.post('/api/v1/analysis/reanalyse', {})).status).toBe(403);
    const admin = await gw.signIn('admin');
    const audit = (await admin.get('/api/v1/audit?action=analysis.reanalyse')).body.items;
    expect(audit[0]).toMatchObject({ entityId: m.monitorId, after: { queued: 2 } });
  });

  it('never analyses a window twice when two workers race (SELECT … FOR UPDATE SKIP LOCKED)', async () => {
    const m = await registerMonitor(integrator, 'A2B1C2D3E4F50005');
    await sendRecording(gw, m.apiKey, 'A2B1C2D3E4F50005', T0, { ...spec, durationSeconds: 120 });
    const a = new AnalysisWorker(gw.ctx);
    const b = new AnalysisWorker(gw.ctx);
    await Promise.all([a.start(), b.start()]);
    const until = Date.now() + 20_000;
    for (;;) {
      const [row] = await gw.ctx.ds.query("SELECT COUNT(*) AS n FROM analysis_window WHERE monitor_id = ? AND status = 'due'", [m.monitorId]);
      if (Number(row.n) === 0 || Date.now() > until) break;
      await new Promise((r) => setTimeout(r, 100));
    }
    await Promise.all([a.stop(), b.stop()]);
    const per = await gw.ctx.ds.query('SELECT window_start, COUNT(*) AS n FROM assessment WHERE monitor_id = ? GROUP BY window_start', [m.monitorId]);
    // 120 s of data, 30-s windows every 10 s: starts 0, 10, …, 90 s.
    expect(per.length).toBe(10);
    expect(per.every((r: { n: string }) => Number(r.n) === 1)).toBe(true);
    expect(a.analysed + b.analysed).toBeGreaterThanOrEqual(10);
  });

  it('takes over windows an older engine planned and nobody took (after an upgrade), never a newer engine’s', async () => {
    // Semantic version order (semver.org §11: numeric per field), not string order.
    expect(compareVersions('2.0.0', '2.1.0')).toBeLessThan(0);
    expect(compareVersions('10.0.0', '9.9.9')).toBeGreaterThan(0);
    expect(compareVersions('2.1.0', '2.1.0')).toBe(0);
    const m = await registerMonitor(integrator, 'A2B1C2D3E4F50007');
    await sendRecording(gw, m.apiKey, 'A2B1C2D3E4F50007', T0, spec);
    const now = Date.now();
    // As the database looks after an upgrade: windows planned by the old engine, due for a while;
    // one planned just now (its old gateway may still take it); one queued for a newer engine.
    const rows = (await gw.ctx.ds.query('SELECT id FROM analysis_window WHERE monitor_id = ? ORDER BY window_start', [m.monitorId])) as { id: string }[];
    expect(rows).toHaveLength(2);
    await gw.ctx.ds.query("UPDATE analysis_window SET engine_version = '0.9.0', created_at = ? WHERE id = ?", [
      new Date(now - STRANDED_AFTER_MS - 60_000),
      rows[0]!.id,
    ]);
    await gw.ctx.ds.query("UPDATE analysis_window SET engine_version = '0.9.0', created_at = ? WHERE id = ?", [new Date(now - 10_000), rows[1]!.id]);
    await gw.ctx.ds.query(
      "INSERT INTO analysis_window (monitor_id, window_start, window_end, engine_version, status, attempts, created_at) VALUES (?, ?, ?, '999.0.0', 'due', 0, ?)",
      [m.monitorId, new Date(T0), new Date(T0 + 30_000), new Date(now - 3_600_000)],
    );
    expect(await drain()).toHaveLength(0);
    expect(await adoptStrandedWindows(gw.ctx, DEFAULT_ENGINE.version, new Date(now))).toBe(1);
    const done = await drain();
    expect(done).toHaveLength(1);
    const [a] = (await gw.ctx.ds.query('SELECT window_start, engine_version FROM assessment WHERE monitor_id = ?', [m.monitorId])) as {
      window_start: Date;
      engine_version: string;
    }[];
    expect(a).toMatchObject({ engine_version: DEFAULT_ENGINE.version });
    expect(a!.window_start.getTime()).toBe(T0);
    const left = (await gw.ctx.ds.query("SELECT engine_version AS v FROM analysis_window WHERE monitor_id = ? AND status = 'due' ORDER BY v", [
      m.monitorId,
    ])) as {
      v: string;
    }[];
    expect(left.map((r) => r.v)).toEqual(['0.9.0', '999.0.0']);
  });
});
