/**
 * `npm run simulate -- --monitors N --interval S --transport http|mllp [--gateway URL] [--keys file.json]`
 * drives load for the benchmarks: N simulated monitors each sending one S-second batch every S
 * seconds, through the same adapter client as the demo; prints batches/s, latency and outcomes.
 */
import { mkdtemp, readFile, writeFile } from 'node:fs/promises';
import os from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { parseArgs } from 'node:util';
import { BatchSender } from './adapter/batch-sender';
import type { BatchTransport } from './adapter/transport';
import { SCENARIOS, SCENARIO_IDS } from './scenarios/catalogue';
import type { ScenarioId } from './scenarios/types';
import { SharedLoop } from './simulation/loop-source';
import { BedStream } from './stream/bed-stream';
import { MonitorFeed } from './simulation/monitor-feed';
import { demoIntegrator, loadMonitorId, provisionMonitors } from './simulation/provision';
import { simulatedClock } from './simulation/sim-clock';
import { simulatorTransport } from './simulation/transports';

const USAGE = `usage: npm run simulate -- [options]
  --monitors N          simulated monitors (default 10)
  --interval S          batch length and send period, s (default 5)
  --transport T         http | mllp (default http)
  --gateway URL         gateway base URL (default http://127.0.0.1:8480)
  --mllp-host H         MLLP listener host (default 127.0.0.1)
  --mllp-port P         MLLP listener port (default 2575; 2576 with --tls-cert)
  --tls-cert FILE       MLLP over TLS with this client certificate (PEM); with --tls-key and --tls-ca
  --tls-key FILE        the client certificate's private key (PEM)
  --tls-ca FILE         CA the gateway's certificate must chain to (PEM)
  --connections C       parallel MLLP connections (default min(monitors, 32))
  --sockets K           kept-alive HTTP connections to the gateway (default 64)
  --keys FILE           JSON {"<monitor identifier>": "<api key>"}; its monitors are used
  --provision           register the demo profile and N monitors (0EBB…) as the demo integrator,
                        issue keys and write them to --keys (or a temporary file)
  --scenario ID         one scenario for every monitor (default: all assessed scenarios in turn)
  --duration S          stop after S seconds (default: until Ctrl-C)
  --backfill S          seconds of past signal sent at start (default 0)
  --speed X             play the backfill at X times real time (default: at once); batch times
                        stay simulated and never pass the wall clock, then real time
  --spool DIR           spool folder (default a temporary folder)`;

function fail(msg: string): never {
  console.error(`simulate: ${msg}\n${USAGE}`);
  process.exit(2);
}

const num = (v: string | undefined, name: string, dflt: number) => {
  if (v === undefined) return dflt;
  const n = Number(v);
  if (!Number.isFinite(n) || n <= 0) fail(`--${name} must be a positive number, got "${v}"`);
  return n;
};

function percentile(sorted: number[], p: number): number {
  if (!sorted.length) return Number.NaN;
  return sorted[Math.min(sorted.length - 1, Math.floor((p / 100) * sorted.length))];
}

