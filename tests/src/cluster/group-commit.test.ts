/**
 * Ingest group commit (gateway/src/ingest/group-commit.ts): concurrent batches share one
 * transaction and commit, each is answered after that commit and stored exactly once; a bad batch
 * in the same group (its id reused for other content) is refused alone while its neighbours are
 * stored. The truth is the database afterwards, not the gateway's answers.
 */
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { generateWindow, toIngestBatch } from '@ebbgate/shared/synthetic';
import { groupCommitterFor } from '../../../gateway/src/ingest/inbound-store';
import { startTestGateway, type TestGateway } from '../../../gateway/test/support/harness';
import { registerMonitor } from '../../../gateway/test/devices/fixtures';

const T0 = Date.parse('2026-11-30T08:00:00.000Z');
const batchOf = (monitorId: string, batchId: string, startMs: number, seed = 1) =>
  toIngestBatch(generateWindow({ seed, durationSeconds: 5, heartRate: 80, respiratoryRate: 15, ppv: 12, channels: ['abp', 'paw'] }), {
    monitorId,
    batchId,
    startTime: new Date(startMs).toISOString(),
  });

describe('ingest group commit', () => {
  let gw: TestGateway;
  beforeAll(async () => {
    gw = await startTestGateway({ ingest: { groupCommit: true } }); // opt-in (config ingest.groupCommit)
  });
  afterAll(async () => {
    await gw?.stop();
  });

  it('stores concurrent batches once each in shared commits, and refuses a bad one alone', async () => {
    const integrator = await gw.signIn('integrator');
    const monitors = [];
    for (let i = 0; i < 8; i++) {
      const identifier = `02EB6D00000000${i.toString(16).toUpperCase().padStart(2, '0')}`;
      monitors.push({ identifier, ...(await registerMonitor(integrator, identifier)) });
    }
    const send = (apiKey: string, body: unknown) =>
      request(gw.server)
        .post('/api/v1/ingest/batches')
        .set('Authorization', `Bearer ${apiKey}`)
        .set('Content-Type', 'application/json')
        .send(JSON.stringify(body));
    // One batch stored first; its id is reused below with other content (must be refused, 409).
    const first = monitors[0]!;
    expect((await send(first.apiKey, batchOf(first.identifier, 'gc-0', T0))).status).toBe(202);

    const stats0 = { ...groupCommitterFor(gw.ctx.ds).stats };
    const sends = monitors.flatMap((m, i) => [
      send(m.apiKey, batchOf(m.identifier, `gc-${i}-a`, T0 + 5000)),
      send(m.apiKey, batchOf(m.identifier, `gc-${i}-b`, T0 + 10_000)),
    ]);
    const bad = send(first.apiKey, batchOf(first.identifier, 'gc-0', T0, 9));
    const answers = await Promise.all([...sends, bad]);
    expect(answers.slice(0, -1).map((r) => r.status)).toEqual(Array(16).fill(202));
    expect(answers.at(-1)!.status).toBe(409);

    const stats = groupCommitterFor(gw.ctx.ds).stats;
    // At least one commit carried more than one batch.
    expect(stats.batches - stats0.batches).toBeGreaterThan(stats.groups - stats0.groups);

    const rows = (await gw.ctx.ds.query(
      "SELECT monitor_identifier AS m, batch_id AS b, COUNT(*) AS n FROM inbound_message WHERE outcome = 'accepted' AND batch_id LIKE 'gc-%' GROUP BY monitor_identifier, batch_id",
    )) as { m: string; b: string; n: number | string }[];
    expect(rows.length).toBe(17);
    expect(rows.every((r) => Number(r.n) === 1)).toBe(true);
    const segments = (await gw.ctx.ds.query(
      "SELECT COUNT(*) AS n FROM waveform_segment s JOIN inbound_message i ON i.id = s.inbound_message_id WHERE i.batch_id LIKE 'gc-%'",
    )) as { n: number | string }[];
    expect(Number(segments[0]!.n)).toBe(17 * 2);
    const refused = (await gw.ctx.ds.query("SELECT outcome FROM inbound_message WHERE batch_id = 'gc-0' AND outcome <> 'accepted'")) as { outcome: string }[];
    expect(refused.map((r) => r.outcome)).toEqual(['rejected']);
  });
});
