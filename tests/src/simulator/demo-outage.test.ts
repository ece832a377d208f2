/**
 * End to end: the demo scenario's EHR outage. The simulator streams one bed through the whole
 * stack (mock EHR with its SMTP catcher, gateway with ingest, analysis and delivery workers); at
 * the set time it switches the mock EHR's faults on (one Observation refused with 422, then 503
 * with Retry-After for everything) and later off. Expected (delivery issue, FHIR R4 http.html:
 * other 4xx = the request is wrong, 5xx = transient): one delivery failed at once, the others
 * retried and delivered after recovery, Observations in the EHR, and an alert mail.
 */
import { mkdtemp, rm } from 'node:fs/promises';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DEMO_MONITOR_PROFILE, runDemoScenario, signIn, type RunningDemo } from '@ebbgate/simulator';
import { startStack, type E2eStack } from '../support/stack';
import { waitFor } from './gateway-client';

const IDENTIFIER = '00A0B1FFFE2000A1';
let stack: E2eStack;
let demo: RunningDemo | undefined;
let spoolDir: string;
const log: string[] = [];

beforeAll(async () => {
  stack = await startStack({
    delivery: {
      retry: { limit: 8, baseMs: 300, maxMs: 2000 },
      circuit: { failureThreshold: 50, openSeconds: 1 },
      alerts: { enabled: true, checkIntervalMs: 200, downMinutes: 0.05, failureThreshold: 1, failureWindowMinutes: 5, recipients: ['icu-oncall@harrowmere.example'], consoleUrl: null },
    },
  });
  const users = await import('../../../config/demo/users.json', { with: { type: 'json' } });
  const integrator = users.default.find((u: { roles: string[] }) => u.roles.includes('integrator'))!;
  const api = await signIn(stack.gatewayUrl, integrator.username, integrator.password);
  const profile = await api('POST', '/profiles', DEMO_MONITOR_PROFILE);
  // ICU-01 is a Location of the mock EHR's demo hospital (config/demo/hospital.json), with a patient.
  const bed = await api('POST', '/beds', { name: 'ICU bed 1 (outage test)', unit: 'ICU', locationIdentifier: 'ICU-01' });
  const monitor = await api('POST', '/monitors', { identifier: IDENTIFIER, profileId: (profile.body as { id: string }).id, bedId: (bed.body as { id: string }).id, enabled: true });
  const key = await api('POST', `/monitors/${(monitor.body as { id: string }).id}/api-key`);
  expect([profile.status, bed.status, monitor.status, key.status]).toEqual([201, 201, 201, 201]);
  spoolDir = await mkdtemp(path.join(os.tmpdir(), 'ebbgate-e2e-outage-'));
  demo = runDemoScenario({
    gatewayUrl: stack.gatewayUrl,
    mockEhrUrl: stack.mockEhrUrl,
    monitors: [{ identifier: IDENTIFIER, apiKey: (key.body as { apiKey: string }).apiKey, scenario: 'fluid-responsive' }],
    spoolDir,
    ehrOutage: { atSeconds: 6, durationSeconds: 12 },
    log: (m) => log.push(m),
  });
  await demo.ready;
}, 180_000);

afterAll(async () => {
  await demo?.stop();
  await stack?.stop();
  if (spoolDir) await rm(spoolDir, { recursive: true, force: true });
});

describe('demo EHR outage through the whole stack', () => {
  it('fails one delivery at once, delivers the rest after recovery, and sends an alert mail', async () => {
    const users = await import('../../../config/demo/users.json', { with: { type: 'json' } });
    const operator = users.default.find((u: { roles: string[] }) => u.roles.includes('operator'))!;
    const ops = await signIn(stack.gatewayUrl, operator.username, operator.password);
    const failed = await waitFor('a failed delivery', async () => {
      const r = await ops('GET', '/deliveries?status=failed&pageSize=50');
      const items = (r.body as { items?: { id: string }[] } | undefined)?.items ?? [];
      return items.length ? items : undefined;
    }, 60_000);
    expect(failed.length).toBeGreaterThanOrEqual(1);
    const detail = await ops('GET', `/deliveries/${failed[0].id}`);
    expect(JSON.stringify(detail.body)).toContain('422');
    expect(log.some((l) => l.includes('EHR outage begins'))).toBe(true);

    await waitFor('the outage to end', async () => (log.some((l) => l.includes('EHR outage over')) ? true : undefined), 60_000);
    const delivered = await waitFor('deliveries after recovery', async () => {
      const r = await ops('GET', '/deliveries?status=delivered&pageSize=200');
      const items = (r.body as { items?: unknown[] } | undefined)?.items ?? [];
      return items.length >= 3 ? items : undefined;
    }, 90_000);
    expect(delivered.length).toBeGreaterThanOrEqual(3);
    // Mock EHR exactly-once counts: Observations arrived, none twice despite the retries.
    const observations = (await (await fetch(new URL('/_admin/observations', stack.mockEhrUrl))).json()) as { total: number; duplicated: string[] };
    expect(observations.total).toBeGreaterThanOrEqual(3);
    expect(observations.duplicated).toEqual([]);

    const mail = await waitFor('an alert mail', async () => {
      const list = (await (await fetch(new URL('/_admin/mail', stack.mockEhrUrl))).json()) as unknown[];
      return list.length ? list : undefined;
    }, 60_000);
    expect(JSON.stringify(mail[0])).toContain('icu-oncall@harrowmere.example');
  }, 240_000);
});
