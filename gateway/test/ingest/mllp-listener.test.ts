import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { generateWindow } from '@ebbgate/shared/synthetic';
import { MllpListener } from '../../src/ingest/hl7/mllp-listener';
import { IngestService } from '../../src/ingest/ingest.service';
import { startTestGateway, type SignedInClient, type TestGateway } from '../support/harness';
import { corvaneProfile, registerMonitor } from '../devices/fixtures';
import { RawMllpPeer, readAck } from './mllp-client';
import { buildPcd01 } from './pcd01-fixture';

let gw: TestGateway;
let integrator: SignedInClient;
let listener: MllpListener;
beforeAll(async () => {
  gw = await startTestGateway({ ingest: { maxBatchBytes: 200_000 } });
  integrator = await gw.signIn('integrator');
  listener = new MllpListener(gw.ctx, new IngestService(gw.ctx));
  await listener.start();
});
afterAll(async () => {
  await listener?.stop();
  await gw?.stop();
});

const start = new Date('2026-11-30T09:00:00.000Z');
const abp = generateWindow({ seed: 3, durationSeconds: 10, heartRate: 75, respiratoryRate: 14, ppv: 10, channels: ['abp', 'pleth'] });
const waves = [
  { code: '150036', refId: 'MDC_PRESS_BLD_ART_ABP', sampleRate: 125, samples: abp.channels[0]!.samples },
  { code: '150452', refId: 'MDC_PULS_OXIM_PLETH', unit: '262656^MDC_DIM_DIMLESS^MDC', sampleRate: 125, samples: abp.channels[1]!.samples },
];

