import { mkdtemp, rm } from 'node:fs/promises';
import http from 'node:http';
import type { AddressInfo } from 'node:net';
import os from 'node:os';
import path from 'node:path';
import { afterEach, describe, expect, it } from 'vitest';
import { decodeSamples, ingestBatchSchema, type IngestBatch } from '@ebbgate/shared';
import { runDemoScenario } from './demo';
import { DEMO_MONITORS } from './scenarios/monitor-models';

const UNMAPPED = DEMO_MONITORS.findIndex((m) => m.scenario === 'unmapped-channel');

// Bare node:http servers stand in for the gateway (POST /api/v1/ingest/batches) and for the mock
// EHR's fault admin API (PUT/DELETE /_admin/faults, mock-ehr/src/admin/routes.ts).
async function server(handler: (req: http.IncomingMessage, body: string, res: http.ServerResponse) => void) {
  const s = http.createServer((req, res) => {
    let body = '';
    req.on('data', (c) => (body += c));
    req.on('end', () => handler(req, body, res));
  });
  await new Promise<void>((r) => s.listen(0, '127.0.0.1', r));
  return { url: `http://127.0.0.1:${(s.address() as AddressInfo).port}`, close: () => new Promise<void>((r) => s.close(() => r())) };
}

const dirs: string[] = [];
afterEach(async () => {
  for (const d of dirs.splice(0)) await rm(d, { recursive: true, force: true });
});

