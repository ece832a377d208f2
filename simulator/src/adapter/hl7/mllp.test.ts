import net from 'node:net';
import { mkdtemp, rm } from 'node:fs/promises';
import os from 'node:os';
import path from 'node:path';
import { afterEach, describe, expect, it } from 'vitest';
// Reference parser for what arrives at the fake receiver: node-hl7-client 4.0.0 (npm).
import { Message } from 'node-hl7-client';
import { encodeSamplesFloat32, type IngestBatch } from '@ebbgate/shared';
import { BatchSender } from '../batch-sender';
import { parseAck } from './ack';
import { frameMllp, MllpDeframer } from './mllp-frame';
import { mllpTransport } from './mllp-transport';

// MLLP frame: 0x0B + message + 0x1C 0x0D (HL7 v2 implementation guide, appendix C).
describe('MLLP framing', () => {
  it('wraps a message in VT … FS CR', () => {
    const f = frameMllp('MSH|^~\\&|A\r');
    expect(f[0]).toBe(0x0b);
    expect(f.subarray(-2)).toEqual(Buffer.from([0x1c, 0x0d]));
    expect(f.subarray(1, -2).toString()).toBe('MSH|^~\\&|A\r');
  });
  it('reassembles frames split across chunks and several frames in one chunk', () => {
    const d = new MllpDeframer();
    const both = Buffer.concat([frameMllp('ONE\r'), frameMllp('TWO\r'), frameMllp('THREE\r')]);
    const out = [...d.push(both.subarray(0, 3)), ...d.push(both.subarray(3, 12)), ...d.push(both.subarray(12))];
    expect(out).toEqual(['ONE\r', 'TWO\r', 'THREE\r']);
  });
});

describe('ACK parsing (HL7 v2 MSA/ERR; table 0357 error codes)', () => {
  it('reads a positive enhanced-mode ACK', () => {
    const a = parseAck('MSH|^~\\&|GW||SIM||20261201101500||ACK^R01^ACK|9|P|2.6\rMSA|CA|batch-1\r');
    expect(a).toMatchObject({ code: 'CA', controlId: 'batch-1', accepted: true, errors: [] });
  });
  it('reads an AE with the ERR reason', () => {
    const a = parseAck(
      'MSH|^~\\&|GW||SIM||20261201101500||ACK^R01^ACK|9|P|2.6\rMSA|AE|batch-2|unmapped code\rERR|||103^Table value not found^HL70357|E||||OBX-3 code 999999 is not in the monitor profile\r',
    );
    expect(a.accepted).toBe(false);
    expect(a.errors[0]).toEqual({ code: '103', text: 'OBX-3 code 999999 is not in the monitor profile', severity: 'E' });
  });
});

type Reply = (controlId: string, n: number) => string | 'drop';

async function fakeReceiver(reply: Reply) {
  const received: Message[] = [];
  let sockets = 0;
  const server = net.createServer((sock) => {
    sockets++;
    const d = new MllpDeframer();
    sock.on('data', (chunk) => {
      for (const text of d.push(chunk)) {
        const m = new Message({ text });
        received.push(m);
        const r = reply(m.get('MSH.10').toString(), received.length);
        if (r === 'drop') sock.destroy();
        else sock.write(frameMllp(r));
      }
    });
    sock.on('error', () => {});
  });
  await new Promise<void>((r) => server.listen(0, '127.0.0.1', r));
  const port = (server.address() as net.AddressInfo).port;
  return { port, received, sockets: () => sockets, close: () => new Promise<void>((r) => server.close(() => r())) };
}

const ack = (code: string, id: string, err?: string) =>
  `MSH|^~\\&|EBBGATE||ADAPTER||20261201101500||ACK^R01^ACK|A${id}|P|2.6\rMSA|${code}|${id}\r` + (err ? `ERR|||${err}|E\r` : '');

const batch = (k: number): IngestBatch => ({
  monitorId: '02EB6AFFFE2C3D4E',
  batchId: `b-${k}`,
  startTime: new Date(Date.UTC(2026, 11, 1, 10, 0, k * 5)).toISOString(),
  channels: [
    {
      code: 'MDC_PRESS_BLD_ART_ABP',
      sampleRate: 125,
      unit: 'mmHg',
      samples: encodeSamplesFloat32(Array.from({ length: 625 }, (_, i) => 90 + 30 * Math.sin(i / 15))),
    },
    { code: 'MDC_PRESS_AWAY', sampleRate: 125, unit: 'cmH2O', samples: encodeSamplesFloat32(Array.from({ length: 625 }, () => 5)) },
  ],
  context: { setRespiratoryRate: 14, tidalVolumeMl: 500, patientSex: 'male', patientHeightCm: 180 },
});

