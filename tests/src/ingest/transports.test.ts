import { randomBytes } from 'node:crypto';
import fc from 'fast-check';
import Client, { Message } from 'node-hl7-client';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { generateWindow, toIngestBatch } from '@ebbgate/shared/synthetic';
import { createTestDatabase, type TestDatabase } from '../../../scripts/lib/test-database';
import { corvaneProfile } from '@ebbgate/gateway/test/devices/fixtures';
import { RawMllpPeer, readAck } from '@ebbgate/gateway/test/ingest/mllp-client';
import { buildPcd01 } from '@ebbgate/gateway/test/ingest/pcd01-fixture';
import { DEMO_INTEGRATOR, signIn, spawnGateway, type GatewayProcess } from './gateway-process';

let db: TestDatabase;
let gw: GatewayProcess;
let integrator: Awaited<ReturnType<typeof signIn>>;
const keys = new Map<string, string>();

beforeAll(async () => {
  db = await createTestDatabase();
  gw = await spawnGateway({ databaseUrl: db.url, jwtSecret: randomBytes(32).toString('hex'), mllp: true, workers: true });
  integrator = await signIn(gw.url, DEMO_INTEGRATOR.username, DEMO_INTEGRATOR.password);
  const profile = await integrator.post('/profiles', corvaneProfile('Corvane transports'));
  for (const identifier of ['0223456789ABCDEF', 'FEDCBA9876543210']) {
    const m = await integrator.post('/monitors', { identifier, profileId: profile.body.id });
    keys.set(identifier, (await integrator.post(`/monitors/${m.body.id}/api-key`)).body.apiKey);
  }
});
afterAll(async () => {
  await gw?.stop();
  await db?.drop();
});

const wave = generateWindow({ seed: 5, durationSeconds: 10, heartRate: 78, respiratoryRate: 14, ppv: 11, channels: ['abp', 'pleth'] });
const waves = [
  { code: '150036', refId: 'MDC_PRESS_BLD_ART_ABP', sampleRate: 125, samples: wave.channels[0]!.samples },
  { code: '150452', refId: 'MDC_PULS_OXIM_PLETH', unit: '262656^MDC_DIM_DIMLESS^MDC', sampleRate: 125, samples: wave.channels[1]!.samples },
];
const T0 = Date.parse('2026-11-30T14:00:00.000Z');
const inboundTotal = async (outcome?: string) =>
  (await integrator.get(`/inbound-messages?pageSize=1${outcome ? `&outcome=${outcome}` : ''}`)).body.total as number;

describe('MLLP: IHE PCD-01 messages from an independent HL7 library (node-hl7-client)', () => {
  it('acknowledges each message in the mode asked for, echoing MSH-10, with ERR naming what was wrong', async () => {
    const acks: Message[] = [];
    let arrived: (() => void) | null = null;
    const client = new Client({ host: '127.0.0.1', version: '2.6' } as ConstructorParameters<typeof Client>[0]);
    const conn = client.createConnection({ port: gw.mllpPort!, waitAck: true } as Parameters<typeof client.createConnection>[0], async (res) => {
      acks.push(res.getMessage());
      arrived?.();
    });
    // One message at a time: send, then wait for its acknowledgement.
    const send = async (text: string) => {
      const n = acks.length;
      const got = new Promise<void>((resolve) => (arrived = resolve));
      await conn.sendMessage(new Message({ text }));
      await Promise.race([got, new Promise((r) => setTimeout(r, 15_000))]);
      if (acks.length === n) throw new Error(`no acknowledgement for message ${n + 1}; gateway output:\n${gw.output().slice(-3000)}`);
    };
    const short = waves.map((w) => ({ ...w, samples: w.samples.slice(0, 500) }));
    for (let i = 0; i < 3; i++) {
      await send(
        buildPcd01({
          controlId: `HL7C-${i}`,
          equipment: '0223456789ABCDEF',
          start: new Date(T0 + i * 4_000),
          waves: short,
          heartRate: 78,
          setRespiratoryRate: 14,
          tidalVolumeMl: 480,
        }),
      );
    }
    await send(buildPcd01({ controlId: 'HL7C-ENH', equipment: '0223456789ABCDEF', start: new Date(T0 + 12_000), waves: short, enhanced: true }));
    await send(
      buildPcd01({
        controlId: 'HL7C-BAD',
        equipment: '0223456789ABCDEF',
        start: new Date(T0 + 16_000),
        waves: [{ code: '123', refId: 'MDC_NOT_IN_PROFILE', sampleRate: 125, samples: [1, 2, 3] }],
      }),
    );
    await send(buildPcd01({ controlId: 'HL7C-WHO', equipment: '1211111111111111', start: new Date(T0), waves: short }));
    await conn.close();
    // HL7 v2: MSA-1 acknowledgement code, MSA-2 = the message's MSH-10; ERR-3 from table 0357.
    const summary = acks.map((m) => [m.get('MSA.1').toString(), m.get('MSA.2').toString()]);
    expect(summary).toEqual([
      ['AA', 'HL7C-0'],
      ['AA', 'HL7C-1'],
      ['AA', 'HL7C-2'],
      ['CA', 'HL7C-ENH'],
      ['AE', 'HL7C-BAD'],
      ['AE', 'HL7C-WHO'],
    ]);
    expect(acks[0]!.get('MSH.9.1').toString()).toBe('ACK');
    expect(acks[4]!.get('ERR.3.1').toString()).toBe('103');
    expect(acks[4]!.get('ERR.4').toString()).toBe('E');
    expect(acks[5]!.get('ERR.3.1').toString()).toBe('204');
    const msgs = (await integrator.get('/inbound-messages?transport=mllp&order=asc&pageSize=50')).body.items as {
      batchId: string;
      outcome: string;
      continuity: string;
    }[];
    expect(msgs.map((m) => [m.batchId, m.outcome])).toEqual([
      ['HL7C-0', 'accepted'],
      ['HL7C-1', 'accepted'],
      ['HL7C-2', 'accepted'],
      ['HL7C-ENH', 'accepted'],
      ['HL7C-BAD', 'quarantined'],
      ['HL7C-WHO', 'quarantined'],
    ]);
    expect(msgs.slice(0, 4).map((m) => m.continuity)).toEqual(['first', 'contiguous', 'contiguous', 'contiguous']);
  });
});

