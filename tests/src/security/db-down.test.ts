/**
 * Transient failure is not an error of the message: with the database unreachable (a TCP proxy
 * between the gateway and MariaDB is cut), MLLP answers AR/CR with ERR-3 207 echoing MSA-2
 * (never AE), HTTP answers 503 with Retry-After; the adapter client keeps its batches in the
 * spool and, once the database is back, each is stored exactly once. Nothing goes to rejected/.
 */
import { mkdtemp, readdir, rm } from 'node:fs/promises';
import net from 'node:net';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { BatchSender, mllpTransport, type SenderEvent } from '@ebbgate/simulator/adapter';
import type { IngestBatch } from '@ebbgate/shared';
import { oru, Peer, readAck, registerMllpMonitor, startEdgeGateway, type EdgeGateway } from './edge-support';

/** Forwards TCP to MariaDB; `cut()` drops every connection and refuses new ones until `restore()`. */
class DbProxy {
  private readonly sockets = new Set<net.Socket>();
  private down = false;
  private constructor(private readonly server: net.Server) {}

  static async start(target: { host: string; port: number }): Promise<DbProxy> {
    let proxy: DbProxy | null = null;
    const server = net.createServer((client) => {
      if (!proxy || proxy.down) return client.destroy();
      const upstream = net.connect(target);
      for (const s of [client, upstream]) {
        proxy.sockets.add(s);
        s.on('close', () => proxy!.sockets.delete(s));
        s.on('error', () => undefined);
      }
      client.pipe(upstream).pipe(client);
      client.on('close', () => upstream.destroy());
      upstream.on('close', () => client.destroy());
    });
    await new Promise<void>((r) => server.listen(0, '127.0.0.1', r));
    proxy = new DbProxy(server);
    return proxy;
  }

  get port(): number {
    return (this.server.address() as net.AddressInfo).port;
  }

  cut(): void {
    this.down = true;
    for (const s of this.sockets) s.destroy();
  }

  restore(): void {
    this.down = false;
  }

  close(): Promise<void> {
    this.cut();
    return new Promise((r) => this.server.close(() => r()));
  }
}

let e: EdgeGateway;
let proxy: DbProxy;
let spoolDir: string;
const M = '02EB6AFFFE00E401';

beforeAll(async () => {
  const admin = new URL(process.env.EBBGATE_TEST_ADMIN_URL!);
  proxy = await DbProxy.start({ host: admin.hostname, port: Number(admin.port) });
  // The gateway's runtime connections go through the proxy; its migrations do not.
  e = await startEdgeGateway(
    { ingest: { retryAfterSeconds: 1 } },
    {
      databaseUrl: (db) => {
        const u = new URL(db.runtimeUrl);
        u.port = String(proxy.port);
        return u.toString();
      },
    },
  );
  spoolDir = await mkdtemp(path.join(os.tmpdir(), 'ebbgate-dbdown-'));
}, 120_000);
afterAll(async () => {
  await e?.stop();
  await proxy?.close();
  if (spoolDir) await rm(spoolDir, { recursive: true, force: true });
});

const batch = (k: number): IngestBatch => ({
  monitorId: M,
  batchId: `dbdown-${k}`,
  startTime: new Date(Date.UTC(2026, 11, 1, 12, 0, 4 * k)).toISOString(),
  channels: [
    {
      code: '150036',
      role: 'abp',
      sampleRate: 125,
      unit: 'mmHg',
      samples: Array.from({ length: 500 }, (_, i) => 80 + 40 * Math.max(0, Math.sin((2 * Math.PI * i) / 94))),
    },
  ],
});

describe('the database is unreachable during ingest', () => {
  it('MLLP answers AR/CR 207 echoing MSA-2, HTTP 503 with Retry-After; the adapter resends and each batch is stored once', async () => {
    const { monitorId } = await registerMllpMonitor(e, M);
    const key = (await e.integrator.post(`/monitors/${monitorId}/api-key`)).body.apiKey as string;
    proxy.cut();

    const peer = await Peer.plain(e.gw.mllpPort!);
    peer.send(oru({ controlId: 'down-orig', equipment: M, start: new Date('2026-12-01T13:00:00Z') }));
    peer.send(oru({ controlId: 'down-enh', equipment: M, start: new Date('2026-12-01T13:00:04Z'), enhanced: true }));
    const [orig, enh] = (await peer.answers(2, 30_000)).map(readAck);
    peer.close();
    expect(orig).toMatchObject({ code: 'AR', controlId: 'down-orig' });
    expect(orig!.errors[0]!.code).toBe('207');
    expect(enh).toMatchObject({ code: 'CR', controlId: 'down-enh' });

    const http = await fetch(`${e.gw.url}/api/v1/ingest/batches`, {
      method: 'POST',
      headers: { authorization: `Bearer ${key}`, 'content-type': 'application/json' },
      body: JSON.stringify(batch(99)),
    });
    expect(http.status).toBe(503);
    expect(http.headers.get('retry-after')).toBe('1');

    const events: SenderEvent[] = [];
    const sender = await BatchSender.open({
      transport: mllpTransport({ host: '127.0.0.1', port: e.gw.mllpPort!, ackMode: 'enhanced', ackTimeoutMs: 20_000 }),
      spoolDir,
      fsync: false,
      retry: { baseDelayMs: 200, minDelayMs: 100, maxDelayMs: 1_000 },
      onEvent: (ev) => events.push(ev),
    });
    try {
      for (let k = 0; k < 3; k++) await sender.send(batch(k));
      const until = Date.now() + 30_000;
      while (!events.some((ev) => ev.kind === 'retrying') && Date.now() < until) await new Promise((r) => setTimeout(r, 50));
      expect(events.some((ev) => ev.kind === 'retrying')).toBe(true);
      expect(sender.pending()).toBe(3);
      proxy.restore();
      await sender.drain(60_000);
    } finally {
      await sender.close();
    }
    expect(events.filter((ev) => ev.kind === 'rejected')).toEqual([]);
    expect(sender.stats).toMatchObject({ accepted: 3, rejected: 0 });
    const rows = await e.query<{ batch_id: string; n: number }>(
      "SELECT batch_id, COUNT(*) AS n FROM inbound_message WHERE batch_id LIKE 'dbdown-%' AND outcome = 'accepted' GROUP BY batch_id ORDER BY batch_id",
    );
    expect(rows.map((r) => [r.batch_id, Number(r.n)])).toEqual([
      ['dbdown-0', 1],
      ['dbdown-1', 1],
      ['dbdown-2', 1],
    ]);
    const monitorDir = path.join(spoolDir, encodeURIComponent(M));
    const left = await readdir(monitorDir).catch(() => [] as string[]);
    expect(left.filter((n) => n.endsWith('.json'))).toEqual([]);
    expect(left).not.toContain('rejected');
  });
});
