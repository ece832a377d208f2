/**
 * Slow and oversized strangers against the real gateway process: headers dripped byte by byte
 * are cut off at the header timeout (408, closed); a body dripped slowly at the request timeout;
 * 8 MB uploads from strangers to the test bench are answered 401 before their bodies are read,
 * and /healthz keeps answering meanwhile.
 */
import { randomBytes } from 'node:crypto';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import http from 'node:http';
import net from 'node:net';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestDatabase, type TestDatabase } from '../../../scripts/lib/test-database';
import { spawnGateway, type GatewayProcess } from '../ingest/gateway-process';

let db: TestDatabase;
let gw: GatewayProcess;
let dir: string;
let port = 0;

beforeAll(async () => {
  dir = mkdtempSync(path.join(os.tmpdir(), 'ebbgate-slow-'));
  const file = path.join(dir, 'config.json');
  writeFileSync(
    file,
    JSON.stringify({ gateway: { headersTimeoutMs: 1000, requestTimeoutMs: 2000, rateLimit: { perSourcePerMinute: 100_000, perKeyPerMinute: 100_000 } } }),
  );
  db = await createTestDatabase();
  gw = await spawnGateway({
    databaseUrl: db.runtimeUrl,
    jwtSecret: randomBytes(32).toString('hex'),
    workers: false,
    env: { EBBGATE_CONFIG: file, DATABASE_MIGRATION_URL: db.url },
  });
  port = Number(new URL(gw.url).port);
});
afterAll(async () => {
  await gw?.stop();
  await db?.drop();
  if (dir) rmSync(dir, { recursive: true, force: true });
});

function drip(head: string, everyMs: number, giveUpMs: number): Promise<{ closedAfterMs: number | null; answer: string }> {
  return new Promise((resolve) => {
    const t0 = Date.now();
    const sock = net.connect(port, '127.0.0.1');
    let answer = '';
    const timer = setInterval(() => sock.writable && sock.write('x'), everyMs);
    const giveUp = setTimeout(() => {
      clearInterval(timer);
      sock.destroy();
      resolve({ closedAfterMs: null, answer });
    }, giveUpMs);
    sock.on('data', (d) => (answer += d.toString()));
    sock.on('error', () => undefined);
    sock.on('close', () => {
      clearInterval(timer);
      clearTimeout(giveUp);
      resolve({ closedAfterMs: Date.now() - t0, answer });
    });
    sock.write(head);
  });
}

function strangerUpload(): Promise<number | 'no answer'> {
  return new Promise((resolve) => {
    const req = http.request({
      host: '127.0.0.1',
      port,
      path: '/api/v1/analysis/preview',
      method: 'POST',
      headers: { 'content-type': 'multipart/form-data; boundary=b', 'content-length': String(8 * 1024 * 1024) },
    });
    const timer = setTimeout(() => {
      req.destroy();
      resolve('no answer');
    }, 5000);
    req.on('response', (res) => {
      clearTimeout(timer);
      res.resume();
      req.destroy();
      resolve(res.statusCode ?? 0);
    });
    req.on('error', () => undefined);
    req.write(Buffer.alloc(256 * 1024, 0x42)); // a quarter of a MB of the declared 8 MB
  });
}

describe('slow and oversized strangers', () => {
  it('cuts off dripped headers at the header timeout with 408', async () => {
    const r = await drip('GET /api/v1/openapi.json HTTP/1.1\r\nHost: 127.0.0.1\r\nX-Drip: ', 150, 8000);
    expect(r.closedAfterMs).not.toBeNull();
    expect(r.closedAfterMs!).toBeLessThan(4000);
    expect(r.answer).toMatch(/^HTTP\/1\.1 408/);
  });

  it('cuts off a dripped body at the request timeout', async () => {
    const r = await drip(
      'POST /api/v1/auth/sign-in HTTP/1.1\r\nHost: 127.0.0.1\r\nContent-Type: application/json\r\nContent-Length: 500000\r\n\r\n',
      150,
      9000,
    );
    expect(r.closedAfterMs).not.toBeNull();
    expect(r.closedAfterMs!).toBeLessThan(6000);
  });

  it('answers 20 parallel 8 MB stranger uploads with 401 before their bodies, while /healthz answers', async () => {
    const uploads = Promise.all(Array.from({ length: 20 }, strangerUpload));
    const health = await fetch(`${gw.url}/healthz`);
    expect(health.status).toBe(200);
    expect(await uploads).toEqual(Array(20).fill(401));
  });
});