describe('property: bad input never crashes the gateway, always gets a clear answer, and is kept', () => {
  it('HTTP: arbitrary and mutated bodies get 2xx or problem details, every 400/422 is quarantined', async () => {
    const apiKey = keys.get('FEDCBA9876543210')!;
    const valid = toIngestBatch(wave, { monitorId: 'FEDCBA9876543210', batchId: 'base', startTime: new Date(T0).toISOString() });
    const mutated = fc
      .record({ key: fc.constantFrom('monitorId', 'batchId', 'startTime', 'channels', 'context'), value: fc.anything() })
      .map(({ key, value }) => JSON.stringify({ ...valid, batchId: `m-${randomBytes(4).toString('hex')}`, [key]: value }));
    const channelMutation = fc
      .record({ field: fc.constantFrom('code', 'sampleRate', 'samples', 'unit', 'role'), value: fc.anything() })
      .map(({ field, value }) =>
        JSON.stringify({ ...valid, batchId: `c-${randomBytes(4).toString('hex')}`, channels: [{ ...valid.channels[0], [field]: value }] }),
      );
    const body = fc.oneof(
      fc.string(),
      fc.json(),
      mutated,
      channelMutation,
      fc.uint8Array({ maxLength: 300 }).map((b) => Buffer.from(b).toString('latin1')),
    );
    let quarantinedAnswers = 0;
    const before = await inboundTotal('quarantined');
    await fc.assert(
      fc.asyncProperty(body, async (text) => {
        const r = await fetch(`${gw.url}/api/v1/ingest/batches`, {
          method: 'POST',
          headers: { authorization: `Bearer ${apiKey}`, 'content-type': 'application/json' },
          body: text,
        });
        expect(r.status).toBeLessThan(500);
        if (r.status >= 400) {
          expect(r.headers.get('content-type')).toMatch(/application\/problem\+json/);
          const p = (await r.json()) as { status: number; title: string; detail: string };
          expect(p.status).toBe(r.status);
          expect(p.detail.length).toBeGreaterThan(10);
          if (r.status === 400 || r.status === 422) quarantinedAnswers++;
        } else await r.arrayBuffer();
      }),
      { numRuns: 80, seed: 4242 },
    );
    expect(await inboundTotal('quarantined')).toBe(before + quarantinedAnswers);
    expect((await fetch(`${gw.url}/healthz`)).status).toBe(200);
  });

  it('MLLP: arbitrary frames and mutated PCD-01 messages each get one ACK/NAK on an open connection and one inbound row', async () => {
    const base = buildPcd01({
      controlId: 'PROP',
      equipment: 'FEDCBA9876543210',
      start: new Date(T0),
      waves: [{ ...waves[0]!, samples: waves[0]!.samples.slice(0, 250) }],
    });
    // MLLP start (0x0B) and end (0x1C) bytes would re-frame the message, so they are left out.
    const strip = (s: string) => s.split(String.fromCharCode(0x0b)).join('').split(String.fromCharCode(0x1c)).join('');
    const mutatedHl7 = fc
      .record({ at: fc.nat({ max: base.length - 1 }), len: fc.nat({ max: 40 }), insert: fc.string({ maxLength: 20 }) })
      .map(({ at, len, insert }) => strip(base.slice(0, at) + insert + base.slice(at + len)));
    const frameText = fc.oneof(
      mutatedHl7,
      fc.string({ maxLength: 400 }).map(strip),
      fc.uint8Array({ maxLength: 400 }).map((b) => strip(Buffer.from(b).toString('latin1'))),
    );
    const peer = await RawMllpPeer.connect(gw.mllpPort!);
    let sent = 0;
    const before = await inboundTotal();
    await fc.assert(
      fc.asyncProperty(frameText, async (text) => {
        if (!text.trim()) return; // an empty frame is nothing
        peer.send(text);
        sent++;
        const ack = readAck((await peer.answers(sent))[sent - 1]!);
        expect(['AA', 'AE', 'AR', 'CA', 'CE', 'CR']).toContain(ack.code);
        if (ack.code !== 'AA' && ack.code !== 'CA') expect(ack.errors.length).toBeGreaterThan(0);
      }),
      { numRuns: 80, seed: 777 },
    );
    expect(peer.open).toBe(true);
    peer.close();
    // Every framed message is kept exactly once, whatever its outcome.
    await new Promise((r) => setTimeout(r, 300));
    expect(await inboundTotal()).toBe(before + sent);
    expect((await fetch(`${gw.url}/healthz`)).status).toBe(200);
    expect(gw.child.exitCode).toBeNull();
  });
});
