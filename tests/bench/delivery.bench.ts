/**
 * Benchmark: FHIR R4 Observations per second delivered by the outbox worker to the mock EHR
 * (which validates every resource against the R4 JSON schema), singly (one conditional-create
 * POST each) and in transaction Bundles. Real MariaDB (private, throwaway), real worker code.
 * Prints figures; no timed assertion. Goal from issue 5: >= 500 Observations/s. The rate counts
 * delivered Observations only; a run that leaves any of its rows not delivered (failed, waiting,
 * retrying) is reported with its statuses and fails the benchmark (exit 1) after the figures.
 * Run: npm run bench:delivery   (EBBGATE_MOCK_EHR_PORT, EBBGATE_SMTP_PORT, EBBGATE_HL7_RECEIVER_PORT for fixed mock ports)
 */
import { spawn } from 'node:child_process';
import { cpus, loadavg } from 'node:os';
import path from 'node:path';
import pino from 'pino';
import type { DataSource } from 'typeorm';
import { startTestMariaDb } from '../../scripts/lib/test-mariadb';
import { createTestDatabase } from '../../scripts/lib/test-database';
import type { Config } from '@ebbgate/gateway/config/schema';
import { loadConfig, repoRoot } from '@ebbgate/gateway/config/load';
import { createDataSource, migrate } from '@ebbgate/gateway/db/data-source';
import { defaultCodeMap } from '@ebbgate/gateway/delivery/code-map';
import { DeliveryWorker } from '@ebbgate/gateway/delivery/delivery-worker';
import { DeliveryRow } from '@ebbgate/gateway/delivery/delivery.entities';
import { FHIR_DESTINATION_ID } from '@ebbgate/gateway/delivery/delivery.module';
import { DeviceSync } from '@ebbgate/gateway/delivery/device-sync';
import { EhrClient } from '@ebbgate/gateway/delivery/ehr-client';
import { FhirDestination } from '@ebbgate/gateway/delivery/fhir-destination';
import { enqueueAssessment, syncDestinations } from '@ebbgate/gateway/delivery/outbox';
import { PatientContextResolver } from '@ebbgate/gateway/delivery/patient-context';
import { insertBedAndMonitor, storeAssessment } from '@ebbgate/gateway/test/delivery/support';

const ASSESSMENTS = Number(process.env.BENCH_ASSESSMENTS ?? 300); // × 4 indices = Observations per run
/** Runs whose rows were not all delivered, in words; the benchmark fails on any. */
const undelivered: string[] = [];

// Windows inside the seeded encounters; each run has its own monitor, so runs may share times.
const T0 = Date.now() - 3_600_000;

async function run(label: string, ds: DataSource, ehr: { fhirBaseUrl: string; tokenUrl: string }, delivery: Config['delivery'], _run: number): Promise<void> {
  const codes = defaultCodeMap();
  const client = new EhrClient({
    fhirBaseUrl: ehr.fhirBaseUrl,
    tokenUrl: ehr.tokenUrl,
    clientId: 'ebbgate-gateway',
    clientSecret: 'mock-ehr-dev-secret',
    requestTimeoutMs: 30_000,
  });
  const contexts = new PatientContextResolver(client, 300_000);
  const handler = new FhirDestination(ds, client, contexts, new DeviceSync(client, codes), codes, delivery, async () => ({
    observationStatus: 'preliminary',
    notValidPolicy: 'data-absent',
  }));
  const worker = new DeliveryWorker(ds, new Map([[FHIR_DESTINATION_ID, handler]]), delivery, pino({ level: 'silent' }));
  const { bed, monitor } = await insertBedAndMonitor(ds, 'ICU-02');
  for (let i = 0; i < ASSESSMENTS; i++) {
    const a = await storeAssessment(ds, { bedId: bed.id, monitorId: monitor.id }, new Date(T0 + i * 1000), undefined, false);
    await ds.transaction((m) => enqueueAssessment(m, a, [FHIR_DESTINATION_ID], codes, 'data-absent'));
  }
  const due = await ds.getRepository(DeliveryRow).countBy({ status: 'pending' });
  const t0 = performance.now();
  let passes = 0;
  while ((await worker.runOnce()) > 0) passes++;
  const seconds = (performance.now() - t0) / 1000;
  // This run's rows by status (earlier runs' rows are parked as 'benchmarked').
  const rows = (await ds.query(`SELECT status, COUNT(*) AS n FROM delivery WHERE status <> 'benchmarked' GROUP BY status`)) as { status: string; n: unknown }[];
  const byStatus = Object.fromEntries(rows.map((r) => [r.status, Number(r.n)]));
  const done = byStatus.delivered ?? 0;
  console.log(
    `${label.padEnd(34)} ${String(done).padStart(5)} of ${due} Observations delivered in ${seconds.toFixed(2)} s = ${(done / seconds).toFixed(0).padStart(5)} /s  (${passes} passes; rows ${JSON.stringify(byStatus)})`,
  );
  if (done !== due || Object.keys(byStatus).some((st) => st !== 'delivered'))
    undelivered.push(`${label.trim()}: ${done} of ${due} delivered; rows by status ${JSON.stringify(byStatus)}`);
  // Park this run's rows so the next run counts only its own.
  await ds.query(`UPDATE delivery SET status = 'benchmarked' WHERE status <> 'benchmarked'`);
}