describe('MLLP listener', () => {
  it('stores a PCD-01 waveform message and answers AA echoing MSH-10 (original mode)', async () => {
    await registerMonitor(integrator, '0223456789ABCD01');
    const peer = await RawMllpPeer.connect(listener.port);
    peer.send(buildPcd01({ controlId: 'ok-1', equipment: '0223456789ABCD01', start, waves, heartRate: 75 }));
    const [ack] = await peer.answers(1);
    expect(readAck(ack!)).toMatchObject({ code: 'AA', controlId: 'ok-1', errors: [] });
    const rows = (await gw.ctx.ds.query(
      "SELECT s.role, s.sample_count, s.start_time FROM waveform_segment s JOIN inbound_message m ON m.id = s.inbound_message_id WHERE m.batch_id = 'ok-1' ORDER BY s.id",
    )) as {
      role: string;
      sample_count: number;
      start_time: Date;
    }[];
    expect(rows.map((r) => [r.role, r.sample_count])).toEqual([
      ['abp', 1250],
      ['pleth', 1250],
    ]);
    expect(rows[0]!.start_time.toISOString()).toBe(start.toISOString());
    // A repeat is acknowledged (AA) and not stored again.
    peer.send(buildPcd01({ controlId: 'ok-1', equipment: '0223456789ABCD01', start, waves, heartRate: 75 }));
    const [, again] = await peer.answers(2);
    expect(readAck(again!).code).toBe('AA');
    peer.close();
  });

  it('answers CA / CE in enhanced mode, with ERR 103 naming the unmapped OBX, and quarantines it', async () => {
    await registerMonitor(integrator, '0223456789ABCD02');
    const peer = await RawMllpPeer.connect(listener.port);
    peer.send(buildPcd01({ controlId: 'enh-1', equipment: '0223456789ABCD02', start, waves, enhanced: true }));
    const unknown = [{ code: '999999', refId: 'MDC_UNKNOWN_WAVE', sampleRate: 125, samples: [1, 2, 3] }];
    peer.send(buildPcd01({ controlId: 'enh-2', equipment: '0223456789ABCD02', start: new Date(start.getTime() + 10_000), waves: unknown, enhanced: true }));
    const [a, b] = await peer.answers(2);
    expect(readAck(a!).code).toBe('CA');
    const nak = readAck(b!);
    expect(nak).toMatchObject({ code: 'CE', controlId: 'enh-2' });
    expect(nak.errors[0]).toMatchObject({ code: '103^Table value not found^HL70357' });
    expect(nak.errors[0]!.location).toMatch(/^OBX\^\d+\^3$/);
    const q = (await integrator.get('/api/v1/inbound-messages?transport=mllp&outcome=quarantined&monitor=0223456789ABCD02')).body.items;
    expect(q.map((m: { batchId: string }) => m.batchId)).toEqual(['enh-2']);
    peer.close();
  });

  it('answers stray bytes, a frame that is not HL7, and an oversize frame with AR, keeping the connection open', async () => {
    const peer = await RawMllpPeer.connect(listener.port);
    peer.write('hello, this is not MLLP');
    const [stray] = await peer.answers(1);
    expect(readAck(stray!).code).toBe('AR');
    expect(readAck(stray!).errors[0]!.code).toMatch(/^100\^/);
    peer.send('PID|not a message');
    const [, notHl7] = await peer.answers(2);
    expect(readAck(notHl7!)).toMatchObject({ code: 'AR' });
    peer.send(
      buildPcd01({ controlId: 'big-1', equipment: '0223456789ABCD01', start, waves: [{ ...waves[0]!, samples: new Float64Array(60_000).fill(100.123) }] }),
    );
    const [, , big] = await peer.answers(3);
    expect(readAck(big!)).toMatchObject({ code: 'AR', controlId: 'big-1' });
    expect(readAck(big!).errors[0]!.text).toMatch(/over the limit/);
    expect(peer.open).toBe(true);
    const kept = (await integrator.get('/api/v1/inbound-messages?transport=mllp&pageSize=500')).body.items as { outcome: string; reason: string }[];
    expect(kept.some((m) => m.outcome === 'quarantined' && /outside an MLLP frame/.test(m.reason))).toBe(true);
    expect(kept.some((m) => m.outcome === 'rejected' && /over the limit/.test(m.reason))).toBe(true);
    peer.close();
  });

  it('splits two frames sent in one write and joins a frame sent in pieces, answering in order', async () => {
    await registerMonitor(integrator, '0223456789ABCD03');
    const peer = await RawMllpPeer.connect(listener.port);
    const m1 = buildPcd01({ controlId: 'p-1', equipment: '0223456789ABCD03', start, waves });
    const m2 = buildPcd01({ controlId: 'p-2', equipment: '0223456789ABCD03', start: new Date(start.getTime() + 10_000), waves });
    const framed = (m: string) => Buffer.concat([Buffer.from([0x0b]), Buffer.from(m), Buffer.from([0x1c, 0x0d])]);
    peer.write(Buffer.concat([framed(m1), framed(m2)]));
    const m3 = framed(buildPcd01({ controlId: 'p-3', equipment: '0223456789ABCD03', start: new Date(start.getTime() + 20_000), waves }));
    for (let i = 0; i < m3.length; i += 4096) peer.write(m3.subarray(i, i + 4096));
    const acks = (await peer.answers(3)).map(readAck);
    expect(acks.map((a) => [a.code, a.controlId])).toEqual([
      ['AA', 'p-1'],
      ['AA', 'p-2'],
      ['AA', 'p-3'],
    ]);
    const cont = (await integrator.get('/api/v1/inbound-messages?monitor=0223456789ABCD03&order=asc')).body.items.map(
      (m: { continuity: string }) => m.continuity,
    );
    expect(cont).toEqual(['first', 'contiguous', 'contiguous']);
    peer.close();
  });

  it('reprocesses a quarantined HL7 message once the profile maps its code', async () => {
    const m = await registerMonitor(integrator, '0223456789ABCD04');
    const peer = await RawMllpPeer.connect(listener.port);
    peer.send(
      buildPcd01({
        controlId: 'rp-1',
        equipment: '0223456789ABCD04',
        start,
        waves: [{ code: '888888', refId: 'MDC_LOCAL_ART', sampleRate: 125, samples: waves[0]!.samples }],
      }),
    );
    expect(readAck((await peer.answers(1))[0]!).code).toBe('AE');
    const [q] = (await integrator.get('/api/v1/inbound-messages?outcome=quarantined&monitor=0223456789ABCD04')).body.items;
    const p = corvaneProfile('Corvane Wayfarer 0223456789ABCD04');
    await integrator
      .put(`/api/v1/profiles/${m.profileId}`, {
        ...p,
        channels: [...p.channels, { code: 'MDC_LOCAL_ART', role: 'abp', unit: 'mmHg', gain: 1, offset: 0, sampleRate: 125 }],
      })
      .expect(200);
    const res = await integrator.post(`/api/v1/inbound-messages/${q.id}/reprocess`);
    expect(res.body.result).toBe('reprocessed');
    const segs = await gw.ctx.ds.query('SELECT channel_code FROM waveform_segment WHERE inbound_message_id = ?', [q.id]);
    expect(segs).toEqual([{ channel_code: 'MDC_LOCAL_ART' }]);
    peer.close();
  });
});
