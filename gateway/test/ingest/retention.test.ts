import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { encodeSamplesFloat32 } from '@ebbgate/shared';
import request from 'supertest';
import { purgeExpired } from '../../src/ingest/retention';
import { startTestGateway, type TestGateway } from '../support/harness';
import { registerMonitor } from '../devices/fixtures';

let gw: TestGateway;
beforeAll(async () => {
  gw = await startTestGateway({ ingest: { retentionDays: 1 } });
});
afterAll(async () => gw?.stop());

describe('retention purge', () => {
  it('deletes segments, messages and finished windows older than the retention, keeping quarantined messages', async () => {
    const integrator = await gw.signIn('integrator');
    const m = await registerMonitor(integrator, 'FEDC000000000001');
    const post = (body: unknown) =>
      request(gw.server)
        .post('/api/v1/ingest/batches')
        .set('Authorization', `Bearer ${m.apiKey}`)
        .set('Content-Type', 'application/json')
        .send(JSON.stringify(body));
    const batch = (id: string, start: string) => ({
      monitorId: 'FEDC000000000001',
      batchId: id,
      startTime: start,
      channels: [{ code: 'PAW-RAW', sampleRate: 125, samples: encodeSamplesFloat32(new Float32Array(1250)) }],
    });
    await post(batch('old', '2026-11-20T00:00:00.000Z')).expect(202);
    await post('not json').expect(400);
    const now = new Date();
    await post(batch('new', new Date(now.getTime() - 60_000).toISOString())).expect(202);
    // Pretend the first two arrived ten days ago.
    await gw.ctx.ds.query("UPDATE inbound_message SET received_at = ? WHERE batch_id = 'old' OR outcome = 'quarantined'", [
      new Date(now.getTime() - 10 * 86_400_000),
    ]);
    const counts = await purgeExpired(gw.ctx, now);
    expect(counts.segments).toBe(1);
    expect(counts.inboundMessages).toBe(1);
    const left = await gw.ctx.ds.query('SELECT outcome, batch_id FROM inbound_message ORDER BY id');
    expect(left).toEqual([
      { outcome: 'quarantined', batch_id: null },
      { outcome: 'accepted', batch_id: 'new' },
    ]);
    const segs = await gw.ctx.ds.query('SELECT COUNT(*) AS n FROM waveform_segment');
    expect(Number(segs[0].n)).toBe(1);
  });
});

describe('retention of refused input', () => {
  let gw2: TestGateway;
  beforeAll(async () => {
    gw2 = await startTestGateway({
      ingest: {
        retentionDays: 7,
        rejectedRetentionDays: 3,
        quarantineRetentionDays: 20,
        strangers: { keepBytes: 4096, perSourcePerMinute: 60, retentionDays: 1 },
      },
    });
  });
  afterAll(async () => gw2?.stop());

  it('purges strangers, rejected and quarantined messages each after its own retention', async () => {
    const now = new Date('2026-12-01T12:00:00.000Z');
    const ago = (days: number) => new Date(now.getTime() - days * 86_400_000);
    // [outcome, stranger, age in days, kept?] — each period from the settings above.
    const rows: [string, number, number, boolean][] = [
      ['rejected', 1, 0.5, true],
      ['rejected', 1, 1.5, false],
      ['rejected', 0, 2, true],
      ['rejected', 0, 4, false],
      ['conflicting', 0, 4, false],
      ['quarantined', 0, 10, true],
      ['quarantined', 0, 25, false],
      ['duplicate', 0, 5, true],
      ['duplicate', 0, 8, false],
    ];
    for (const [outcome, stranger, age] of rows) {
      await gw2.ctx.ds.query("INSERT INTO inbound_message (received_at, transport, outcome, size_bytes, raw, stranger) VALUES (?, 'http', ?, 1, 'x', ?)", [
        ago(age),
        outcome,
        stranger,
      ]);
    }
    const counts = await purgeExpired(gw2.ctx, now);
    expect(counts).toMatchObject({ strangers: 1, rejected: 2, quarantined: 1, inboundMessages: 1 });
    const left = (await gw2.ctx.ds.query('SELECT outcome, stranger FROM inbound_message ORDER BY id')) as { outcome: string; stranger: number }[];
    expect(left).toEqual(rows.filter((r) => r[3]).map(([outcome, stranger]) => ({ outcome, stranger })));
  });
});
