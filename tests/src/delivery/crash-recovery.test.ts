/**
 * A gateway process killed with SIGKILL in the middle of delivering, then started again: no
 * result lost, none delivered twice (counted by identifier on the mock EHR). The outbox lease
 * brings back the rows the dead process held; conditional create (FHIR R4 If-None-Exist) makes
 * the resend of a row the EHR already has a no-op.
 */
import type { ChildProcess } from 'node:child_process';
import { randomBytes } from 'node:crypto';
import { mkdtempSync, readdirSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import type { DataSource } from 'typeorm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startMockEhr, type RunningMockEhr } from '@ebbgate/mock-ehr';
import { createTestDatabase, type TestDatabase } from '../../../scripts/lib/test-database';
import { repoRoot } from '@ebbgate/gateway/config/load';
import { createDataSource, migrate } from '@ebbgate/gateway/db/data-source';
import { defaultCodeMap } from '@ebbgate/gateway/delivery/code-map';
import { DeliveryRow } from '@ebbgate/gateway/delivery/delivery.entities';
import { FHIR_DESTINATION_ID } from '@ebbgate/gateway/delivery/delivery.module';
import { enqueueAssessment, syncDestinations } from '@ebbgate/gateway/delivery/outbox';
import { insertBedAndMonitor, mockAdmin, storeAssessment, waitFor, windowStart } from '@ebbgate/gateway/test/delivery/support';
import { endProcess, killGroup, spawnTracked } from '../ingest/gateway-process';

const ASSESSMENTS = 40;
let ehr: RunningMockEhr;
let db: TestDatabase;
let ds: DataSource;
let configFile: string;
const children: ChildProcess[] = [];

/**
 * The gateway itself is the spawned process (node with tsx as a loader, its own process group):
 * a SIGKILL reaches the gateway, not a launcher that would leave it running with parent pid 1.
 */
function startGatewayProcess(): ChildProcess {
  const child = spawnTracked(path.join(repoRoot, 'gateway/src/main.ts'), [], {
    cwd: repoRoot,
    env: {
      PATH: process.env.PATH,
      DATABASE_URL: db.url,
      EBBGATE_PORT: '0',
      EBBGATE_JWT_SECRET: randomBytes(32).toString('hex'),
      EBBGATE_MIGRATE_ON_START: 'true',
      EBBGATE_MLLP_ENABLED: 'false',
      EBBGATE_LOG_LEVEL: 'error',
      EBBGATE_EHR_FHIR_URL: ehr.fhirBaseUrl,
      EBBGATE_EHR_TOKEN_URL: ehr.tokenUrl,
      EBBGATE_SMTP_PORT: String(ehr.smtpPort),
      EBBGATE_CONFIG: configFile,
    },
    stdio: ['ignore', 'ignore', 'pipe'],
  });
  children.push(child);
  return child;
}

/** Live processes whose environment points at this test's temporary config (Linux /proc). */
function processesWithOurConfig(): number[] {
  const found: number[] = [];
  for (const name of readdirSync('/proc')) {
    const pid = Number(name);
    if (!Number.isInteger(pid) || pid === process.pid) continue;
    try {
      if (readFileSync(`/proc/${pid}/stat`, 'utf8').split(') ')[1]?.startsWith('Z')) continue;
      if (readFileSync(`/proc/${pid}/environ`, 'utf8').split('\0').includes(`EBBGATE_CONFIG=${configFile}`)) found.push(pid);
    } catch {
      // gone, or not ours to read
    }
  }
  return found;
}

const delivered = async () => ds.getRepository(DeliveryRow).countBy({ status: 'delivered' });

beforeAll(async () => {
  ehr = await startMockEhr({ httpPort: 0, smtpPort: 0, mllpPort: 0 });
  db = await createTestDatabase();
  configFile = path.join(mkdtempSync(path.join(tmpdir(), 'ebbgate-crash-')), 'config.json');
  writeFileSync(
    configFile,
    JSON.stringify({
      delivery: { pollMs: 50, claimBatch: 8, concurrency: 2, leaseSeconds: 2, retry: { limit: 50, baseMs: 50, maxMs: 500 }, alerts: { enabled: false } },
    }),
  );
  ds = await createDataSource(db.url, 4).initialize();
  await migrate(ds);
  await syncDestinations(ds, [{ id: FHIR_DESTINATION_ID, name: 'EHR (FHIR R4)', kind: 'fhir' }]);
  const { bed, monitor } = await insertBedAndMonitor(ds, 'ICU-01');
  const codes = defaultCodeMap();
  for (let i = 0; i < ASSESSMENTS; i++) {
    const a = await storeAssessment(ds, { bedId: bed.id, monitorId: monitor.id }, windowStart(i), undefined, false);
    await ds.transaction((m) => enqueueAssessment(m, a, [FHIR_DESTINATION_ID], codes, 'data-absent'));
  }
}, 120_000);

afterAll(async () => {
  // Ended whether the test passed or not (afterAll runs after a failure too); waits for the exit.
  await Promise.all(children.map((c) => endProcess(c, 5000)));
  await ds?.destroy();
  await db?.drop();
  await ehr?.stop();
});

describe('SIGKILL mid-delivery', () => {
  it('restarted gateway delivers every result exactly once', async () => {
    const total = await ds.getRepository(DeliveryRow).count();
    expect(total).toBe(ASSESSMENTS * 4);
    // Slow the EHR a little so the kill lands while sends are in flight.
    await mockAdmin(ehr.baseUrl).faults([{ scope: 'Observation', latencyMs: 40 }]);

    const first = startGatewayProcess();
    await waitFor('some deliveries', async () => (await delivered()) >= total * 0.25, 90_000, 50);
    const exited = new Promise((r) => first.once('exit', r));
    killGroup(first, 'SIGKILL');
    await exited;
    // Nothing of the killed gateway survives it (a launcher's child once did, with parent pid 1).
    await waitFor('no process of the killed gateway left', async () => processesWithOurConfig().length === 0, 5000, 100);
    const atKill = await delivered();
    expect(atKill).toBeGreaterThan(0);
    expect(atKill).toBeLessThan(total); // the kill came mid-delivery

    const second = startGatewayProcess();
    await waitFor('all delivered after restart', async () => (await delivered()) === total, 120_000, 100);

    const counts = await mockAdmin(ehr.baseUrl).observations();
    const rows = await ds.getRepository(DeliveryRow).find();
    for (const r of rows) expect(counts.byIdentifier[`urn:ebbgate:observation|${r.identifier}`]).toBe(1);
    expect(counts.duplicated).toEqual([]);
    expect(counts.total).toBe(total);
    await endProcess(second);
    expect(second.exitCode !== null || second.signalCode !== null).toBe(true);
    expect(processesWithOurConfig()).toEqual([]);
  });
});
