/**
 * Benchmark: capacity in beds. The whole pipeline on the compiled build — HTTP ingest, analysis,
 * delivery to the mock EHR (one patient and encounter per bed), console API reads (an operator
 * listing assessments every 2 s) — with N simulated beds, each a monitor sending arterial
 * pressure, airway pressure and pleth at 125 Hz in 5-s batches in real time, stepping N up. For
 * each step it prints ingest p50/p99, analysis lag (assessment stored − window end), delivery lag
 * (delivered − window end), the oldest window or delivery still waiting, CPU and RSS per process;
 * then the largest N meeting the goals (ingest p99 < 100 ms, analysis lag < 15 s, delivery lag
 * < 30 s over the hold), and the database bytes stored per bed per day with and without the
 * segment codec. Runs on one private MariaDB and on the Galera cluster (HAProxy, two gateways).
 * The load generator runs on the same machine. Prints figures. Answers are counted by status and
 * only accepted batches (202) count as throughput; overload answers (429, 503, timeouts) make a
 * step miss its goals, while any other refusal (the fixture sending what a well-configured
 * monitor would not: 4xx, a duplicate) fails the run (exit 1) with the gateway's reasons, as do
 * analysis windows or deliveries that failed.
 * Run: npm run bench:capacity   (CAPACITY_STEPS=50,200,500,1000,2000  CAPACITY_HOLD_SECONDS=60
 *      CAPACITY_DB=single,galera CAPACITY_KEEP_STEPPING=1; the issue's goal holds for five minutes: CAPACITY_HOLD_SECONDS=300)
 */
