/**
 * The gateway's HTTP side behind TLS (setting gateway.tls): it answers over HTTPS with the
 * configured certificate, a client that trusts the demo CA verifies it, plain HTTP on the same port
 * gets no HTTP answer, and TLS 1.1 is refused (TLS 1.2 or newer, BCP 195 / RFC 9325).
 */
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import http from 'node:http';
import https from 'node:https';
import os from 'node:os';
import path from 'node:path';
import tls from 'node:tls';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startTestGateway, type TestGateway } from '@ebbgate/gateway/test/support/harness';
import { ensureDemoCertificates, type DemoCertificates } from '../../../scripts/lib/certs';

let gw: TestGateway | undefined;
let dir: string;
let certs: DemoCertificates;
let port = 0;

beforeAll(async () => {
  dir = mkdtempSync(path.join(os.tmpdir(), 'ebbgate-https-'));
  certs = ensureDemoCertificates(path.join(dir, 'certs'), []);
  gw = await startTestGateway({ gateway: { tls: { enabled: true, certFile: certs.certFile, keyFile: certs.keyFile } } });
  const address = gw.server.address();
  if (!address || typeof address !== 'object') throw new Error('gateway has no address');
  port = address.port;
}, 60_000);

afterAll(async () => {
  await gw?.stop();
  rmSync(dir, { recursive: true, force: true });
});

const get = (options: https.RequestOptions) =>
  new Promise<{ status: number; body: string }>((resolve, reject) => {
    const req = https.get({ host: '127.0.0.1', port, path: '/healthz', ...options }, (res) => {
      let body = '';
      res.on('data', (c: Buffer) => (body += c.toString()));
      res.on('end', () => resolve({ status: res.statusCode ?? 0, body }));
    });
    req.on('error', reject);
    req.setTimeout(5_000, () => req.destroy(new Error('timeout')));
  });

describe('gateway over HTTPS', () => {
  it('names its address https and answers /healthz to a client that verifies the certificate against the CA', async () => {
    expect(gw?.url.startsWith('https://')).toBe(true);
    const res = await get({ ca: readFileSync(certs.caFile), servername: 'localhost' });
    expect(res.status).toBe(200);
  });

  it('is refused by a client that does not trust the issuing CA (the certificate really is checked)', async () => {
    await expect(get({})).rejects.toThrow(/self-signed|unable to verify|certificate/i);
  });

  it('gives a plain-HTTP request no HTTP answer', async () => {
    const outcome = await new Promise<string>((resolve) => {
      const req = http.get({ host: '127.0.0.1', port, path: '/healthz' }, (res) => resolve(`status ${res.statusCode}`));
      req.on('error', (err) => resolve(`error ${err.message}`));
      req.setTimeout(5_000, () => req.destroy(new Error('timeout')));
    });
    expect(outcome.startsWith('error')).toBe(true);
  });

  it('refuses TLS 1.1 (TLS 1.2 or newer only, BCP 195)', async () => {
    const outcome = await new Promise<string>((resolve) => {
      const socket = tls.connect({
        host: '127.0.0.1',
        port,
        ca: readFileSync(certs.caFile),
        servername: 'localhost',
        minVersion: 'TLSv1',
        maxVersion: 'TLSv1.1',
      });
      socket.once('secureConnect', () => {
        resolve(`connected with ${socket.getProtocol()}`);
        socket.destroy();
      });
      socket.once('error', (err) => resolve(`error ${err.message}`));
    });
    expect(outcome).toMatch(/^error/);
  });
});