/** The mock EHR in its own process, as the EHR is in production: it does not share our event loop. */
async function startMockProcess() {
  const child = spawn(path.join(repoRoot, 'node_modules/.bin/tsx'), ['mock-ehr/src/main.ts'], {
    cwd: repoRoot,
    env: {
      PATH: process.env.PATH,
      MOCK_EHR_HTTP_PORT: process.env.EBBGATE_MOCK_EHR_PORT ?? '0',
      MOCK_EHR_SMTP_PORT: process.env.EBBGATE_SMTP_PORT ?? '0',
      MOCK_EHR_MLLP_PORT: process.env.EBBGATE_HL7_RECEIVER_PORT ?? '0',
    },
    stdio: ['ignore', 'pipe', 'inherit'],
  });
  const baseUrl = await new Promise<string>((resolve, reject) => {
    let out = '';
    child.stdout!.on('data', (c: Buffer) => {
      out += c.toString();
      const m = /mock EHR ready: (http:\/\/[^\s]+)/.exec(out);
      if (m) resolve(m[1]!);
    });
    child.once('exit', (code) => reject(new Error(`mock EHR exited ${code}`)));
  });
  child.stdout!.resume();
  return { fhirBaseUrl: `${baseUrl}/fhir`, tokenUrl: `${baseUrl}/oauth/token`, stop: async () => void child.kill('SIGTERM') };
}

/**
 * A stub that answers every FHIR call at once (token, Location/Encounter search, Patient, Device,
 * 201 for Observations) in its own process: what the gateway side alone can do, without the
 * mock's work. Its Encounter is what the patient-context rules ask of an EHR (in progress, a
 * period.start before the windows, at the bed's Location), else every row waits for context.
 */