const dirs: string[] = [];
afterEach(async () => {
  for (const d of dirs.splice(0)) await rm(d, { recursive: true, force: true });
});

describe('durable sender over MLLP', () => {
  it('sends ORU^R01 messages in order and treats CA as delivered', async () => {
    const rx = await fakeReceiver((id) => ack('CA', id));
    const spoolDir = await mkdtemp(path.join(os.tmpdir(), 'ebbgate-mllp-'));
    dirs.push(spoolDir);
    const sender = await BatchSender.open({ transport: mllpTransport({ host: '127.0.0.1', port: rx.port }), spoolDir });
    for (let k = 0; k < 3; k++) await sender.send(batch(k));
    await sender.drain(5000);
    await sender.close();
    await rx.close();
    expect(rx.received.map((m) => m.get('MSH.10').toString())).toEqual(['b-0', 'b-1', 'b-2']);
    const first = rx.received[0];
    expect(first.get('MSH.9.1').toString()).toBe('ORU');
    const obx = [...(first.get('OBX') as unknown as Iterable<{ get(p: string): { toString(): string } }>)];
    expect(obx[0].get('OBX.18.1').toString()).toBe('02EB6AFFFE2C3D4E');
    expect(obx[1].get('OBX.3.1').toString()).toBe('150036');
    expect(obx.map((r) => r.get('OBX.3.1').toString())).toContain('151868');
    expect(first.get('PID.8').toString()).toBe('M');
    expect(first.get('PID.3').toString()).toBe(''); // no MRN known to the adapter: no half identifier
    expect(sender.stats.accepted).toBe(3);
  });

  it('reports AE as a permanent failure with the ERR reason, and retries after a dropped connection or AR 207', async () => {
    const rx = await fakeReceiver((id, n) =>
      n === 1
        ? ack('AE', id, '103^Table value not found^HL70357')
        : n === 2
          ? 'drop'
          : n === 3
            ? ack('AR', id, '207^Application internal error^HL70357')
            : ack('AA', id),
    );
    const spoolDir = await mkdtemp(path.join(os.tmpdir(), 'ebbgate-mllp-'));
    dirs.push(spoolDir);
    const reasons: string[] = [];
    const retries: string[] = [];
    const sender = await BatchSender.open({
      transport: mllpTransport({ host: '127.0.0.1', port: rx.port, ackMode: 'original' }),
      spoolDir,
      retry: { baseDelayMs: 20, maxDelayMs: 40, minDelayMs: 5 },
      onEvent: (e) => {
        if (e.kind === 'rejected') reasons.push(e.reason);
        if (e.kind === 'retrying') retries.push(e.reason);
      },
    });
    await sender.send(batch(0));
    await sender.send(batch(1));
    await sender.drain(5000);
    await sender.close();
    await rx.close();
    expect(reasons).toHaveLength(1);
    expect(reasons[0]).toContain('MSA AE');
    expect(reasons[0]).toContain('103 Table value not found');
    expect(retries).toHaveLength(2);
    expect(rx.received.map((m) => m.get('MSH.10').toString())).toEqual(['b-0', 'b-1', 'b-1', 'b-1']);
    expect(sender.stats).toMatchObject({ accepted: 1, rejected: 1, retries: 2 });
  });

  it('spreads monitors over parallel connections while keeping each monitor in order', async () => {
    const rx = await fakeReceiver((id) => ack('CA', id));
    const spoolDir = await mkdtemp(path.join(os.tmpdir(), 'ebbgate-mllp-'));
    dirs.push(spoolDir);
    const sender = await BatchSender.open({ transport: mllpTransport({ host: '127.0.0.1', port: rx.port, connections: 4 }), spoolDir });
    const monitorsIds = ['02EB6AFFFE000011', '02EB6AFFFE000012', '02EB6AFFFE000013', '02EB6AFFFE000014', '02EB6AFFFE000015', '02EB6AFFFE000016'];
    for (let k = 0; k < 3; k++) for (const m of monitorsIds) await sender.send({ ...batch(k), monitorId: m, batchId: `${m}-${k}` });
    await sender.drain(5000);
    await sender.close();
    await rx.close();
    expect(rx.received).toHaveLength(18);
    expect(rx.sockets()).toBeGreaterThan(1);
    for (const m of monitorsIds) {
      const mine = rx.received.map((x) => x.get('MSH.10').toString()).filter((id) => id.startsWith(m));
      expect(mine).toEqual([`${m}-0`, `${m}-1`, `${m}-2`]);
    }
  });
});
