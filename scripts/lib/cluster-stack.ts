/**
 * Ebbgate on several machines, on one: a three-node MariaDB Galera cluster, HAProxy in front of
 * the nodes and of two gateway processes (HTTP and MLLP), the mock EHR, and optionally the demo
 * simulator streaming through HAProxy. Every process is started from the deployment files in
 * deploy/ (HAProxy configuration, the gateway and migration systemd units, the Galera settings).
 * Used by `npm run cluster`, the cluster tests and bench:capacity. Ports: a block from `basePort`
 * (HAProxy +0..+3, gateways +10..+13, mock EHR +20..+22, Galera +100..+132).
 */
import { spawn } from 'node:child_process';
import { existsSync, mkdirSync, readFileSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import net from 'node:net';
import path from 'node:path';
import { repoRoot } from '../../gateway/src/config/load';
import { ensureDebianPackages } from './debian';
import { startGaleraCluster, type GaleraCluster } from './galera';
import { findLeftoverServer, stopServerByPid } from './mariadb';
import { httpAnswers, ipcMessage, supervise, type Supervised } from './supervisor';
import { unitCommand } from './units';

export const HAPROXY_CFG = path.join(repoRoot, 'deploy/haproxy/ebbgate.cfg');

export function clusterPorts(base: number) {
  return {
    lbHttp: base,
    lbMllp: base + 1,
    lbSql: base + 2,
    lbStats: base + 3,
    gatewayHttp: (i: number) => base + 10 + i,
    gatewayMllp: (i: number) => base + 12 + i,
    mockEhr: base + 20,
    smtp: base + 21,
    hl7Receiver: base + 22,
    galera: base + 100,
  };
}

export interface ClusterStackOptions {
  basePort: number;
  /** Working folder (Galera data, logs, config); wiped at start: the cluster starts fresh. */
  dir: string;
  password: string;
  jwtSecret: string;
  gateways?: number;
  /** Stream the demo scenario through HAProxy. */
  simulator?: boolean;
  /** Hospital file for the mock EHR (beds, patients, encounters); the demo hospital when absent. */
  mockEhrSeedFile?: string;
  /** Extra environment for every gateway (tests: faster polls). */
  gatewayEnv?: Record<string, string>;
  log?: (m: string) => void;
}

export interface ClusterStack {
  /** HAProxy's HTTP address: what adapters and browsers use. */
  url: string;
  mllpPort: number;
  sqlPort: number;
  mockEhrUrl: string;
  galera: GaleraCluster;
  haproxy: Supervised;
  mockEhr: Supervised;
  gateways: Supervised[];
  gatewayUrls: string[];
  simulator?: Supervised;
  /** Application user through HAProxy (what the gateways use). */
  databaseUrl: string;
  stop(): Promise<void>;
}

export function ensureClusterPackages(log: (m: string) => void): void {
  ensureDebianPackages(
    [
      { pkg: 'mariadb-server', file: '/usr/sbin/mariadbd' },
      { pkg: 'galera-4', file: '/usr/lib/galera/libgalera_smm.so' },
      { pkg: 'rsync', file: '/usr/bin/rsync' },
      { pkg: 'haproxy', file: '/usr/sbin/haproxy' },
    ],
    log,
  );
}

export function tcpAnswers(port: number, timeoutMs = 30_000): Promise<void> {
  const deadline = Date.now() + timeoutMs;
  return new Promise((resolve, reject) => {
    const attempt = () => {
      const s = net.connect({ host: '127.0.0.1', port }, () => {
        s.destroy();
        resolve();
      });
      s.once('error', () => {
        s.destroy();
        if (Date.now() > deadline) reject(new Error(`127.0.0.1:${port} did not accept a connection within ${timeoutMs} ms`));
        else setTimeout(attempt, 200);
      });
    };
    attempt();
  });
}

/** Servers and HAProxy left behind by a launcher that died: stopped before the folder is wiped. */
async function stopLeftovers(dir: string, log: (m: string) => void): Promise<void> {
  const galeraDir = path.join(dir, 'galera');
  if (existsSync(galeraDir)) {
    for (const node of readdirSync(galeraDir)) {
      const pid = findLeftoverServer(path.join(galeraDir, node, 'data'));
      if (pid !== undefined) {
        log(`ebbgate: stopping Galera ${node} left running by an earlier launcher (pid ${pid})…`);
        await stopServerByPid(pid);
      }
    }
  }
  const pidFile = path.join(dir, 'haproxy.pid');
  if (existsSync(pidFile)) {
    for (const pid of readFileSync(pidFile, 'utf8').split(/\s+/).filter(Boolean).map(Number)) {
      const cmd = existsSync(`/proc/${pid}/cmdline`) ? readFileSync(`/proc/${pid}/cmdline`, 'utf8') : '';
      if (cmd.includes(HAPROXY_CFG) && cmd.includes(pidFile)) await stopServerByPid(pid, 5_000);
    }
  }
}

async function runOnce(name: string, file: string, args: string[], env: Record<string, string>, log: (m: string) => void): Promise<void> {
  await new Promise<void>((resolve, reject) => {
    const c = spawn(file, args, { env: { ...process.env, ...env }, stdio: ['ignore', 'pipe', 'pipe'] });
    let out = '';
    c.stdout.on('data', (d: Buffer) => (out += d.toString()));
    c.stderr.on('data', (d: Buffer) => (out += d.toString()));
    c.once('exit', (code) => {
      if (code === 0) {
        log(`ebbgate: ${name}: ${out.trim().split('\n').pop() ?? 'done'}`);
        resolve();
      } else reject(new Error(`${name} exited with code ${code}:\n${out}`));
    });
  });
}

export async function startClusterStack(opts: ClusterStackOptions): Promise<ClusterStack> {
  const log = opts.log ?? console.log;
  ensureClusterPackages(log);
  const ports = clusterPorts(opts.basePort);
  const dir = path.resolve(opts.dir);
  await stopLeftovers(dir, log);
  rmSync(dir, { recursive: true, force: true });
  mkdirSync(path.join(dir, 'logs'), { recursive: true });
  const started: { stop(): Promise<void> }[] = [];
  const stopAll = async () => {
    for (const s of [...started].reverse()) await s.stop().catch((e) => log(`ebbgate: stop: ${String(e)}`));
  };

  try {
    log(`ebbgate: starting a 3-node Galera cluster (SQL 127.0.0.1:${ports.galera}-${ports.galera + 2})…`);
    const galera = await startGaleraCluster({ baseDir: path.join(dir, 'galera'), basePort: ports.galera, password: opts.password, log });
    started.push(galera);

    const gatewayCount = opts.gateways ?? 2;
    const hp = (p: number) => `127.0.0.1:${p}`;
    const haproxyEnv: Record<string, string> = {
      EBBGATE_LB_HTTP: hp(ports.lbHttp),
      EBBGATE_LB_MLLP: hp(ports.lbMllp),
      EBBGATE_LB_SQL: hp(ports.lbSql),
      EBBGATE_LB_STATS: hp(ports.lbStats),
      EBBGATE_GW1_HTTP: hp(ports.gatewayHttp(0)),
      EBBGATE_GW2_HTTP: hp(ports.gatewayHttp(1)),
      EBBGATE_GW1_MLLP: hp(ports.gatewayMllp(0)),
      EBBGATE_GW2_MLLP: hp(ports.gatewayMllp(1)),
      EBBGATE_DB1: hp(galera.nodes[0]!.sqlPort),
      EBBGATE_DB2: hp(galera.nodes[1]!.sqlPort),
      EBBGATE_DB3: hp(galera.nodes[2]!.sqlPort),
    };
    const haproxy = supervise(
      {
        name: 'haproxy',
        command: { file: '/usr/sbin/haproxy', args: ['-W', '-db', '-f', HAPROXY_CFG, '-p', path.join(dir, 'haproxy.pid')] },
        env: haproxyEnv,
        logFile: path.join(dir, 'logs/haproxy.log'),
        ready: () => tcpAnswers(ports.lbSql).then(() => httpAnswers(`http://${hp(ports.lbStats)}/`)),
      },
      log,
    );
    started.push(haproxy);
    await haproxy.start();
    log(`ebbgate: HAProxy up (SQL ${hp(ports.lbSql)}, HTTP ${hp(ports.lbHttp)}, MLLP ${hp(ports.lbMllp)}, stats http://${hp(ports.lbStats)}/)`);

    const databaseUrl = galera.appUrlFor(ports.lbSql);
    const migrate = unitCommand('ebbgate-migrate.service');
    await runOnce(
      'db:migrate',
      migrate.file,
      migrate.args,
      { ...migrate.env, NODE_ENV: 'development', DATABASE_URL: galera.adminUrlFor(ports.lbSql), DATABASE_MIGRATION_URL: galera.adminUrlFor(ports.lbSql) },
      log,
    );

    const mockEhrUrl = `http://127.0.0.1:${ports.mockEhr}`;
    const mockEhr = supervise(
      {
        name: 'mock EHR',
        script: path.join(repoRoot, 'mock-ehr/dist/main.js'),
        env: {
          MOCK_EHR_HTTP_PORT: String(ports.mockEhr),
          MOCK_EHR_SMTP_PORT: String(ports.smtp),
          MOCK_EHR_MLLP_PORT: String(ports.hl7Receiver),
          ...(opts.mockEhrSeedFile ? { MOCK_EHR_SEED_FILE: opts.mockEhrSeedFile } : {}),
        },
        logFile: path.join(dir, 'logs/mock-ehr.log'),
        ready: () => httpAnswers(`${mockEhrUrl}/mail`),
      },
      log,
    );
    started.push(mockEhr);
    await mockEhr.start();

    const url = `http://${hp(ports.lbHttp)}`;
    const configFile = path.join(dir, 'gateway.config.json');
    writeFileSync(
      configFile,
      JSON.stringify(
        {
          database: { url: databaseUrl },
          gateway: { publicUrl: url },
          auth: { jwtSecret: opts.jwtSecret },
          ehr: { fhirBaseUrl: `${mockEhrUrl}/fhir`, tokenUrl: `${mockEhrUrl}/oauth/token` },
          mail: { smtpPort: ports.smtp },
          delivery: { alerts: { downMinutes: 0.5, checkIntervalMs: 5000 } },
        },
        null,
        2,
      ),
      { mode: 0o600 },
    );
    const gateways: Supervised[] = [];
    const gatewayUrls: string[] = [];
    for (let i = 0; i < gatewayCount; i++) {
      const unit = unitCommand('ebbgate-gateway@.service', String(i + 1));
      const gwUrl = `http://${hp(ports.gatewayHttp(i))}`;
      const gw = supervise(
        {
          name: `gateway ${i + 1}`,
          command: { file: unit.file, args: unit.args },
          env: {
            ...unit.env,
            // The demo runs with the demo sign-ins, which production mode refuses.
            NODE_ENV: 'development',
            EBBGATE_CONFIG: configFile,
            EBBGATE_PORT: String(ports.gatewayHttp(i)),
            EBBGATE_MLLP_PORT: String(ports.gatewayMllp(i)),
            // The first gateway seeds the demo users; starting them one after the other avoids a race.
            EBBGATE_SEED_DEMO: 'true',
            EBBGATE_LOG_LEVEL: process.env.EBBGATE_LOG_LEVEL ?? 'info',
            ...(opts.gatewayEnv ?? {}),
          },
          logFile: path.join(dir, `logs/gateway-${i + 1}.log`),
          ready: () => httpAnswers(`${gwUrl}/healthz`, 120_000),
          stopGraceMs: 20_000,
        },
        log,
      );
      started.push(gw);
      await gw.start();
      gateways.push(gw);
      gatewayUrls.push(gwUrl);
      log(`ebbgate: gateway ${i + 1} up (${gwUrl}, MLLP ${ports.gatewayMllp(i)}, pid ${gw.pid()})`);
    }
    // HAProxy marks a gateway up after two good /readyz checks.
    await httpAnswers(`${url}/readyz`, 30_000);

    let simulator: Supervised | undefined;
    if (opts.simulator) {
      simulator = supervise(
        {
          name: 'simulator',
          script: path.join(repoRoot, 'scripts/dist/demo-process.js'),
          env: { EBBGATE_GATEWAY_URL: url, EBBGATE_MOCK_EHR_URL: mockEhrUrl, EBBGATE_SPOOL_DIR: path.join(dir, 'spool') },
          ready: (child) => ipcMessage(child, 'ready').then(() => undefined),
        },
        log,
      );
      started.push(simulator);
      await simulator.start();
    }
    return {
      url,
      mllpPort: ports.lbMllp,
      sqlPort: ports.lbSql,
      mockEhrUrl,
      galera,
      haproxy,
      mockEhr,
      gateways,
      gatewayUrls,
      simulator,
      databaseUrl,
      stop: stopAll,
    };
  } catch (err) {
    await stopAll();
    throw err;
  }
}