async function main(): Promise<void> {
  let args;
  try {
    args = parseArgs({
      options: {
        monitors: { type: 'string' },
        interval: { type: 'string' },
        transport: { type: 'string' },
        gateway: { type: 'string' },
        'mllp-host': { type: 'string' },
        'mllp-port': { type: 'string' },
        'tls-cert': { type: 'string' },
        'tls-key': { type: 'string' },
        'tls-ca': { type: 'string' },
        connections: { type: 'string' },
        sockets: { type: 'string' },
        keys: { type: 'string' },
        provision: { type: 'boolean' },
        scenario: { type: 'string' },
        duration: { type: 'string' },
        backfill: { type: 'string' },
        speed: { type: 'string' },
        spool: { type: 'string' },
        help: { type: 'boolean' },
      },
    }).values;
  } catch (err) {
    fail((err as Error).message);
  }
  if (args.help) {
    console.log(USAGE);
    return;
  }
  const transport = (args.transport ?? 'http') as 'http' | 'mllp';
  if (transport !== 'http' && transport !== 'mllp') fail(`--transport must be http or mllp, got "${args.transport}"`);
  const interval = num(args.interval, 'interval', 5);
  const gatewayUrl = args.gateway ?? 'http://127.0.0.1:8480';
  if (args.scenario && !(args.scenario in SCENARIOS)) fail(`unknown scenario "${args.scenario}"; known: ${SCENARIO_IDS.join(', ')}`);

  let keys: Record<string, string> = {};
  let count = Math.round(num(args.monitors, 'monitors', 10));
  if (args.provision) {
    const repoRoot = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../..');
    const ids = Array.from({ length: count }, (_, i) => loadMonitorId(i + 1));
    console.log(`simulate: provisioning ${count} monitors on ${gatewayUrl} …`);
    keys = await provisionMonitors(gatewayUrl, await demoIntegrator(repoRoot), ids);
    const file = args.keys ?? path.join(os.tmpdir(), `ebbgate-simulate-keys-${process.pid}.json`);
    await writeFile(file, JSON.stringify(keys, null, 2));
    console.log(`simulate: keys written to ${file}`);
  } else if (args.keys) {
    keys = JSON.parse(await readFile(args.keys, 'utf8')) as Record<string, string>;
    if (args.monitors === undefined) count = Object.keys(keys).length;
  } else if (transport === 'http') {
    fail('HTTP ingest needs device API keys: pass --keys FILE or --provision');
  }
  const identifiers = Object.keys(keys).length ? Object.keys(keys).slice(0, count) : Array.from({ length: count }, (_, i) => loadMonitorId(i + 1));
  if (identifiers.length < count) fail(`--keys holds ${identifiers.length} monitors, ${count} asked for`);

  // Load runs loop steady scenarios; a tidal volume challenge changes its context mid-stream, so it
  // runs only when asked for, each monitor on its own stream (the shared loop keeps no context).
  const scenarioIds: ScenarioId[] = args.scenario
    ? [args.scenario as ScenarioId]
    : SCENARIO_IDS.filter((id) => SCENARIOS[id].expect.outcome === 'assessed' && !SCENARIOS[id].tidalVolumeChallenge);
  const loops = new Map(scenarioIds.filter((id) => !SCENARIOS[id].tidalVolumeChallenge).map((id) => [id, new SharedLoop(SCENARIOS[id])]));
  const start = new Date(Date.now() - num(args.backfill, 'backfill', 1e-9) * 1000);
  const speed = num(args.speed, 'speed', Number.POSITIVE_INFINITY);
  if (speed < 1) fail(`--speed must be at least 1, got "${args.speed}"`);
  const feeds = identifiers.map((identifier, i) => {
    const id = scenarioIds[i % scenarioIds.length];
    // Spread monitors over the batch period so they do not all send on the same tick.
    const startTime = new Date(start.getTime() + Math.round(((i % 1000) / 1000) * interval * 1000) - interval * 1000);
    return new MonitorFeed({
      identifier,
      scenario: SCENARIOS[id],
      source: SCENARIOS[id].tidalVolumeChallenge ? new BedStream({ scenario: SCENARIOS[id], seed: 1000 + i }) : loops.get(id)!.reader((i * 7.3) % 100),
      transport,
      batchSeconds: interval,
      startTime,
    });
  });
  const scenarioOf = new Map(feeds.map((f) => [f.identifier, f.scenario]));

  const tlsFiles = [args['tls-cert'], args['tls-key'], args['tls-ca']];
  if (tlsFiles.some(Boolean) && !tlsFiles.every(Boolean)) fail('--tls-cert, --tls-key and --tls-ca go together');
  const mllpTls = args['tls-cert']
    ? { cert: await readFile(args['tls-cert']), key: await readFile(args['tls-key']!), ca: await readFile(args['tls-ca']!) }
    : undefined;
  const mllpPortDefault = mllpTls ? 2576 : 2575;
  const latencies: number[] = [];
  const base = simulatorTransport({
    transport,
    gatewayUrl,
    httpSockets: Math.round(num(args.sockets, 'sockets', 64)),
    apiKeys: new Map(Object.entries(keys)),
    mllpHost: args['mllp-host'],
    mllpPort: num(args['mllp-port'], 'mllp-port', mllpPortDefault),
    mllpTls,
    mllpConnections: Math.round(num(args.connections, 'connections', Math.min(identifiers.length, 32))),
    scenarioOf: (id) => scenarioOf.get(id),
  });
  const timed: BatchTransport = {
    name: base.name,
    async send(b) {
      const t = performance.now();
      const out = await base.send(b);
      if (out.kind === 'accepted') latencies.push(performance.now() - t);
      return out;
    },
    close: base.close,
  };
  const spoolDir = args.spool ?? (await mkdtemp(path.join(os.tmpdir(), 'ebbgate-simulate-')));
  const reasons = new Map<string, number>();
  const sender = await BatchSender.open({
    transport: timed,
    spoolDir,
    spoolMode: 'on-failure',
    fsync: false,
    onEvent: (e) => {
      if (e.kind === 'rejected' || e.kind === 'retrying') reasons.set(e.reason.slice(0, 120), (reasons.get(e.reason.slice(0, 120)) ?? 0) + 1);
    },
  });
  console.log(
    `simulate: ${feeds.length} monitors, ${interval}-s batches over ${transport} → ${transport === 'http' ? gatewayUrl : `${args['mllp-host'] ?? '127.0.0.1'}:${args['mllp-port'] ?? mllpPortDefault}${mllpTls ? ' (TLS)' : ''}`} (target ${(feeds.length / interval).toFixed(1)} batches/s); spool ${spoolDir}`,
  );

  let last = { at: performance.now(), accepted: 0, retries: 0, rejected: 0 };
  const report = () => {
    const now = performance.now();
    const s = sender.stats;
    const secs = (now - last.at) / 1000;
    const lat = latencies.splice(0).sort((a, b) => a - b);
    console.log(
      `simulate: ${((s.accepted - last.accepted) / secs).toFixed(1)} batches/s accepted, p50 ${percentile(lat, 50).toFixed(1)} ms, p99 ${percentile(lat, 99).toFixed(1)} ms, ` +
        `retries ${s.retries - last.retries}, refused ${s.rejected - last.rejected}, pending ${sender.pending()}, rss ${(process.memoryUsage().rss / 2 ** 20).toFixed(0)} MB`,
    );
    for (const [r, n] of reasons) console.log(`simulate:   ${n}× ${r}`);
    reasons.clear();
    last = { at: now, accepted: s.accepted, retries: s.retries, rejected: s.rejected };
  };
  // Starts with the earliest monitor's first batch; the backfill plays from now on at --speed.
  const clock = simulatedClock(start.getTime() - interval * 1000, speed);
  let sending = false;
  const tick = async () => {
    if (sending) return; // a slow gateway must not make ticks pile up
    sending = true;
    try {
      const t = clock.now();
      for (const f of feeds) for (const b of f.due(t)) await sender.send(b);
    } finally {
      sending = false;
    }
  };
  const timer = setInterval(() => void tick(), 100);
  const reporter = setInterval(report, 5000);
  const stop = async () => {
    clearInterval(timer);
    clearInterval(reporter);
    await sender.close();
    report();
    const s = sender.stats;
    console.log(
      `simulate: done: ${s.accepted} accepted (${s.repeats} repeats), ${s.rejected} refused, ${s.retries} retries, ${sender.pending()} left in ${spoolDir}`,
    );
    process.exit(0);
  };
  process.once('SIGINT', () => void stop());
  process.once('SIGTERM', () => void stop());
  if (args.duration) setTimeout(() => void stop(), num(args.duration, 'duration', 60) * 1000);
}

main().catch((err) => {
  console.error(`simulate: ${(err as Error).message}`);
  process.exit(1);
});