describe('runDemoScenario', () => {
  it('backfills the last minute at once, labels the unmapped channel, and drives the EHR outage on time', async () => {
    const received: { auth?: string; batch: IngestBatch; at: number }[] = [];
    const gw = await server((req, body, res) => {
      const batch = JSON.parse(body) as IngestBatch;
      received.push({ auth: req.headers.authorization, batch, at: Date.now() });
      const unmapped = batch.channels.some((c) => c.code === 'EBB_RESP_IMPEDANCE');
      res.writeHead(unmapped ? 422 : 202, { 'content-type': 'application/json' }).end(JSON.stringify(unmapped ? { title: 'unmapped', status: 422 } : {}));
    });
    const faults: { method: string; body: string; at: number }[] = [];
    const ehr = await server((req, body, res) => {
      if (req.url !== '/_admin/faults') return void res.writeHead(404).end();
      faults.push({ method: req.method!, body, at: Date.now() });
      // The refusal rule is used up by the second look, as if Observations had arrived meanwhile.
      const used = req.method === 'GET' && faults.filter((f) => f.method === 'GET').length >= 2;
      if (req.method === 'DELETE') return void res.writeHead(204).end();
      res.writeHead(200, { 'content-type': 'application/json' }).end(JSON.stringify({ rules: req.method === 'GET' && used ? [] : [{}] }));
    });
    const spoolDir = await mkdtemp(path.join(os.tmpdir(), 'ebbgate-demo-'));
    dirs.push(spoolDir);
    const monitors = [DEMO_MONITORS[0], DEMO_MONITORS[UNMAPPED]].map((m, i) => ({ identifier: m.identifier, apiKey: `key-${i}` }));
    const lines: string[] = [];
    const t0 = Date.now();
    const demo = runDemoScenario({
      gatewayUrl: gw.url,
      mockEhrUrl: ehr.url,
      monitors,
      spoolDir,
      log: (m) => lines.push(m),
      ehrOutage: { atSeconds: 1, durationSeconds: 1 },
    });
    await demo.ready;
    await new Promise((r) => setTimeout(r, 3200));
    await demo.stop();
    await gw.close();
    await ehr.close();

    expect(demo.assignments.get(DEMO_MONITORS[0].identifier)).toBe('fluid-responsive');
    expect(demo.assignments.get(DEMO_MONITORS[UNMAPPED].identifier)).toBe('unmapped-channel');
    const first = received.filter((r) => r.batch.monitorId === DEMO_MONITORS[0].identifier);
    // 60 s of backfill in 5-s batches (12, or 13 when the clock crossed a batch boundary meanwhile).
    expect(first.length).toBeGreaterThanOrEqual(12);
    expect(first[11].at - t0).toBeLessThan(2000);
    for (const r of first) {
      expect(ingestBatchSchema.safeParse(r.batch).success).toBe(true);
      expect(r.auth).toBe('Bearer key-0');
    }
    // Consecutive batches tile in time: each starts where the previous one ended.
    for (let i = 1; i < first.length; i++) expect(Date.parse(first[i].batch.startTime) - Date.parse(first[i - 1].batch.startTime)).toBe(5000);
    expect(Date.now() - Date.parse(first[0].batch.startTime)).toBeGreaterThan(60_000);
    const abp = decodeSamples(first[0].batch.channels.find((c) => c.code === 'MDC_PRESS_BLD_ART_ABP')!.samples);
    expect(abp).toHaveLength(625);
    expect(first[0].batch.context).toMatchObject({ ventilationMode: 'controlled', setRespiratoryRate: 14, patientSex: 'female', patientHeightCm: 168 });

    const odd = received.filter((r) => r.batch.monitorId === DEMO_MONITORS[UNMAPPED].identifier);
    expect(odd.length).toBeGreaterThanOrEqual(12);
    expect(odd[0].batch.channels.map((c) => c.code)).toContain('EBB_RESP_IMPEDANCE');
    expect(lines.some((l) => l.includes('refused') && l.includes('422'))).toBe(true);

    // Refusal phase, wait for the refusal to fire, outage phase, then cleared 1 s after it began.
    const writes = faults.filter((f) => f.method !== 'GET');
    expect(writes.map((f) => f.method)).toEqual(['PUT', 'PUT', 'DELETE']);
    expect(JSON.parse(writes[0].body).rules).toEqual([{ scope: 'Observation', errorRate: 1, statusCodes: [422], remaining: 3 }]);
    expect(JSON.parse(writes[1].body).rules[0]).toMatchObject({ scope: 'all', statusCodes: [503], retryAfterSeconds: 5 });
    expect(faults.filter((f) => f.method === 'GET').length).toBeGreaterThanOrEqual(2);
    expect(writes[0].at - t0).toBeGreaterThanOrEqual(950);
    expect(writes[2].at - writes[1].at).toBeGreaterThanOrEqual(950);
  });

  it('plays a long backfill faster than real time (speed): simulated batch times, paced, never ahead of the wall clock, a challenge with its truth', async () => {
    const received: { batch: IngestBatch; at: number }[] = [];
    const gw = await server((_req, body, res) => {
      received.push({ batch: JSON.parse(body) as IngestBatch, at: Date.now() });
      res.writeHead(202, { 'content-type': 'application/json' }).end('{}');
    });
    const spoolDir = await mkdtemp(path.join(os.tmpdir(), 'ebbgate-demo-'));
    dirs.push(spoolDir);
    const responder = DEMO_MONITORS.find((m) => m.scenario === 'tidal-volume-challenge-responder')!;
    const speed = 60;
    const backfill = 190;
    const t0 = Date.now();
    const demo = runDemoScenario({
      gatewayUrl: gw.url,
      mockEhrUrl: 'http://127.0.0.1:9', // nothing scheduled at the EHR in this run
      monitors: [{ identifier: responder.identifier, apiKey: 'key-r' }],
      spoolDir,
      backfillSeconds: backfill,
      speed,
      ehrOutage: false,
      adt: false,
    });
    await demo.ready;
    // 190 s at 60× real time: caught up after about 3.2 s.
    await new Promise((r) => setTimeout(r, 4200));
    await demo.stop();
    await gw.close();

    const batches = received.filter((r) => r.batch.monitorId === responder.identifier);
    expect(batches.length).toBeGreaterThanOrEqual(backfill / 5 - 1);
    const start = Date.parse(batches[0]!.batch.startTime);
    expect(t0 - start).toBeGreaterThanOrEqual(backfill * 1000);
    for (let i = 1; i < batches.length; i++) expect(Date.parse(batches[i]!.batch.startTime) - Date.parse(batches[i - 1]!.batch.startTime)).toBe(5000);
    for (const r of batches) {
      const end = Date.parse(r.batch.startTime) + 5000;
      // Never a time still to come, and never sooner than the simulated clock allows (paced, not at once).
      expect(end).toBeLessThanOrEqual(r.at);
      expect(r.at - t0).toBeGreaterThanOrEqual((end - start) / speed);
    }
    expect(batches[batches.length - 1]!.at - batches[0]!.at).toBeGreaterThan(2000);

    // The challenge put in, at its simulated time, with the generator's truth (responder: positive).
    const [c] = demo.challenges(responder.identifier);
    expect(c).toBeDefined();
    expect(c!.startAt.getTime()).toBe(start);
    expect(c!.stepAt.getTime() - c!.startAt.getTime()).toBe(120_000);
    expect(c!.truth.expected).toBe('positive');
    for (const r of batches) {
      const t = Date.parse(r.batch.startTime);
      const high = t >= c!.stepAt.getTime() && t < c!.stepAt.getTime() + 60_000;
      expect(r.batch.context?.tidalVolumeMl, r.batch.startTime).toBe(high ? c!.truth.challengeTidalVolumeMl : c!.truth.baselineTidalVolumeMl);
    }
  });
});