const STUB = `
const http = require('node:http'); let n = 0;
const bundle = (r) => JSON.stringify({ resourceType: 'Bundle', type: 'searchset', entry: r ? [{ resource: r }] : [] });
http.createServer((req, res) => { let b = ''; req.on('data', (c) => (b += c)); req.on('end', () => {
  const u = req.url; res.setHeader('content-type', 'application/fhir+json');
  if (u.startsWith('/oauth/token')) return res.end(JSON.stringify({ access_token: 't', token_type: 'Bearer', expires_in: 3600 }));
  if (u.startsWith('/fhir/Location')) return res.end(bundle({ resourceType: 'Location', id: 'l1' }));
  if (u.startsWith('/fhir/Encounter')) return res.end(bundle({ resourceType: 'Encounter', id: 'e1', status: 'in-progress', period: { start: '2026-01-01T00:00:00Z' }, subject: { reference: 'Patient/p1' }, location: [{ location: { reference: 'Location/l1' } }] }));
  if (u.startsWith('/fhir/Patient')) return res.end(JSON.stringify({ resourceType: 'Patient', id: 'p1', identifier: [{ system: 'urn:ebbgate:stub:mrn', value: 'STUB-1' }], name: [{ family: 'Stub', given: ['Bench'] }] }));
  if (u.startsWith('/fhir/Device')) return res.end(JSON.stringify({ resourceType: 'Device', id: 'd1' }));
  if (req.method === 'POST' && u === '/fhir/') { const e = JSON.parse(b).entry; res.end(JSON.stringify({ resourceType: 'Bundle', type: 'transaction-response', entry: e.map(() => ({ response: { status: '201 Created', location: 'Observation/o' + (++n) + '/_history/1' } })) })); return; }
  res.statusCode = 201; res.end(JSON.stringify({ resourceType: 'Observation', id: 'o' + (++n) }));
}); }).listen(0, '127.0.0.1', function () { console.log('stub ready: http://127.0.0.1:' + this.address().port); });`;

async function startStubProcess() {
  const child = spawn(process.execPath, ['-e', STUB], { stdio: ['ignore', 'pipe', 'inherit'] });
  const baseUrl = await new Promise<string>((resolve) =>
    child.stdout!.on('data', (c: Buffer) => {
      const m = /stub ready: (http:\/\/[^\s]+)/.exec(c.toString());
      if (m) resolve(m[1]!);
    }),
  );
  return { fhirBaseUrl: `${baseUrl}/fhir`, tokenUrl: `${baseUrl}/oauth/token`, stop: async () => void child.kill('SIGTERM') };
}

const { server, adminUrl } = await startTestMariaDb();
process.env.EBBGATE_TEST_ADMIN_URL = adminUrl;
const ehr = await startMockProcess();
const db = await createTestDatabase();
const ds = await createDataSource(db.url, 8).initialize();
try {
  await migrate(ds);
  await syncDestinations(ds, [{ id: FHIR_DESTINATION_ID, name: 'EHR (FHIR R4)', kind: 'fhir' }]);
  const base = loadConfig({ NODE_ENV: 'test' }, { database: { url: db.url }, auth: { jwtSecret: 'x'.repeat(32) } }).delivery;
  console.log(
    `delivery benchmark: ${ASSESSMENTS} assessments × 4 indices per run; ${cpus().length} cores, load ${loadavg()[0]!.toFixed(2)}; mock EHR (own process) validates each resource against the R4 schema`,
  );
  await run('warm-up (singly, not counted)', ds, ehr, { ...base, claimBatch: 100, concurrency: 8, bundleSize: 1 }, 1);
  await run('singly, 16 in flight', ds, ehr, { ...base, claimBatch: 200, concurrency: 16, bundleSize: 1 }, 2);
  await run('singly, 32 in flight', ds, ehr, { ...base, claimBatch: 400, concurrency: 32, bundleSize: 1 }, 3);
  await run('transaction bundles of 50', ds, ehr, { ...base, claimBatch: 200, concurrency: 8, bundleSize: 50 }, 4);
  await run('transaction bundles of 100', ds, ehr, { ...base, claimBatch: 400, concurrency: 8, bundleSize: 100 }, 5);
  const stub = await startStubProcess();
  try {
    console.log('gateway side alone (a stub answers every call at once, own process):');
    await run('  singly, 32 in flight', ds, stub, { ...base, claimBatch: 400, concurrency: 32, bundleSize: 1 }, 6);
    await run('  transaction bundles of 100', ds, stub, { ...base, claimBatch: 400, concurrency: 8, bundleSize: 100 }, 7);
  } finally {
    await stub.stop();
  }
} finally {
  await ds.destroy();
  await db.drop();
  await ehr.stop();
  await server.stop();
}
if (undelivered.length) {
  console.error(`bench:delivery FAILED: not every Observation was delivered, so those rates do not measure delivery:\n  ${undelivered.join('\n  ')}`);
  process.exit(1);
}
