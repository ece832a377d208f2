/**
 * `npm run cluster`: Ebbgate as a hospital runs it on several machines, on loopback: a three-node
 * MariaDB Galera cluster (Debian mariadb-server + galera-4; installed when missing, as `npm start`
 * installs MariaDB), HAProxy in front of the nodes and of two gateway processes (HTTP and MLLP),
 * the mock EHR and the demo simulator streaming through HAProxy; all on the compiled build, from
 * the files in deploy/. The cluster starts fresh each time (data in .data/cluster). Ctrl-C stops
 * everything. Ports: EBBGATE_CLUSTER_BASE_PORT (default 25100) and the block after it.
 */
import { randomBytes } from 'node:crypto';
import path from 'node:path';
import { repoRoot } from '../gateway/src/config/load';
import { readDemoUsers } from '../gateway/src/seed/demo-users';
import { clusterPorts, startClusterStack, type ClusterStack } from './lib/cluster-stack';

const log = (m: string) => console.log(m);
const base = Number(process.env.EBBGATE_CLUSTER_BASE_PORT ?? 25100);
let stack: ClusterStack | undefined;
let stopping = false;
const stop = async (code: number) => {
  if (stopping) return;
  stopping = true;
  log('\nebbgate: stopping the cluster…');
  await stack?.stop();
  log('ebbgate: stopped.');
  process.exit(code);
};
process.once('SIGINT', () => void stop(0));
process.once('SIGTERM', () => void stop(0));

try {
  stack = await startClusterStack({
    basePort: base,
    dir: path.join(repoRoot, '.data/cluster'),
    password: randomBytes(18).toString('base64url'),
    jwtSecret: randomBytes(32).toString('hex'),
    simulator: process.env.EBBGATE_SIMULATOR !== 'off',
    log,
  });
} catch (err) {
  console.error(`ebbgate: the cluster could not start: ${(err as Error).stack ?? String(err)}`);
  await stop(1);
}
const p = clusterPorts(base);
const users = readDemoUsers();
log(`
Ebbgate cluster is running (compiled build).
  console and API     ${stack!.url}/   (HAProxy → gateways ${stack!.gatewayUrls.join(', ')})
  MLLP listener       127.0.0.1:${p.lbMllp}   (HAProxy → ${[0, 1].map((i) => p.gatewayMllp(i)).join(', ')})
  database            127.0.0.1:${p.lbSql}   (HAProxy → Galera ${stack!.galera.nodes.map((n) => n.sqlPort).join(', ')}; one writer, two standbys)
  HAProxy stats       http://127.0.0.1:${p.lbStats}/
  mock EHR (FHIR)     ${stack!.mockEhrUrl}/fhir   mail: ${stack!.mockEhrUrl}/mail
  logs                .data/cluster/logs/
  simulator           ${stack!.simulator ? 'streaming the demo scenario through HAProxy' : 'off (EBBGATE_SIMULATOR=off)'}
  sign in as          ${users.map((u) => `${u.username} / ${u.password}`).join(', ')}

Press Ctrl-C to stop.`);
