/**
 * End to end: the demo scenario as `npm start` runs it, through the whole stack (mock EHR with
 * its SMTP catcher, gateway with ingest, analysis and delivery workers, real MariaDB). Within
 * two minutes a newcomer must see (issue 7): live monitors, assessments of each verdict,
 * delivered observations, a failed delivery, a quarantined message and an alert mail. The EHR
 * outage is brought forward (10 s instead of 45 s) to keep the run short; alert thresholds are
 * lowered so one failure opens an incident. Delivery semantics (FHIR R4 http.html): other 4xx =
 * the request is wrong (failed at once), 5xx = transient (retried).
 */
import { mkdtemp, rm } from 'node:fs/promises';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DEMO_MONITORS, demoIntegrator, provisionDemoMonitors, runDemoScenario, signIn, type RunningDemo } from '@ebbgate/simulator';
import { repoRoot } from '@ebbgate/gateway/config/load';
import { startStack, type E2eStack } from '../support/stack';
import { assessmentsOf, waitFor } from './gateway-client';

let stack: E2eStack;
let demo: RunningDemo | undefined;
let spoolDir: string;
let startedAt: number;
const log: string[] = [];
type Api = Awaited<ReturnType<typeof signIn>>;
let as: Record<'integrator' | 'reviewer' | 'operator', Api>;

beforeAll(async () => {
  stack = await startStack({
    delivery: {
      retry: { limit: 8, baseMs: 300, maxMs: 2000 },
      circuit: { failureThreshold: 50, openSeconds: 1 },
      alerts: {
        enabled: true,
        checkIntervalMs: 200,
        destinationDownMinutes: 0.05,
        failureThreshold: 1,
        failureWindowMinutes: 5,
        recipients: ['icu-oncall@harrowmere.example'],
        consoleUrl: null,
      },
    },
  });
  const users = (await import('../../../config/demo/users.json', { with: { type: 'json' } })).default as {
    username: string;
    password: string;
    roles: string[];
  }[];
  const login = (role: string) => {
    const u = users.find((x) => x.roles.includes(role))!;
    return signIn(stack.gatewayUrl, u.username, u.password);
  };
  as = { integrator: await login('integrator'), reviewer: await login('reviewer'), operator: await login('operator') };
  const monitors = await provisionDemoMonitors(stack.gatewayUrl, await demoIntegrator(repoRoot), repoRoot);
  spoolDir = await mkdtemp(path.join(os.tmpdir(), 'ebbgate-e2e-demo-'));
  startedAt = Date.now();
  demo = runDemoScenario({
    gatewayUrl: stack.gatewayUrl,
    mockEhrUrl: stack.mockEhrUrl,
    monitors,
    spoolDir,
    ehrOutage: { atSeconds: 10, durationSeconds: 15 },
    log: (m) => log.push(m),
  });
  await demo.ready;
}, 180_000);

afterAll(async () => {
  await demo?.stop();
  await stack?.stop();
  if (spoolDir) await rm(spoolDir, { recursive: true, force: true });
});

const withinTwoMinutes = () => 120_000 - (Date.now() - startedAt);
const items = (r: { body: unknown }) =>
  ((r.body as { items?: unknown[] } | undefined)?.items ?? (Array.isArray(r.body) ? r.body : [])) as Record<string, unknown>[];

describe('the demo scenario within two minutes', () => {
  it('shows live monitors', async () => {
    const live = await waitFor(
      'monitors seen',
      async () => {
        const ms = items(await as.integrator('GET', '/monitors'));
        const seen = ms.filter((m) => m.lastSeenAt);
        return seen.length >= DEMO_MONITORS.length - 1 ? seen : undefined;
      },
      withinTwoMinutes(),
    );
    expect(live.length).toBeGreaterThanOrEqual(DEMO_MONITORS.length - 1);
  });

  it('shows assessments of each verdict', async () => {
    const ms = items(await as.integrator('GET', '/monitors')) as { id: string }[];
    const verdicts = await waitFor(
      'valid, questionable and not-valid assessments',
      async () => {
        const seen = new Set<string>();
        for (const m of ms)
          for (const a of (await assessmentsOf(stack.stack.gateway, (p) => as.reviewer('GET', p.replace('/api/v1', '')), m.id)).items) seen.add(a.verdict);
        return seen.size === 3 ? seen : undefined;
      },
      withinTwoMinutes(),
    );
    expect([...verdicts].sort()).toEqual(['not-valid', 'questionable', 'valid']);
  });

  it('shows a quarantined message naming the unmapped code', async () => {
    const q = await waitFor(
      'a quarantined message',
      async () => {
        const list = items(await as.integrator('GET', '/inbound-messages?outcome=quarantined&pageSize=10'));
        return list.length ? list : undefined;
      },
      withinTwoMinutes(),
    );
    expect(String(q[0].reason)).toContain('EBB_RESP_IMPEDANCE');
  });

  it('shows a failed delivery (422 during the outage), then deliveries after recovery, once each in the EHR', async () => {
    const failed = await waitFor(
      'a failed delivery',
      async () => {
        const list = items(await as.operator('GET', '/deliveries?status=failed&pageSize=50'));
        return list.length ? list : undefined;
      },
      withinTwoMinutes(),
    );
    expect(JSON.stringify((await as.operator('GET', `/deliveries/${failed[0].id}`)).body)).toContain('422');
    // The demo's log line can trail the first refused post on a busy machine: wait for it (bounded).
    await waitFor('the outage to be announced', async () => (log.some((l) => l.includes('EHR outage begins')) ? true : undefined), withinTwoMinutes());
    expect(log.some((l) => l.includes('EHR outage begins'))).toBe(true);
    await waitFor('the outage to end', async () => (log.some((l) => l.includes('EHR outage over')) ? true : undefined), withinTwoMinutes());
    const delivered = await waitFor(
      'deliveries after recovery',
      async () => {
        const list = items(await as.operator('GET', '/deliveries?status=delivered&pageSize=200'));
        return list.length >= 5 ? list : undefined;
      },
      withinTwoMinutes(),
    );
    expect(delivered.length).toBeGreaterThanOrEqual(5);
    // Mock EHR exactly-once counts: Observations arrived, none twice despite the retries.
    const counts = (await (await fetch(new URL('/_admin/observations', stack.mockEhrUrl))).json()) as { total: number; duplicated: string[] };
    expect(counts.total).toBeGreaterThanOrEqual(5);
    expect(counts.duplicated).toEqual([]);
  });

  it('shows an alert mail in the catcher', async () => {
    const mail = await waitFor(
      'an alert mail',
      async () => {
        const list = (await (await fetch(new URL('/_admin/mail', stack.mockEhrUrl))).json()) as unknown[];
        return list.length ? list : undefined;
      },
      withinTwoMinutes(),
    );
    expect(JSON.stringify(mail[0])).toContain('icu-oncall@harrowmere.example');
  });
});
