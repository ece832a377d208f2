/**
 * Bad input, generated (fast-check): 100,000 cases per transport in process (MLLP reader +
 * PCD-01 decoder + ACK; JSON batch decoder), then a thousand per transport against the real
 * gateway process over one MLLP connection and over HTTP with a valid key: no crash, every
 * answer clear (an HL7 ACK with MSA and, for a refusal, ERR; HTTP problem details).
 */
import fc from 'fast-check';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { fuzzInProcess, hl7Input, jsonInput } from './fuzz-cases';
import { Peer, readAck, registerMllpMonitor, startEdgeGateway, type EdgeGateway } from './edge-support';

describe('generated bad input, in process', () => {
  it('100,000 cases per transport: each decoded or refused with a reason, every ACK clear', () => {
    const r = fuzzInProcess(100_000);
    console.log(
      `fuzz in process: MLLP ${r.mllp.cases} cases in ${(r.mllp.ms / 1000).toFixed(1)} s, HTTP ${r.http.cases} cases in ${(r.http.ms / 1000).toFixed(1)} s`,
    );
    expect(r.mllp.cases).toBe(100_000);
    expect(r.http.cases).toBe(100_000);
  });
});

describe('generated bad input, against the gateway', () => {
  let e: EdgeGateway;
  let key: string;
  beforeAll(async () => {
    e = await startEdgeGateway();
    const { monitorId } = await registerMllpMonitor(e, '02EB6AFFFE00EF01');
    key = (await e.integrator.post(`/monitors/${monitorId}/api-key`)).body.apiKey as string;
  }, 120_000);
  afterAll(async () => e?.stop());

  it('MLLP: 1,000 generated frames on one connection, each answered in order with a clear ACK', async () => {
    // Frame bytes are taken out of the payloads so each payload is exactly one frame.
    const payloads = fc.sample(hl7Input, { numRuns: 1000, seed: 11 }).map((b) => Buffer.from(b.filter((x) => x !== 0x0b && x !== 0x1c)));
    const peer = await Peer.plain(e.gw.mllpPort!);
    for (const p of payloads) peer.socket.write(Buffer.concat([Buffer.from([0x0b]), p, Buffer.from([0x1c, 0x0d])]));
    const answers = (await peer.answers(payloads.length, 90_000)).map(readAck);
    peer.close();
    for (const a of answers) {
      expect(['AA', 'AE', 'AR', 'CA', 'CE', 'CR']).toContain(a.code);
      if (a.code !== 'AA' && a.code !== 'CA') expect(a.errors.length).toBeGreaterThan(0);
    }
    expect((await fetch(`${e.gw.url}/healthz`)).status).toBe(200);
  });

  it('HTTP: 1,000 generated bodies with a valid key, each answered 2xx or with problem details', async () => {
    const bodies = fc.sample(jsonInput, { numRuns: 1000, seed: 12 });
    for (const body of bodies) {
      const r = await fetch(`${e.gw.url}/api/v1/ingest/batches`, {
        method: 'POST',
        headers: { authorization: `Bearer ${key}`, 'content-type': 'application/json' },
        body,
      });
      const text = await r.text();
      expect([200, 202, 400, 409, 413, 422, 429]).toContain(r.status);
      if (r.status >= 400) {
        expect(r.headers.get('content-type')).toMatch(/application\/problem\+json/);
        expect(JSON.parse(text).detail).toEqual(expect.any(String));
      }
    }
    expect((await fetch(`${e.gw.url}/healthz`)).status).toBe(200);
  });
});
