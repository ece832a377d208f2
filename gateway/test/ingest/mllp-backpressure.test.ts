import net from 'node:net';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { MllpListener } from '../../src/ingest/hl7/mllp-listener';
import { IngestService, type IngestOutcome } from '../../src/ingest/ingest.service';
import { IngestRefusal } from '../../src/ingest/refusal';
import { startTestGateway, type TestGateway } from '../support/harness';

let gw: TestGateway;
let listener: MllpListener;
let release: () => void = () => undefined;
let calls = 0;
beforeAll(async () => {
  gw = await startTestGateway({ mllp: { maxPendingFrames: 4 } });
  const service = new IngestService(gw.ctx);
  // Ingest that waits until released: frames pile up on the connection as if storage were slow.
  const gate = new Promise<void>((r) => (release = r));
  service.ingest = async (): Promise<IngestOutcome> => {
    calls++;
    await gate;
    return { refusal: new IngestRefusal('invalid', 'test'), inboundMessageId: '' };
  };
  listener = new MllpListener(gw.ctx, service);
  await listener.start();
});
afterAll(async () => {
  release();
  await listener?.stop();
  await gw?.stop();
});

describe('MLLP backpressure', () => {
  it('stops reading from a connection while maxPendingFrames wait for their ACK, and resumes after', async () => {
    const frame = (i: number) =>
      Buffer.concat([
        Buffer.from([0x0b]),
        Buffer.from(`MSH|^~\\&|A|B|C|D|20261201||ORU^R01|bp-${i}|P|2.6\r`),
        Buffer.alloc(1_000_000, 0x41),
        Buffer.from([0x1c, 0x0d]),
      ]);
    const socket = net.connect({ host: '127.0.0.1', port: listener.port });
    await new Promise<void>((r) => socket.once('connect', () => r()));
    let answers = 0;
    socket.on('data', (c: Buffer) => (answers += c.filter((b) => b === 0x1c).length));
    for (let i = 0; i < 24; i++) socket.write(frame(i));
    await new Promise((r) => setTimeout(r, 1_500));
    // 24 MB offered; the gateway read a few frames and stopped: most of it still waits in our socket.
    expect(socket.writableLength).toBeGreaterThan(8_000_000);
    expect(calls).toBeLessThanOrEqual(4);
    release();
    const until = Date.now() + 20_000;
    while (answers < 24 && Date.now() < until) await new Promise((r) => setTimeout(r, 50));
    expect(answers).toBe(24);
    expect(calls).toBe(24);
    socket.destroy();
  });
});
