/**
 * Slow and oversized strangers against the real gateway process: headers dripped byte by byte
 * are cut off at the header timeout (408, closed); a body dripped slowly at the request timeout;
 * 8 MB uploads from strangers to the test bench are answered 401 before their bodies are read,
 * and /healthz keeps answering meanwhile.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { spawnConfiguredGateway, type ConfiguredGateway, type GatewayProcess } from '../ingest/gateway-process';
import { drip, partialUpload } from '@ebbgate/gateway/test/support/slow-sender';

let started: ConfiguredGateway;
let gw: GatewayProcess;
let port = 0;

beforeAll(async () => {
  started = await spawnConfiguredGateway(
    { gateway: { headersTimeoutMs: 1000, requestTimeoutMs: 2000, rateLimit: { perSourcePerMinute: 100_000, perKeyPerMinute: 100_000 } } },
    { workers: false },
  );
  gw = started.gw;
  port = Number(new URL(gw.url).port);
});
afterAll(async () => started?.stop());

/** An 8 MB upload to the test bench from a stranger, a quarter of a MB of it sent; the status if answered within 5 s. */
const strangerUpload = () =>
  partialUpload(port, {
    path: '/api/v1/analysis/preview',
    headers: { 'content-type': 'multipart/form-data; boundary=b' },
    declared: 8 * 1024 * 1024,
    sent: 256 * 1024,
    giveUpMs: 5000,
  });

describe('slow and oversized strangers', () => {
  it('cuts off dripped headers at the header timeout with 408', async () => {
    const r = await drip(port, 'GET /api/v1/openapi.json HTTP/1.1\r\nHost: 127.0.0.1\r\nX-Drip: ', 150, 8000);
    expect(r.closedAfterMs).not.toBeNull();
    expect(r.closedAfterMs!).toBeLessThan(4000);
    expect(r.answer).toMatch(/^HTTP\/1\.1 408/);
  });

  it('cuts off a dripped body at the request timeout', async () => {
    const r = await drip(
      port,
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
