/**
 * `npm run soak -- --minutes N` (default 10): the whole path under the faults a hospital sees,
 * then a reconciliation from outside the gateway's own bookkeeping.
 *
 * Starts its own MariaDB, the mock EHR (FHIR, token, SMTP catcher, HL7 receiver), two gateway
 * processes on one database and the bedside simulator (≥ 50 monitors over HTTP and MLLP, every
 * scenario of the catalogue). On a printed schedule it SIGKILLs a gateway (restarted), restarts
 * MariaDB (SIGTERM, later SIGKILL), takes the EHR down, sends 5xx bursts and timeouts, revokes the
 * tokens, moves a patient between beds, discharges and admits in one bed, and has the demo users
 * mark results in error and replay deliveries through the API. Then it stops the senders, waits
 * (bounded) for the queues to drain and checks, one line per figure:
 * - every batch the adapters sent is stored exactly once (batch id, samples) or still in a spool;
 * - every stored window is assessed once per engine version;
 * - every deliverable index is in the mock EHR exactly once by identifier, or visibly failed/held
 *   with a reason; nothing in the EHR that the gateway did not queue;
 * - every in-error mark reached the EHR (status entered-in-error);
 * - every Observation's subject is the patient the EHR's own occupancy log had in that bed;
 * - HL7 v2 messages received once per control id (MSH-10).
 * Closing line `soak: N checks passed, N failed`; exit 1 on any failure. Loopback only; every wait
 * is bounded; every process it starts is ended (also on failure).
 */