import { randomBytes } from 'node:crypto';
import { mkdtempSync, readFileSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { cpus, loadavg, tmpdir } from 'node:os';
import path from 'node:path';
import * as mariadb from 'mariadb';
import { DEMO_MONITOR_PROFILE, MonitorFeed, SCENARIOS } from '@ebbgate/simulator';
import { SharedLoop } from '../../simulator/src/simulation/loop-source';
import { repoRoot } from '../../gateway/src/config/load';
import { buildAll, buildIsStale } from '../../scripts/build';
import { startClusterStack } from '../../scripts/lib/cluster-stack';
import { startTestMariaDb } from '../../scripts/lib/test-mariadb';
import { createTestDatabase } from '../../scripts/lib/test-database';
import { httpAnswers, supervise } from '../../scripts/lib/supervisor';
import { freePort, signIn, DEMO_INTEGRATOR } from '../src/ingest/gateway-process';

const env = process.env;
const STEPS = (env.CAPACITY_STEPS ?? '50,200,500,1000,2000').split(',').map(Number);
const HOLD_S = Number(env.CAPACITY_HOLD_SECONDS ?? 60);
const WARM_S = Number(env.CAPACITY_WARM_SECONDS ?? 20);
const TARGETS = (env.CAPACITY_DB ?? 'single,galera').split(',');
const BATCH_S = 5;
const GOALS = { ingestP99Ms: 100, analysisLagS: 15, deliveryLagS: 30 };
const SCENARIO = SCENARIOS['not-responsive'];
const log = (m: string) => console.log(m);
const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

interface Pipeline {
  name: string;
  url: string;
  adminUrl: string;
  /** Processes to watch: name → pid. */
  pids(): Record<string, number | undefined>;
  stop(): Promise<void>;
}

/** An invented hospital with `n` beds, each with a patient and an encounter, for the mock EHR. */
function benchHospital(n: number, file: string): void {
  const beds = Array.from({ length: n }, (_, i) => {
    const k = String(i + 1).padStart(4, '0');
    return {
      id: `bench-${k}`,
      name: `Bench bed ${i + 1}`,
      unit: 'ICU',
      locationIdentifier: `BENCH-${k}`,
      patient: { mrn: `BENCH-${k}`, family: 'Benchmark', given: [`Patient${k}`], sex: i % 2 ? 'male' : 'female', birthDate: '1970-01-01', heightCm: 170 },
      encounterId: `enc-bench-${k}`,
    };
  });
  writeFileSync(
    file,
    JSON.stringify({
      hospital: { name: 'Benchmark General (invented)', identifier: { system: 'urn:ebbgate:bench:organization', value: 'BENCH' } },
      units: [{ code: 'ICU', name: 'Benchmark ICU' }],
      beds,
    }),
  );
}

function procStat(pid: number): { cpuS: number; rssMb: number } {
  try {
    const stat = readFileSync(`/proc/${pid}/stat`, 'utf8');
    const fields = stat.slice(stat.lastIndexOf(')') + 2).split(' ');
    const cpuS = (Number(fields[11]) + Number(fields[12])) / 100;
    const rss = /VmRSS:\s+(\d+) kB/.exec(readFileSync(`/proc/${pid}/status`, 'utf8'));
    return { cpuS, rssMb: rss ? Number(rss[1]) / 1024 : Number.NaN };
  } catch {
    return { cpuS: Number.NaN, rssMb: Number.NaN };
  }
}

function pidByArg(arg: string): number | undefined {
  for (const e of readdirSync('/proc')) {
    if (!/^\d+$/.test(e)) continue;
    try {
      if (readFileSync(`/proc/${e}/cmdline`, 'utf8').split('\0').includes(arg)) return Number(e);
    } catch {
      /* gone */
    }
  }
  return undefined;
}

const pct = (xs: number[], p: number) => {
  if (!xs.length) return Number.NaN;
  const s = [...xs].sort((a, b) => a - b);
  return s[Math.min(s.length - 1, Math.floor((p / 100) * s.length))]!;
};

async function singlePipeline(hospitalFile: string): Promise<Pipeline> {
  const { server, adminUrl } = await startTestMariaDb();
  process.env.EBBGATE_TEST_ADMIN_URL = adminUrl;
  const db = await createTestDatabase();
  const port = env.EBBGATE_PORT ? Number(env.EBBGATE_PORT) : await freePort();
  const ehrPort = env.EBBGATE_MOCK_EHR_PORT ? Number(env.EBBGATE_MOCK_EHR_PORT) : await freePort();
  const mockEhr = supervise(
    {
      name: 'mock EHR',
      script: path.join(repoRoot, 'mock-ehr/dist/main.js'),
      env: {
        MOCK_EHR_HTTP_PORT: String(ehrPort),
        MOCK_EHR_SMTP_PORT: String(await freePort()),
        MOCK_EHR_MLLP_PORT: String(await freePort()),
        MOCK_EHR_SEED_FILE: hospitalFile,
      },
      ready: () => httpAnswers(`http://127.0.0.1:${ehrPort}/mail`),
    },
    () => {},
  );
  await mockEhr.start();
  const gateway = supervise(
    {
      name: 'gateway',
      script: path.join(repoRoot, 'gateway/dist/main.js'),
      env: {
        NODE_ENV: 'development',
        DATABASE_URL: db.runtimeUrl,
        DATABASE_MIGRATION_URL: db.url,
        EBBGATE_PORT: String(port),
        EBBGATE_MLLP_ENABLED: 'false',
        EBBGATE_JWT_SECRET: randomBytes(32).toString('hex'),
        EBBGATE_MIGRATE_ON_START: 'true',
        EBBGATE_SEED_DEMO: 'true',
        EBBGATE_EHR_FHIR_URL: `http://127.0.0.1:${ehrPort}/fhir`,
        EBBGATE_EHR_TOKEN_URL: `http://127.0.0.1:${ehrPort}/oauth/token`,
        EBBGATE_LOG_LEVEL: 'warn',
        EBBGATE_INGEST_BACKLOG_LIMIT: '100000000',
      },
      ready: () => httpAnswers(`http://127.0.0.1:${port}/healthz`, 120_000),
      stopGraceMs: 20_000,
    },
    () => {},
  );
  await gateway.start();
  const dbPid = pidByArg(`--port=${server.port}`);
  return {
    name: 'one MariaDB server',
    url: `http://127.0.0.1:${port}`,
    adminUrl: db.url,
    pids: () => ({ gateway: gateway.pid(), 'mock EHR': mockEhr.pid(), mariadbd: dbPid }),
    stop: async () => {
      await gateway.stop();
      await mockEhr.stop();
      await db.drop().catch(() => undefined);
      await server.stop();
    },
  };
}

async function galeraPipeline(hospitalFile: string, dir: string): Promise<Pipeline> {
  const stack = await startClusterStack({
    basePort: 25600,
    dir,
    password: randomBytes(12).toString('base64url'),
    jwtSecret: randomBytes(32).toString('hex'),
    mockEhrSeedFile: hospitalFile,
    gatewayEnv: { EBBGATE_LOG_LEVEL: 'warn', EBBGATE_INGEST_BACKLOG_LIMIT: '100000000' },
    log: () => {},
  });
  return {
    name: 'Galera cluster (3 nodes, HAProxy, 2 gateways)',
    url: stack.url,
    adminUrl: stack.galera.adminUrlFor(stack.sqlPort),
    pids: () => ({
      'gateway 1': stack.gateways[0]!.pid(),
      'gateway 2': stack.gateways[1]!.pid(),
      haproxy: stack.haproxy.pid(),
      'mock EHR': stack.mockEhr.pid(),
      ...Object.fromEntries(stack.galera.nodes.map((n) => [`galera ${n.name}`, n.pid()])),
    }),
    stop: () => stack.stop(),
  };
}

interface Bed {
  identifier: string;
  apiKey: string;
  feed: MonitorFeed;
}

async function addBeds(p: Pipeline, from: number, to: number, profileId: string, loop: SharedLoop, api: Awaited<ReturnType<typeof signIn>>): Promise<Bed[]> {
  const out: Bed[] = [];
  const now = Date.now();
  for (let i = from; i < to; i++) {
    const k = String(i + 1).padStart(4, '0');
    const bed = await api.post('/beds', { name: `Bench bed ${i + 1}`, unit: 'ICU', locationIdentifier: `BENCH-${k}` });
    if (bed.status !== 201 && bed.status !== 200) throw new Error(`bed ${k}: ${bed.status} ${JSON.stringify(bed.body)}`);
    // Locally administered EUI-64 (U/L bit set in the first octet).
    const identifier = `02EB6C${(i + 1).toString(16).toUpperCase().padStart(10, '0')}`;
    const m = await api.post('/monitors', { identifier, profileId, bedId: bed.body.id, enabled: true });
    if (m.status !== 201) throw new Error(`monitor ${identifier}: ${m.status} ${JSON.stringify(m.body)}`);
    const key = await api.post(`/monitors/${m.body.id}/api-key`);
    // Start times spread over one batch length so the beds do not all send in the same instant.
    const start = new Date(Math.floor(now / 1000) * 1000 - Math.floor(Math.random() * BATCH_S * 1000));
    out.push({
      identifier,
      apiKey: key.body.apiKey as string,
      feed: new MonitorFeed({
        identifier,
        scenario: SCENARIO,
        source: loop.reader(Math.random() * 100),
        transport: 'http',
        batchSeconds: BATCH_S,
        startTime: start,
      }),
    });
  }
  void p;
  return out;
}

interface StepResult {
  beds: number;
  ingestP50: number;
  ingestP99: number;
  failures: number;
  sent: number;
  accepted: number;
  analysisLagP99: number;
  analysisOldestDue: number;
  deliveryLagP99: number;
  deliveryOldestPending: number;
  procs: string;
  ok: boolean;
}

/** Runs the steps on one pipeline; returns what was refused or failed other than by load (empty: nothing). */
async function runPipeline(p: Pipeline): Promise<string[]> {
  log(`\n== ${p.name}: steps ${STEPS.join(', ')} beds, ${WARM_S} s warm-up + ${HOLD_S} s hold each`);
  const api = await signIn(p.url, DEMO_INTEGRATOR.username, DEMO_INTEGRATOR.password);
  const operator = await signIn(p.url, 'otto.operator', 'Harrowmere-operator-1');
  const prof = await api.post('/profiles', DEMO_MONITOR_PROFILE);
  if (prof.status !== 201) throw new Error(`profile: ${prof.status} ${JSON.stringify(prof.body)}`);
  const loop = new SharedLoop(SCENARIO, 120, 3);
  const u = new URL(p.adminUrl);
  const sql = await mariadb.createConnection({
    host: u.hostname,
    port: Number(u.port),
    user: decodeURIComponent(u.username),
    password: decodeURIComponent(u.password),
    database: u.pathname.slice(1),
  });
  const beds: Bed[] = [];
  let latencies: number[] = [];
  let failures = 0;
  let sent = 0;
  let accepted = 0;
  let answers: Record<string, number> = {};
  /** Refusals that are not overload (the fixture's fault, never the gateway's load): reason → count, over the whole run. */
  const refusals = new Map<string, number>();
  let inFlight = 0;
  let running = true;

  const send = async (b: Bed, batch: unknown) => {
    inFlight++;
    const t = performance.now();
    try {
      const res = await fetch(`${p.url}/api/v1/ingest/batches`, {
        method: 'POST',
        headers: { 'content-type': 'application/json', authorization: `Bearer ${b.apiKey}` },
        body: JSON.stringify(batch),
      });
      const text = await res.text();
      latencies.push(performance.now() - t);
      answers[res.status] = (answers[res.status] ?? 0) + 1;
      if (res.status === 202) accepted++;
      else failures++;
      if (res.status !== 202 && res.status !== 429 && res.status !== 503) {
        let why = text.slice(0, 200);
        try {
          const body = JSON.parse(text) as { title?: string; detail?: string; outcome?: string };
          why = body.detail ?? body.title ?? `outcome ${body.outcome}`;
        } catch {
          // not JSON: the first 200 characters
        }
        const key = `HTTP ${res.status}: ${why.replace(/\d+/g, '#')}`;
        if (refusals.has(key) || refusals.size < 5) refusals.set(key, (refusals.get(key) ?? 0) + 1);
      }
    } catch (err) {
      answers[(err as Error).name] = (answers[(err as Error).name] ?? 0) + 1;
      failures++;
    } finally {
      sent++;
      inFlight--;
    }
  };
  const ticker = (async () => {
    while (running) {
      const now = Date.now();
      for (const b of beds) for (const batch of b.feed.due(now)) void send(b, batch);
      await sleep(50);
    }
  })();
  const reader = (async () => {
    while (running) {
      await operator.get('/assessments?limit=50').catch(() => undefined);
      await sleep(2000);
    }
  })();

  const results: StepResult[] = [];
  let failedWork: string | null = null;
  try {
    for (const n of STEPS) {
      if (n > beds.length) beds.push(...(await addBeds(p, beds.length, n, prof.body.id as string, loop, api)));
      await sleep(WARM_S * 1000);
      latencies = [];
      failures = 0;
      sent = 0;
      accepted = 0;
      answers = {};
      const t0 = new Date();
      const cpu0 = Object.fromEntries(
        Object.entries({ ...p.pids(), 'load generator': process.pid }).map(([k, pid]) => [k, pid ? procStat(pid).cpuS : Number.NaN]),
      );
      const w0 = performance.now();
      await sleep(HOLD_S * 1000);
      const wall = (performance.now() - w0) / 1000;
      const t1 = new Date();
      const procs = Object.entries({ ...p.pids(), 'load generator': process.pid })
        .map(([k, pid]) => {
          const s = pid ? procStat(pid) : { cpuS: Number.NaN, rssMb: Number.NaN };
          return `${k} ${(((s.cpuS - (cpu0[k] ?? Number.NaN)) / wall) * 100).toFixed(0)} % CPU ${s.rssMb.toFixed(0)} MB`;
        })
        .join(', ');
      const lags = (await sql.query('SELECT TIMESTAMPDIFF(MICROSECOND, window_end, done_at) / 1e6 AS lag FROM analysis_window WHERE done_at BETWEEN ? AND ?', [
        t0,
        t1,
      ])) as { lag: number }[];
      const [due] = (await sql.query(
        "SELECT TIMESTAMPDIFF(MICROSECOND, MIN(window_end), UTC_TIMESTAMP(3)) / 1e6 AS age FROM analysis_window WHERE status = 'due'",
      )) as { age: number | null }[];
      const dlags = (await sql.query(
        "SELECT TIMESTAMPDIFF(MICROSECOND, a.window_end, d.delivered_at) / 1e6 AS lag FROM delivery d JOIN assessment a ON a.id = d.assessment_id WHERE d.status = 'delivered' AND d.kind = 'create' AND d.delivered_at BETWEEN ? AND ?",
        [t0, t1],
      )) as { lag: number }[];
      const [pend] = (await sql.query(
        "SELECT TIMESTAMPDIFF(MICROSECOND, MIN(a.window_end), UTC_TIMESTAMP(3)) / 1e6 AS age FROM delivery d JOIN assessment a ON a.id = d.assessment_id WHERE d.status = 'pending'",
      )) as { age: number | null }[];
      const r: StepResult = {
        beds: n,
        ingestP50: pct(latencies, 50),
        ingestP99: pct(latencies, 99),
        failures,
        sent,
        accepted,
        analysisLagP99: pct(
          lags.map((l) => Number(l.lag)),
          99,
        ),
        analysisOldestDue: Number(due?.age ?? 0),
        deliveryLagP99: pct(
          dlags.map((l) => Number(l.lag)),
          99,
        ),
        deliveryOldestPending: Number(pend?.age ?? 0),
        procs,
        ok: false,
      };
      r.ok =
        r.failures === 0 &&
        r.ingestP99 < GOALS.ingestP99Ms &&
        r.analysisLagP99 < GOALS.analysisLagS &&
        r.analysisOldestDue < GOALS.analysisLagS &&
        r.deliveryLagP99 < GOALS.deliveryLagS &&
        r.deliveryOldestPending < GOALS.deliveryLagS;
      results.push(r);
      const [broken] = (await sql.query(
        "SELECT (SELECT COUNT(*) FROM analysis_window WHERE status = 'failed') AS windows, (SELECT COUNT(*) FROM delivery WHERE status = 'failed') AS deliveries",
      )) as { windows: number | bigint; deliveries: number | bigint }[];
      if (Number(broken?.windows ?? 0) || Number(broken?.deliveries ?? 0)) {
        r.ok = false;
        failedWork = `${Number(broken!.windows)} analysis windows and ${Number(broken!.deliveries)} deliveries failed (by ${n} beds)`;
      }
      log(
        `${String(n).padStart(5)} beds: ${(r.accepted / wall).toFixed(0)} accepted batches/s (answers ${JSON.stringify(answers)}), ingest p50 ${r.ingestP50.toFixed(0)} ms p99 ${r.ingestP99.toFixed(0)} ms, not accepted ${r.failures}; ` +
          `analysis lag p99 ${r.analysisLagP99.toFixed(1)} s (oldest due ${r.analysisOldestDue.toFixed(1)} s, ${lags.length} windows); ` +
          `delivery lag p99 ${r.deliveryLagP99.toFixed(1)} s (oldest pending ${r.deliveryOldestPending.toFixed(1)} s, ${dlags.length} Observations) → ${r.ok ? 'meets the goals' : 'misses the goals'}`,
      );
      log(
        `        ${procs}; load average ${loadavg()
          .map((l) => l.toFixed(2))
          .join(' ')}`,
      );
      // Stop at the first step that misses (CAPACITY_KEEP_STEPPING=1 goes on, to see where the lags grow).
      if (!r.ok && env.CAPACITY_KEEP_STEPPING !== '1') break;
    }
  } finally {
    running = false;
    await ticker;
    await reader;
    for (let i = 0; i < 100 && inFlight > 0; i++) await sleep(100);
  }
  const best = results.filter((r) => r.ok).pop();
  log(
    `largest N meeting the goals on ${p.name}: ${best ? `${best.beds} beds` : 'none of the steps'} (held ${HOLD_S} s per step${HOLD_S < 300 ? '; the goal asks for 5 minutes: CAPACITY_HOLD_SECONDS=300' : ''})`,
  );

  // Storage per bed per day, from what the run stored.
  const [seg] = (await sql.query(
    'SELECT COALESCE(SUM(LENGTH(samples)), 0) AS stored, COALESCE(SUM(sample_count), 0) AS samples, COUNT(*) AS n FROM waveform_segment',
  )) as { stored: number; samples: number; n: number }[];
  const [raw] = (await sql.query("SELECT COALESCE(SUM(LENGTH(raw)), 0) AS raw FROM inbound_message WHERE outcome = 'accepted'")) as { raw: number }[];
  const [disk] = (await sql.query('SELECT SUM(DATA_LENGTH + INDEX_LENGTH) AS bytes FROM information_schema.TABLES WHERE TABLE_SCHEMA = DATABASE()')) as {
    bytes: number;
  }[];
  const bedSeconds = Number(seg?.samples ?? 0) / 125 / SCENARIO.channels.length;
  if (bedSeconds > 0) {
    const perDay = (bytes: number) => `${(((Number(bytes) / bedSeconds) * 86_400) / 1e6).toFixed(1)} MB`;
    log(
      `storage per bed per day (${SCENARIO.channels.length} channels at 125 Hz, from ${(bedSeconds / 3600).toFixed(1)} bed-hours stored): ` +
        `waveform segments ${perDay(seg!.stored)} as stored vs ${perDay(Number(seg!.samples) * 4)} as raw float32 (ratio ${(Number(seg!.stored) / (Number(seg!.samples) * 4)).toFixed(2)}); ` +
        `raw inbound bodies kept ${perDay(raw!.raw)}; InnoDB tables in all ${perDay(disk!.bytes)}`,
    );
  }
  await sql.end();
  const wrong = [...[...refusals].map(([why, k]) => `${k} × ${why}`), ...(failedWork ? [failedWork] : [])];
  return wrong.map((w) => `${p.name}: ${w}`);
}

async function main(): Promise<void> {
  console.log(
    `capacity benchmark: ${cpus().length} cores (${cpus()[0]?.model ?? '?'}), load average ${loadavg()
      .map((l) => l.toFixed(2))
      .join(' ')}`,
  );
  if (buildIsStale()) await buildAll(() => {}, ['shared', 'gateway', 'mock-ehr', 'simulator', 'scripts']);
  const dir = mkdtempSync(path.join(tmpdir(), 'ebbgate-capacity-'));
  const hospitalFile = path.join(dir, 'hospital.json');
  benchHospital(Math.max(...STEPS), hospitalFile);
  const wrong: string[] = [];
  try {
    for (const target of TARGETS) {
      const p = target === 'galera' ? await galeraPipeline(hospitalFile, path.join(dir, 'cluster')) : await singlePipeline(hospitalFile);
      try {
        wrong.push(...(await runPipeline(p)));
      } finally {
        await p.stop();
      }
    }
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
  if (wrong.length)
    throw new Error(`bench:capacity FAILED: refused or failed work, not load (the figures above count only accepted batches):\n  ${wrong.join('\n  ')}`);
}

main().then(
  () => process.exit(0),
  (err: unknown) => {
    console.error(err);
    process.exit(1);
  },
);
