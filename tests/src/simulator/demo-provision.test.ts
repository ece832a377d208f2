/**
 * The demo and load set-up through the gateway's own API (real MariaDB): provisioning the demo
 * monitors is repeatable, places each in its bed, and the keys it returns are accepted by ingest;
 * the `simulate` CLI drives a short load run and prints its figures.
 */
import { spawn } from 'node:child_process';
import { mkdtemp, rm, writeFile } from 'node:fs/promises';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import {
  createIngestClient,
  DEMO_MONITORS,
  MonitorFeed,
  BedStream,
  SCENARIOS,
  provisionDemoMonitors,
  provisionMonitors,
  loadMonitorId,
  demoIntegrator,
} from '@ebbgate/simulator';
import { repoRoot } from '@ebbgate/gateway/config/load';
import { startTestGateway, type TestGateway } from '@ebbgate/gateway/test/support/harness';
import { freePort } from './gateway-client';

let gw: TestGateway;
let dir: string;
let mllpPort: number;

beforeAll(async () => {
  mllpPort = await freePort();
  gw = await startTestGateway(
    {
      ehr: { fhirBaseUrl: 'http://127.0.0.1:9/fhir', tokenUrl: 'http://127.0.0.1:9/oauth/token' },
      delivery: { alerts: { enabled: false } },
      mail: { smtpPort: 9 },
      mllp: { enabled: true, host: '127.0.0.1', port: mllpPort },
    },
    { services: true },
  );
  dir = await mkdtemp(path.join(os.tmpdir(), 'ebbgate-e2e-provision-'));
}, 120_000);

afterAll(async () => {
  await gw?.stop();
  if (dir) await rm(dir, { recursive: true, force: true });
});

describe('demo provisioning', () => {
  it('registers every demo monitor in its bed with a working key, and can run again', async () => {
    const creds = await demoIntegrator(repoRoot);
    const first = await provisionDemoMonitors(gw.url, creds, repoRoot);
    const again = await provisionDemoMonitors(gw.url, creds, repoRoot);
    expect(again.map((m) => m.identifier)).toEqual(DEMO_MONITORS.map((m) => m.identifier));
    expect(again.map((m) => m.apiKey)).not.toEqual(first.map((m) => m.apiKey)); // fresh keys each start

    const integrator = await gw.signIn('integrator');
    const monitors = (await integrator.get('/api/v1/monitors?pageSize=500')).body.items as {
      identifier: string;
      bedId: string | null;
      profileId: string | null;
    }[];
    const beds = (await integrator.get('/api/v1/beds?pageSize=500')).body.items as { id: string; locationIdentifier: string }[];
    for (const d of DEMO_MONITORS) {
      const m = monitors.find((x) => x.identifier === d.identifier)!;
      expect(m.profileId).not.toBeNull();
      if (d.bedId) expect(beds.find((b) => b.id === m.bedId)?.locationIdentifier).toBe(d.bedId.toUpperCase());
      else expect(m.bedId).toBeNull();
    }
    expect(new Set(beds.map((b) => b.locationIdentifier)).size).toBe(beds.length); // a second run created no bed twice

    // The returned key is the monitor's: one real batch is accepted (202).
    const m = again[0];
    const statuses: number[] = [];
    const client = await createIngestClient({
      gatewayUrl: gw.url,
      apiKeys: { [m.identifier]: m.apiKey },
      spoolDir: path.join(dir, 'spool'),
      onEvent: (e) => e.kind === 'accepted' && statuses.push(e.status),
    });
    const feed = new MonitorFeed({
      identifier: m.identifier,
      scenario: SCENARIOS['fluid-responsive'],
      source: new BedStream({ scenario: SCENARIOS['fluid-responsive'], seed: 3 }),
      transport: 'http',
      batchSeconds: 5,
      startTime: new Date(Date.now() - 10_000),
    });
    for (const b of feed.due(Date.now())) await client.send(b);
    await client.drain(20_000);
    await client.close();
    expect(statuses.length).toBeGreaterThanOrEqual(1);
    expect(statuses.every((s) => s === 202)).toBe(true);
  });
});

function simulate(args: string[]): Promise<{ code: number | null; text: string }> {
  return new Promise((resolve) => {
    const child = spawn(path.join(repoRoot, 'node_modules/.bin/tsx'), ['simulator/src/cli.ts', ...args], { cwd: repoRoot });
    let text = '';
    child.stdout.on('data', (c) => (text += c));
    child.stderr.on('data', (c) => (text += c));
    child.on('close', (code) => resolve({ code, text }));
  });
}

describe('npm run simulate', () => {
  beforeAll(async () => {
    await provisionMonitors(gw.url, await demoIntegrator(repoRoot), [1, 2, 3, 4].map(loadMonitorId));
  });

  it('over HTTP: sends every monitor a batch per interval and prints batches/s and latency', async () => {
    const ids = [1, 2, 3, 4].map(loadMonitorId);
    const keys = await provisionMonitors(gw.url, await demoIntegrator(repoRoot), ids);
    const keysFile = path.join(dir, 'keys.json');
    await writeFile(keysFile, JSON.stringify(keys));
    const out = await simulate(['--gateway', gw.url, '--keys', keysFile, '--interval', '1', '--duration', '7', '--spool', path.join(dir, 'cli-spool')]);
    expect(out.code, out.text).toBe(0);
    expect(out.text).toMatch(/4 monitors, 1-s batches over http/);
    expect(out.text).toMatch(/batches\/s accepted, p50 [\d.]+ ms, p99 [\d.]+ ms/);
    const done = /done: (\d+) accepted \(\d+ repeats\), (\d+) refused/.exec(out.text);
    expect(done, out.text).not.toBeNull();
    // 4 monitors × about 7 one-second batches (the first tick may include the batch in progress).
    expect(Number(done![1])).toBeGreaterThanOrEqual(20);
    expect(Number(done![2])).toBe(0);
  }, 60_000);

  it('over MLLP: the same monitors as ORU^R01 messages, every one acknowledged', async () => {
    const out = await simulate([
      '--transport',
      'mllp',
      '--mllp-port',
      String(mllpPort),
      '--monitors',
      '4',
      '--connections',
      '2',
      '--interval',
      '1',
      '--duration',
      '6',
      '--spool',
      path.join(dir, 'cli-spool-mllp'),
    ]);
    expect(out.code, out.text).toBe(0);
    expect(out.text).toMatch(/4 monitors, 1-s batches over mllp/);
    const done = /done: (\d+) accepted \(\d+ repeats\), (\d+) refused/.exec(out.text);
    expect(done, out.text).not.toBeNull();
    expect(Number(done![1])).toBeGreaterThanOrEqual(16);
    expect(Number(done![2])).toBe(0);
  }, 60_000);
});