import { createHash, randomBytes } from 'node:crypto';
import { mkdirSync, mkdtempSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import * as mariadb from 'mariadb';
import { startMockEhr, type RunningMockEhr } from '@ebbgate/mock-ehr';
import type { IngestBatch } from '@ebbgate/shared';
import { BatchSender, DEMO_MONITOR_PROFILE, MonitorFeed, BedStream, SCENARIOS, type ScenarioId } from '@ebbgate/simulator';
import { simulatorTransport } from '../../simulator/src/simulation/transports';
import { findLeftoverServer, startPrivateMariaDb, type PrivateMariaDb } from '../../scripts/lib/mariadb';
import { DEMO_INTEGRATOR, freePort, signIn, spawnGateway, type GatewayProcess } from '../src/ingest/gateway-process';

const argMinutes = process.argv.indexOf('--minutes');
const MINUTES = argMinutes >= 0 ? Number(process.argv[argMinutes + 1]) : 10;
if (!Number.isFinite(MINUTES) || MINUTES < 1 || MINUTES > 240) throw new Error('--minutes takes a number from 1 to 240');
const RUN_MS = MINUTES * 60_000;
const MONITORS = 52; // beds 1..51 occupied, 52 free (the transfer target)
const MLLP_MONITORS = 12;
const t0 = Date.now();
const stamp = () => `${((Date.now() - t0) / 1000).toFixed(0).padStart(4)} s`;
const log = (m: string) => console.log(`soak ${stamp()}  ${m}`);
const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

const work = mkdtempSync(path.join(tmpdir(), 'ebbgate-soak-'));
const bedCode = (i: number) => `SOAK-${String(i).padStart(2, '0')}`;
/** Locally administered EUI-64 (first octet 0x0A: U/L bit set, unicast). */
const monitorId = (i: number) => `0AEB5A0C00${i.toString(16).toUpperCase().padStart(6, '0')}`;

// Invented names for the soak's own hospital unit.
const FAMILIES = [
  'Ashcombe',
  'Brindlemoor',
  'Calloway-Fen',
  'Dunmarsh',
  'Elderquay',
  'Farrowdale',
  'Glenbrook',
  'Hollowmere',
  'Ivesdon',
  'Juniper-Hale',
  'Kestleigh',
  'Larkhollow',
  'Merriwick',
];
const GIVEN = ['Alder', 'Bryony', 'Corin', 'Delphine', 'Emrys', 'Fenna', 'Gideon', 'Hester', 'Ivo', 'Jessamy', 'Kit', 'Linnea', 'Marek'];

function hospitalFile(): string {
  const beds = Array.from({ length: MONITORS }, (_, k) => {
    const i = k + 1;
    const base = { id: `soak-${String(i).padStart(2, '0')}`, name: `Soak bed ${i}`, unit: 'SOAK', locationIdentifier: bedCode(i) };
    if (i === MONITORS) return base;
    return {
      ...base,
      encounterId: `enc-soak-${i}`,
      patient: {
        mrn: `HGH-5${String(i).padStart(5, '0')}`,
        family: FAMILIES[i % FAMILIES.length],
        given: [GIVEN[(i * 7) % GIVEN.length]],
        sex: i % 2 ? 'female' : 'male',
        birthDate: `19${50 + (i % 45)}-0${1 + (i % 9)}-1${i % 9}`,
        heightCm: 160 + (i % 25),
      },
    };
  });
  const file = path.join(work, 'hospital.json');
  writeFileSync(
    file,
    JSON.stringify({
      hospital: { name: 'Harrowmere General Hospital (soak unit)', identifier: { system: 'urn:ebbgate:demo:hospital', value: 'HGH' } },
      units: [{ code: 'SOAK', name: 'Soak unit' }],
      beds,
    }),
  );
  return file;
}

interface Sent {
  monitor: string;
  batchId: string;
  samples: number;
  hash: string;
}

/** The adapter-side record: every batch handed to a sender, with its content (independent of the gateway). */
const sentLog = new Map<string, Sent>();
const accepted = new Set<string>();
const rejected = new Map<string, string>();
const key = (monitor: string, batchId: string) => `${monitor}|${batchId}`;

function remember(b: IngestBatch): void {
  const h = createHash('sha256');
  let samples = 0;
  for (const c of b.channels) {
    samples += Array.isArray(c.samples) ? c.samples.length : Buffer.from(c.samples.data, 'base64').length / 4;
    h.update(`${c.code}|${c.sampleRate}|`);
    h.update(JSON.stringify(c.samples));
  }
  sentLog.set(key(b.monitorId, b.batchId), { monitor: b.monitorId, batchId: b.batchId, samples, hash: h.digest('hex') });
}

class Checks {
  passed = 0;
  failed = 0;
  line(ok: boolean, what: string, figure: string | number): void {
    if (ok) this.passed++;
    else this.failed++;
    console.log(`soak: ${ok ? 'ok  ' : 'FAIL'} ${what}: ${figure}`);
  }
}

async function main(): Promise<number> {
  log(`run of ${MINUTES} min in ${work}`);
  // --- MariaDB of our own (restarted during the run) ---
  const dbDir = path.join(work, 'db');
  const dbPort = await freePort();
  const dbPassword = randomBytes(12).toString('hex');
  let db: PrivateMariaDb = await startPrivateMariaDb({ dataDir: dbDir, port: dbPort, password: dbPassword, database: 'ebbgate_soak', log: () => {} });
  const restartDb = async (signal: 'SIGTERM' | 'SIGKILL') => {
    const pid = findLeftoverServer(path.resolve(dbDir));
    if (pid) process.kill(pid, signal);
    for (let i = 0; i < 300 && pid && findLeftoverServer(path.resolve(dbDir)) === pid; i++) await sleep(100);
    await sleep(2000);
    db = await startPrivateMariaDb({ dataDir: dbDir, port: dbPort, password: dbPassword, database: 'ebbgate_soak', log: () => {}, leftover: 'stop' });
  };

  // --- mock EHR (in this process; its outage closes its own listener) ---
  const ehr: RunningMockEhr = await startMockEhr({
    host: '127.0.0.1',
    httpPort: 0,
    smtpPort: 0,
    mllpPort: 0,
    seedFile: hospitalFile(),
    logger: { info: () => {}, warn: () => {}, error: (m: string) => log(`mock EHR: ${m}`) },
  });
  const admin = async (method: string, p: string, body?: object) => {
    const res = await fetch(`${ehr.baseUrl}/_admin${p}`, {
      method,
      headers: { 'content-type': 'application/json' },
      body: body ? JSON.stringify(body) : undefined,
      signal: AbortSignal.timeout(10_000),
    });
    if (!res.ok) throw new Error(`mock EHR ${method} ${p}: ${res.status} ${await res.text()}`);
    return res.status === 204 ? undefined : res.json();
  };

  // --- two gateway processes on one database ---
  const configFile = path.join(work, 'gateway.json');
  writeFileSync(
    configFile,
    JSON.stringify({
      delivery: {
        pollMs: 100,
        claimBatch: 50,
        bundleSize: 25,
        concurrency: 4,
        leaseSeconds: 10,
        requestTimeoutMs: 3000,
        retry: { limit: 100, baseMs: 200, maxMs: 5000 },
        circuit: { failureThreshold: 20, openSeconds: 2 },
        patientContext: { cacheSeconds: 60, retrySeconds: 2 },
        alerts: { enabled: true, checkIntervalMs: 2000, recipients: ['icu-oncall@harrowmere.example'] },
        hl7: { enabled: true, host: '127.0.0.1', port: ehr.mllpPort, sendingFacility: 'HGH', receivingApplication: 'HGH-EHR' },
      },
    }),
  );
  const jwtSecret = randomBytes(32).toString('hex');
  const gatewayEnv = {
    EBBGATE_CONFIG: configFile,
    EBBGATE_EHR_FHIR_URL: ehr.fhirBaseUrl,
    EBBGATE_EHR_TOKEN_URL: ehr.tokenUrl,
    EBBGATE_SMTP_PORT: String(ehr.smtpPort),
    EBBGATE_LOG_LEVEL: 'error',
  };
  const gateways: GatewayProcess[] = [];
  const startGw = async (i: number) => {
    // Fixed ports per gateway, so a restarted one is where its adapters send.
    const g = await spawnGateway({
      databaseUrl: db.migrationUrl,
      jwtSecret,
      mllp: i === 0,
      workers: true,
      port: gwPorts[i],
      mllpPort: i === 0 ? mllpPort : undefined,
      env: gatewayEnv,
    });
    gateways[i] = g;
    return g;
  };
  const gwPorts = [await freePort(), await freePort()];
  const mllpPort = await freePort();
  const a = await startGw(0);
  await startGw(1);
  log(`gateways up: A ${gateways[0]!.url} (MLLP ${mllpPort}), B ${gateways[1]!.url}`);

  const stopAll = async () => {
    for (const g of gateways) await g?.stop().catch(() => {});
    await ehr.stop().catch(() => {});
    await db.stop().catch(() => {});
  };
  // Ctrl-C or a CI timeout: end what the soak started before leaving.
  for (const sig of ['SIGINT', 'SIGTERM'] as const) {
    process.once(sig, () => {
      log(`${sig}: stopping everything the soak started`);
      void stopAll().finally(() => {
        rmSync(work, { recursive: true, force: true });
        process.exit(130);
      });
    });
  }

  try {
    // --- provisioning through the API, as the demo integrator ---
    const integrator = await signIn(a.url, DEMO_INTEGRATOR.username, DEMO_INTEGRATOR.password);
    const must = async (r: Promise<{ status: number; body: any }>, what: string) => {
      // eslint-disable-line @typescript-eslint/no-explicit-any
      const x = await r;
      if (x.status >= 300) throw new Error(`${what}: ${x.status} ${JSON.stringify(x.body)}`);
      return x.body;
    };
    const profile = await must(integrator.post('/profiles', DEMO_MONITOR_PROFILE), 'profile');
    const scenarioIds = Object.keys(SCENARIOS) as ScenarioId[];
    const monitors: { identifier: string; apiKey: string; scenario: ScenarioId; bedId: string; monitorRowId: string; transport: 'http' | 'mllp' }[] = [];
    for (let i = 1; i <= MONITORS; i++) {
      const bed = await must(integrator.post('/beds', { name: `Soak bed ${i}`, unit: 'SOAK', locationIdentifier: bedCode(i) }), 'bed');
      if (i === MONITORS) {
        monitors.push({ identifier: '', apiKey: '', scenario: scenarioIds[0]!, bedId: bed.id, monitorRowId: '', transport: 'http' });
        continue;
      }
      const m = await must(integrator.post('/monitors', { identifier: monitorId(i), profileId: profile.id, bedId: bed.id, enabled: true }), 'monitor');
      const k = await must(integrator.post(`/monitors/${m.id}/api-key`), 'api key');
      monitors.push({
        identifier: monitorId(i),
        apiKey: k.apiKey,
        scenario: scenarioIds[(i - 1) % scenarioIds.length]!,
        bedId: bed.id,
        monitorRowId: m.id,
        transport: i <= MLLP_MONITORS ? 'mllp' : 'http',
      });
    }
    const freeBed = monitors.pop()!;
    log(`provisioned ${monitors.length} monitors (${MLLP_MONITORS} over MLLP) in ${MONITORS} beds; scenarios: ${scenarioIds.join(', ')}`);

    // --- the simulator: HTTP half to A, half to B; MLLP to A ---
    const spoolRoot = path.join(work, 'spool');
    mkdirSync(spoolRoot, { recursive: true });
    const batchSeconds = 5;
    const start = new Date(Math.floor((Date.now() - 30_000) / 5000) * 5000);
    const scenarioOf = new Map(monitors.map((m) => [m.identifier, SCENARIOS[m.scenario]]));
    const groups = [
      { name: 'http-A', transport: 'http' as const, url: a.url, ms: monitors.filter((m, i) => m.transport === 'http' && i % 2 === 0) },
      { name: 'http-B', transport: 'http' as const, url: gateways[1]!.url, ms: monitors.filter((m, i) => m.transport === 'http' && i % 2 === 1) },
      { name: 'mllp-A', transport: 'mllp' as const, url: a.url, ms: monitors.filter((m) => m.transport === 'mllp') },
    ];
    const senders: { name: string; sender: BatchSender; feeds: MonitorFeed[] }[] = [];
    for (const g of groups) {
      const sender = await BatchSender.open({
        transport: simulatorTransport({
          transport: g.transport,
          gatewayUrl: g.url,
          apiKeys: new Map(g.ms.map((m) => [m.identifier, m.apiKey])),
          mllpPort,
          scenarioOf: (id) => scenarioOf.get(id),
        }),
        spoolDir: path.join(spoolRoot, g.name),
        onEvent: (e) => {
          if (e.kind === 'accepted') accepted.add(key(e.monitorId, e.batchId));
          if (e.kind === 'rejected') rejected.set(key(e.monitorId, e.batchId), e.reason);
        },
      });
      const feeds = g.ms.map(
        (m, j) =>
          new MonitorFeed({
            identifier: m.identifier,
            scenario: SCENARIOS[m.scenario],
            source: new BedStream({ scenario: SCENARIOS[m.scenario], seed: 4000 + j * 31 + g.name.length }),
            transport: g.transport,
            batchSeconds,
            startTime: start,
          }),
      );
      senders.push({ name: g.name, sender, feeds });
    }
    let sending = true;
    const pump = (async () => {
      while (sending) {
        const now = Date.now();
        for (const s of senders)
          for (const f of s.feeds)
            for (const b of f.due(now)) {
              remember(b);
              await s.sender.send(b);
            }
        await sleep(250);
      }
    })();

    // --- the fault schedule ---
    const reviewer = async () => signIn(a.url, 'rhea.reviewer', 'Harrowmere-reviewer-1').catch(() => undefined);
    const marks: string[] = [];
    let replays = 0;
    let replayRefusals = 0;
    // The schedule runs from when the senders start (setup time is not part of the run).
    const base = Date.now();
    const at = (f: number) => Math.round(RUN_MS * f);
    const schedule: { at: number; what: string; run: () => Promise<void> }[] = [
      {
        at: at(0.08),
        what: 'EHR 5xx burst (half of requests answer 500/502/503, 300 faults)',
        run: async () => void (await admin('PUT', '/faults', { rules: [{ scope: 'all', errorRate: 0.5, statusCodes: [500, 502, 503], remaining: 300 }] })),
      },
      {
        at: at(0.14),
        what: 'EHR timeouts (every 4th request hangs, 40 faults)',
        run: async () => void (await admin('PUT', '/faults', { rules: [{ scope: 'all', timeoutRate: 0.25, remaining: 40 }] })),
      },
      {
        at: at(0.2),
        what: 'SIGKILL gateway B, restarted after 5 s',
        run: async () => {
          const b = gateways[1]!;
          const exited = new Promise((r) => b.child.once('exit', r));
          process.kill(-b.child.pid!, 'SIGKILL');
          await exited;
          await sleep(5000);
          await startGw(1);
        },
      },
      {
        at: at(0.27),
        what: `bed transfer ${bedCode(3)} → ${bedCode(MONITORS)} (the monitor goes with the patient)`,
        run: async () => {
          await admin('POST', '/adt/transfer', { from: bedCode(3), to: bedCode(MONITORS) });
          const m3 = monitors[2]!;
          await must(integrator.patch(`/monitors/${m3.monitorRowId}`, { bedId: freeBed.bedId }), 'move monitor');
        },
      },
      {
        at: at(0.32),
        what: `discharge and admission in ${bedCode(4)}`,
        run: async () => {
          await admin('POST', '/adt/discharge', { location: bedCode(4) });
          await sleep(2000);
          await admin('POST', '/adt/admit', {
            location: bedCode(4),
            patient: { mrn: 'HGH-599904', family: 'Quenby', given: ['Orla'], sex: 'female', birthDate: '1958-03-14' },
          });
        },
      },
      { at: at(0.38), what: 'MariaDB restart (SIGTERM)', run: () => restartDb('SIGTERM') },
      { at: at(0.46), what: 'token revocation at the EHR', run: async () => void (await admin('POST', '/tokens/revoke')) },
      { at: at(0.52), what: 'EHR outage (connections refused for 20 s)', run: async () => void (await admin('POST', '/outage', { durationMs: 20_000 })) },
      {
        at: at(0.6),
        what: 'marks in error (reviewer) and replays (operator) through the API',
        run: async () => {
          const rv = await reviewer();
          const op = await signIn(a.url, 'otto.operator', 'Harrowmere-operator-1').catch(() => undefined);
          if (!rv || !op) throw new Error('demo reviewer/operator could not sign in');
          type Row = { id: string; enteredInError: boolean; deliveryStatus: string | null };
          const oldest = ((await rv.get('/assessments?pageSize=100&order=asc')).body?.items as Row[] | undefined) ?? [];
          const newest = ((await rv.get('/assessments?pageSize=100&order=desc')).body?.items as Row[] | undefined) ?? [];
          // Some already delivered (amended at the EHR), one not yet (stopped before it goes).
          const pick = [
            ...oldest.filter((y) => !y.enteredInError && y.deliveryStatus === 'delivered').slice(20, 25),
            ...newest.filter((y) => !y.enteredInError && y.deliveryStatus !== 'delivered').slice(0, 1),
          ];
          for (const x of pick) {
            const r = await rv.post(`/assessments/${x.id}/mark-in-error`, { reason: 'soak: artefact confirmed at the bedside' });
            if (r.status < 300) marks.push(x.id);
          }
          const delivered = (await op.get('/deliveries?status=delivered&pageSize=20')).body?.items as { id: string; assessmentId: string }[] | undefined;
          const ok = (delivered ?? [])
            .filter((d) => !marks.includes(d.assessmentId))
            .slice(0, 10)
            .map((d) => d.id);
          if (ok.length) replays += ((await op.post('/deliveries/replay', { ids: ok })).body?.updated?.length as number | undefined) ?? 0;
          const withdrawn = (await op.get(`/deliveries?assessment=${marks[0] ?? 'none'}&kind=create&pageSize=5`)).body?.items as { id: string }[] | undefined;
          if (withdrawn?.length) replayRefusals += (await op.post('/deliveries/replay', { ids: [withdrawn[0]!.id] })).status === 409 ? 1 : 0;
        },
      },
      { at: at(0.7), what: 'MariaDB crash (SIGKILL) and restart', run: () => restartDb('SIGKILL') },
    ];
    const faultLog: string[] = [];
    log('schedule:');
    for (const s of schedule) log(`  at ${(s.at / 1000).toFixed(0)} s: ${s.what}`);
    const watchdog = setInterval(() => {
      // A gateway that died (e.g. it gave up while MariaDB was down) is started again, and said so.
      gateways.forEach((g, i) => {
        if (g && g.child.exitCode !== null && !restarting.has(i)) {
          restarting.add(i);
          log(`gateway ${i === 0 ? 'A' : 'B'} exited (${g.child.exitCode}); starting it again`);
          void startGw(i)
            .catch((e) => log(`restart failed: ${String(e)}`))
            .finally(() => restarting.delete(i));
        }
      });
    }, 2000);
    const restarting = new Set<number>();
    for (const s of schedule) {
      const wait = base + s.at - Date.now();
      if (wait > 0) await sleep(wait);
      log(`fault: ${s.what}`);
      try {
        await s.run();
        faultLog.push(s.what);
      } catch (err) {
        log(`fault did not run cleanly: ${String(err)}`);
      }
    }
    await sleep(Math.max(0, base + at(0.8) - Date.now()));
    await admin('DELETE', '/faults');

    // --- stop the senders, then drain (bounded) ---
    sending = false;
    await pump;
    log('senders stopped; flushing adapter queues');
    for (const s of senders) await s.sender.close().catch(() => {});
    const drainUntil = Date.now() + Math.max(120_000, RUN_MS * 0.2);
    const q = async (sql: string, p: unknown[] = []) => {
      const u = new URL(db.migrationUrl);
      const conn = await mariadb.createConnection({
        host: u.hostname,
        port: Number(u.port),
        user: decodeURIComponent(u.username),
        password: decodeURIComponent(u.password),
        database: u.pathname.slice(1),
        connectTimeout: 5000,
      });
      try {
        return (await conn.query(sql, p)) as Record<string, unknown>[];
      } finally {
        await conn.end();
      }
    };
    for (;;) {
      const [w] = await q(
        `SELECT (SELECT COUNT(*) FROM analysis_window WHERE status = 'due') AS windows, (SELECT COUNT(*) FROM delivery WHERE status = 'pending') AS pending`,
      ).catch(() => [{ windows: -1, pending: -1 }]);
      if (Number(w!.windows) === 0 && Number(w!.pending) === 0) break;
      if (Date.now() > drainUntil) {
        log(`drain bound reached: ${String(w!.windows)} windows and ${String(w!.pending)} deliveries still pending`);
        break;
      }
      await sleep(2000);
    }
    clearInterval(watchdog);
    log('drained; reconciling');
    return await reconcile(q, admin, ehr, marks, { replays, replayRefusals, faults: faultLog.length, scheduled: schedule.length, spoolRoot });
  } finally {
    await stopAll();
    rmSync(work, { recursive: true, force: true });
  }
}

type Query = (sql: string, p?: unknown[]) => Promise<Record<string, unknown>[]>;
type Admin = (method: string, p: string, body?: object) => Promise<unknown>;

function spooled(root: string): Set<string> {
  const out = new Set<string>();
  const walk = (d: string) => {
    for (const e of readdirSync(d, { withFileTypes: true })) {
      if (e.isDirectory()) walk(path.join(d, e.name));
      else out.add(e.name);
    }
  };
  walk(root);
  return out;
}

async function reconcile(
  q: Query,
  admin: Admin,
  ehr: RunningMockEhr,
  marks: string[],
  f: { replays: number; replayRefusals: number; faults: number; scheduled: number; spoolRoot: string },
): Promise<number> {
  const c = new Checks();
  c.line(f.faults === f.scheduled, 'faults injected as scheduled', `${f.faults}/${f.scheduled}`);

  // 1. Batches: adapter sent log vs stored inbound messages (batch id, samples) or a spool.
  const stored = await q(`SELECT m.identifier AS monitor, i.batch_id AS batchId, i.outcome AS outcome, COALESCE(SUM(s.sample_count), 0) AS samples
    FROM inbound_message i JOIN monitor m ON m.id = i.monitor_id LEFT JOIN waveform_segment s ON s.inbound_message_id = i.id
    WHERE i.outcome IN ('accepted','reprocessed') AND i.batch_id IS NOT NULL GROUP BY i.id`);
  const byKey = new Map<string, { n: number; samples: number }>();
  for (const r of stored) {
    const k = key(String(r.monitor), String(r.batchId));
    const e = byKey.get(k) ?? { n: 0, samples: 0 };
    byKey.set(k, { n: e.n + 1, samples: Number(r.samples) });
  }
  const spool = spooled(f.spoolRoot);
  let once = 0,
    twice = 0,
    lost = 0,
    inSpool = 0,
    contentDiffers = 0,
    refused = 0;
  for (const s of sentLog.values()) {
    const got = byKey.get(key(s.monitor, s.batchId));
    if (got && got.n === 1) {
      once++;
      // Samples the gateway stored for the batch (all channels) equal what the adapter sent.
      if (got.samples !== s.samples) contentDiffers++;
    } else if (got && got.n > 1) twice++;
    else if ([...spool].some((n) => n.includes(s.batchId))) inSpool++;
    else if (rejected.has(key(s.monitor, s.batchId))) refused++;
    else lost++;
  }
  console.log(
    `soak: batches sent ${sentLog.size}, stored once ${once}, still in an adapter spool ${inSpool}, refused by the gateway (kept as rejected) ${refused}`,
  );
  const reasons = new Map<string, number>();
  for (const r of rejected.values()) reasons.set(r.slice(0, 120), (reasons.get(r.slice(0, 120)) ?? 0) + 1);
  // The unmapped-channel scenario sends a channel its profile does not map: refused by design, kept.
  for (const [r, n] of reasons) console.log(`soak:   refused ${n}× : ${r}`);
  const [keptRejected] = await q(`SELECT COUNT(*) AS n FROM inbound_message WHERE outcome IN ('rejected','quarantined','conflicting')`);
  console.log(`soak: inbound messages kept as rejected, quarantined or conflicting at the gateway: ${String(keptRejected!.n)}`);
  c.line(lost === 0, 'batches lost (sent, neither stored nor spooled)', lost);
  c.line(twice === 0, 'batches stored more than once', twice);
  c.line(contentDiffers === 0, 'stored batches whose samples differ from what was sent', contentDiffers);
  c.line(sentLog.size > 0 && once > 0, 'batches stored', once);

  // 2. Windows assessed once per engine version.
  const dupA = await q(
    `SELECT COUNT(*) AS n FROM (SELECT monitor_id, window_start, engine_version FROM assessment GROUP BY monitor_id, window_start, engine_version HAVING COUNT(*) > 1) x`,
  );
  const [assessed] = await q(`SELECT COUNT(*) AS n FROM assessment`);
  console.log(`soak: assessments ${String(assessed!.n)}`);
  c.line(Number(dupA[0]!.n) === 0, 'windows assessed more than once for one engine version', Number(dupA[0]!.n));

  // 3. Every deliverable index in the EHR exactly once, or visibly failed/held with a reason.
  const counts = (await admin('GET', '/observations')) as { total: number; byIdentifier: Record<string, number>; duplicated: string[] };
  const rows =
    await q(`SELECT d.id, d.identifier, d.status, d.kind, d.last_error AS lastError, d.discard_reason AS discardReason, d.payload, d.destination_id AS dest,
      a.window_start AS ws, a.window_end AS we, b.location_identifier AS loc, a.entered_in_error_at AS marked
    FROM delivery d JOIN assessment a ON a.id = d.assessment_id LEFT JOIN bed b ON b.id = a.bed_id`);
  const fhir = rows.filter((r) => r.dest === 'ehr-fhir' && r.kind === 'create');
  const sys = 'urn:ebbgate:observation|';
  let deliveredOnce = 0,
    missing = 0,
    noReason = 0,
    held = 0,
    failedWithReason = 0;
  const st: Record<string, number> = {};
  for (const r of fhir) {
    st[String(r.status)] = (st[String(r.status)] ?? 0) + 1;
    const n = counts.byIdentifier[sys + String(r.identifier)] ?? 0;
    if (r.status === 'delivered') {
      if (n === 1) deliveredOnce++;
      else missing++;
    } else if (r.status === 'failed' || r.status === 'withheld') {
      if (r.lastError) failedWithReason++;
      else noReason++;
    } else if (r.status === 'discarded') {
      if (!r.discardReason) noReason++;
    } else {
      held++;
      if (!r.lastError && r.status === 'waiting-context') noReason++;
    }
  }
  const known = new Set(fhir.map((r) => sys + String(r.identifier)));
  const unknown = Object.keys(counts.byIdentifier).filter((k) => !known.has(k)).length;
  console.log(`soak: FHIR results ${fhir.length} by status ${JSON.stringify(st)}; Observations in the EHR ${counts.total}`);
  c.line(counts.duplicated.length === 0, 'Observations duplicated in the EHR (same identifier twice)', counts.duplicated.length);
  c.line(missing === 0, 'results marked delivered but not in the EHR exactly once', missing);
  c.line(unknown === 0, 'Observations in the EHR the gateway never queued', unknown);
  c.line(noReason === 0, 'results not delivered without a visible reason', noReason);
  console.log(
    `soak: delivered and in the EHR exactly once ${deliveredOnce}; failed or withheld with a reason ${failedWithReason}; still held (pending or waiting for context, with reason) ${held}`,
  );
  const [pending] = await q(`SELECT COUNT(*) AS n FROM delivery WHERE status = 'pending'`);
  c.line(Number(pending!.n) === 0, 'deliveries still pending after the drain', Number(pending!.n));

  // 4. Every in-error mark reached the EHR.
  let reached = 0,
    notReached = 0;
  const token = (await (
    await fetch(ehr.tokenUrl, {
      method: 'POST',
      headers: { 'content-type': 'application/x-www-form-urlencoded' },
      body: `grant_type=client_credentials&client_id=${ehr.clientId}&client_secret=mock-ehr-dev-secret`,
    })
  ).json()) as { access_token: string };
  const markedRows = fhir.filter((r) => r.marked && r.status !== 'waiting-context');
  for (const r of markedRows) {
    const b = (await (
      await fetch(`${ehr.fhirBaseUrl}/Observation?identifier=${encodeURIComponent(sys + String(r.identifier))}`, {
        headers: { authorization: `Bearer ${token.access_token}` },
      })
    ).json()) as { entry?: { resource: { status: string } }[] };
    const res = b.entry?.[0]?.resource;
    if (!res) continue; // never reached the EHR: nothing to amend (it was stopped before delivery)
    if (res.status === 'entered-in-error') reached++;
    else notReached++;
  }
  console.log(
    `soak: marks in error ${marks.length} (assessments), Observations amended ${reached}; replays ${f.replays}, replays of withdrawn results refused ${f.replayRefusals}`,
  );
  c.line(notReached === 0, 'in-error marks that did not reach the EHR', notReached);
  c.line(marks.length > 0, 'marks in error made through the API', marks.length);
  c.line(reached > 0, 'Observations amended to entered-in-error at the EHR', reached);

  // 5. Subject = the patient the EHR's occupancy log had in the bed over the whole window.
  const adt = (await admin('GET', '/adt')) as {
    occupancy: { locationIdentifier: string; patientId: string; from: string; to: string | null }[];
    events: unknown[];
  };
  let right = 0,
    wrong = 0;
  for (const r of fhir.filter((x) => x.status === 'delivered')) {
    const payload =
      typeof r.payload === 'string' ? (JSON.parse(r.payload) as { subject?: { reference?: string } }) : (r.payload as { subject?: { reference?: string } });
    const ws = new Date(String(r.ws)).getTime();
    const we = new Date(String(r.we)).getTime();
    const who = adt.occupancy
      .filter((o) => o.locationIdentifier === r.loc && Date.parse(o.from) <= ws && (o.to === null || we <= Date.parse(o.to)))
      .map((o) => `Patient/${o.patientId}`);
    if (who.length === 1 && payload?.subject?.reference === who[0]) right++;
    else wrong++;
  }
  console.log(`soak: ADT events ${adt.events.length}`);
  c.line(wrong === 0, 'Observations filed to a patient not in that bed over the window', wrong);
  c.line(right > 0, 'Observations filed to the right patient', right);

  // 6. HL7 v2 once per control id.
  const hl7 = (await admin('GET', '/hl7/counts')) as { total: number; distinct: number; duplicated: unknown[]; conflicting: string[] };
  const hl7Delivered = rows.filter((r) => r.dest === 'ehr-hl7v2' && r.status === 'delivered').length;
  console.log(`soak: HL7 messages received ${hl7.total}, distinct control ids ${hl7.distinct}, HL7 rows delivered ${hl7Delivered}`);
  // HL7 v2 has no conditional create: a crash between the ACK and recording it resends the
  // message. Such a resend carries the same MSH-10 and content, so the receiver recognises it.
  console.log(`soak: HL7 resends after a crash or database restart (same MSH-10, same content): ${hl7.duplicated.length}`);
  c.line(
    hl7.conflicting.length === 0,
    'HL7 control ids received with different content (a duplicate the receiver could not recognise)',
    hl7.conflicting.length,
  );
  const [fenced] = await q(`SELECT COUNT(*) AS n FROM delivery WHERE destination_id = 'ehr-hl7v2' AND attempt_count > 1 AND status = 'delivered'`);
  console.log(`soak: HL7 rows that needed more than one attempt: ${String(fenced!.n)}`);
  c.line(hl7.distinct >= hl7Delivered, 'HL7 rows delivered but not received', Math.max(0, hl7Delivered - hl7.distinct));

  console.log(`soak: ${c.passed} checks passed, ${c.failed} failed`);
  return c.failed === 0 ? 0 : 1;
}

main().then(
  (code) => {
    process.exitCode = code;
  },
  (err) => {
    console.error(`soak: aborted: ${String((err as Error)?.stack ?? err)}`);
    console.log('soak: 0 checks passed, 1 failed');
    process.exitCode = 1;
  },
);
