/**
 * The real gateway for the edge security suite: its own OS process (as `npm start` runs it),
 * configured through a config file (EBBGATE_CONFIG) with the settings under test, demo
 * certificates made by openssl in a temporary folder, and a bare MLLP peer (plain or TLS) that
 * writes bytes as given and reads answers with its own framing code (independent of the kit).
 */
import { mkdtempSync, readFileSync } from 'node:fs';
import net from 'node:net';
import os from 'node:os';
import path from 'node:path';
import tls from 'node:tls';
import type { TestDatabase } from '../../../scripts/lib/test-database';
import { ensureDemoCertificates, type DemoCertificates } from '../../../scripts/lib/certs';
import { DEMO_INTEGRATOR, freePort, signIn, spawnConfiguredGateway, type GatewayProcess } from '../ingest/gateway-process';
import { queryDatabase } from '../support/database';
import { splitFrames } from '@ebbgate/gateway/test/ingest/mllp-client';

export interface EdgeGateway {
  gw: GatewayProcess;
  db: TestDatabase;
  certs: DemoCertificates;
  tlsPort: number;
  integrator: Awaited<ReturnType<typeof signIn>>;
  query<T>(sql: string, params?: unknown[]): Promise<T[]>;
  metric(reason: string): Promise<number>;
  stop(): Promise<void>;
}

/** Starts a gateway with MLLP (plain and TLS) and the given config on top of the defaults. */
export async function startEdgeGateway(
  config: Record<string, unknown> = {},
  opts: {
    clients?: string[];
    databaseUrl?: (db: TestDatabase) => string;
    /** Fixed ports (HTTP, plain MLLP); free ones if not given. */
    port?: number;
    mllpPort?: number;
  } = {},
): Promise<EdgeGateway> {
  const dir = mkdtempSync(path.join(os.tmpdir(), 'ebbgate-edge-'));
  const certs = ensureDemoCertificates(path.join(dir, 'certs'), opts.clients ?? ['adapter-a', 'adapter-b']);
  const tlsPort = await freePort();
  const mllp = (config.mllp ?? {}) as Record<string, unknown>;
  const started = await spawnConfiguredGateway(
    {
      ...config,
      gateway: { rateLimit: { perSourcePerMinute: 1_000_000, perKeyPerMinute: 1_000_000 }, ...((config.gateway as object) ?? {}) },
      auth: { signInAttemptsPerMinute: 1000 },
      mllp: {
        ...mllp,
        tls: {
          enabled: true,
          host: '127.0.0.1',
          port: tlsPort,
          certFile: certs.certFile,
          keyFile: certs.keyFile,
          caFile: certs.caFile,
          maxFrameBytes: 8_388_608,
          ...((mllp.tls as object) ?? {}),
        },
      },
    },
    {
      dir,
      databaseUrl: opts.databaseUrl,
      port: opts.port,
      mllpPort: opts.mllpPort,
      mllp: true,
      // Services on (the MLLP listeners are services); the analysis worker off: not under test.
      workers: true,
      env: { EBBGATE_ANALYSIS_WORKER: 'false' },
    },
  );
  const { gw, db } = started;
  let integrator: EdgeGateway['integrator'];
  try {
    integrator = await signIn(gw.url, DEMO_INTEGRATOR.username, DEMO_INTEGRATOR.password);
  } catch (err) {
    await started.stop();
    throw err;
  }
  const query = <T>(sql: string, params: unknown[] = []) => queryDatabase<T>(db.url, sql, params);
  const metric = async (reason: string) => {
    const text = await (await fetch(`${gw.url}/metrics`)).text();
    const m = new RegExp(`^ebbgate_edge_events_total\\{reason="${reason}"\\} (\\d+)`, 'm').exec(text);
    return m ? Number(m[1]) : 0;
  };
  return {
    gw,
    db,
    certs,
    tlsPort,
    integrator,
    query,
    metric,
    stop: started.stop,
  };
}

/** A profile whose channels map the codes `oru()` sends, and a monitor on it. */
export async function registerMllpMonitor(e: EdgeGateway, identifier: string, profileName = `Edge profile ${identifier}`) {
  const profile = await e.integrator.post('/profiles', {
    name: profileName,
    manufacturer: 'Harrowmere test',
    model: 'edge',
    transports: ['http', 'mllp'],
    channels: [
      { code: '150036', role: 'abp', unit: 'mmHg', sampleRate: 125, gain: 1, offset: 0 },
      { code: '151868', role: 'paw', unit: 'cmH2O', sampleRate: 125, gain: 1, offset: 0 },
    ],
  });
  if (profile.status !== 201) throw new Error(`profile: ${profile.status} ${JSON.stringify(profile.body)}`);
  const monitor = await e.integrator.post('/monitors', { identifier, profileId: profile.body.id });
  if (monitor.status !== 201) throw new Error(`monitor: ${monitor.status} ${JSON.stringify(monitor.body)}`);
  return { profileId: profile.body.id as string, monitorId: monitor.body.id as string };
}

const ts = (d: Date) =>
  d
    .toISOString()
    .replace(/[-:T]/g, '')
    .replace(/\.(\d{3})Z$/, '.$1+0000');

/** A PCD-01 style ORU^R01 (arterial pressure and airway pressure waveforms), written by hand here. */
export function oru(o: { controlId: string; equipment: string; start: Date; seconds?: number; enhanced?: boolean; value?: number }): string {
  const n = 125 * (o.seconds ?? 4);
  const t = ts(o.start);
  const abp = Array.from({ length: n }, (_, i) => (80 + 40 * Math.max(0, Math.sin((2 * Math.PI * i) / 94)) + (o.value ?? 0)).toFixed(1)).join('^');
  const paw = Array.from({ length: n }, (_, i) => (i % 300 < 100 ? 18 : 5).toFixed(1)).join('^');
  return (
    [
      `MSH|^~\\&|EDGE_TEST^${o.equipment}^EUI-64|HGH|EBBGATE|HGH|${ts(new Date())}||ORU^R01^ORU_R01|${o.controlId}|P|2.6|||${o.enhanced ? 'AL|NE' : '|'}`,
      'PID|||HGH-1^^^HGH^MR||Testpatient^Edge',
      `OBR|1|||182777000^monitoring of patient^SCT|||${t}`,
      `OBX|1||69965^MDC_DEV_MON_PHYSIO_MULTI_PARAM_MDS^MDC|1.0.0.0|||||||X|||||||${o.equipment}^^${o.equipment}^EUI-64`,
      `OBX|2|NA|150036^MDC_PRESS_BLD_ART_ABP^MDC|1.2.1.1|${abp}|266016^MDC_DIM_MMHG^MDC|||||R|||${t}`,
      'OBX|3|NM|67981^MDC_ATTR_SAMP_RATE^MDC|1.2.1.1.1|125|264608^MDC_DIM_PER_SEC^MDC|||||R',
      `OBX|4|NA|151868^MDC_PRESS_AWAY^MDC|1.2.2.1|${paw}|266048^MDC_DIM_CM_H2O^MDC|||||R|||${t}`,
      'OBX|5|NM|67981^MDC_ATTR_SAMP_RATE^MDC|1.2.2.1.1|125|264608^MDC_DIM_PER_SEC^MDC|||||R',
    ].join('\r') + '\r'
  );
}

/** MSA-1, MSA-2 and ERR-3/ERR-8 of an answer. */
export function readAck(ack: string) {
  const segs = ack
    .split('\r')
    .filter(Boolean)
    .map((s) => s.split('|'));
  const msa = segs.find((s) => s[0] === 'MSA') ?? [];
  return { code: msa[1], controlId: msa[2], errors: segs.filter((s) => s[0] === 'ERR').map((s) => ({ code: (s[3] ?? '').split('^')[0], text: s[8] ?? '' })) };
}

/** A bare MLLP peer: writes bytes as given, collects framed answers, knows when it was closed. */
export class Peer {
  private buf: Buffer = Buffer.alloc(0);
  readonly frames: string[] = [];
  closedAt: number | null = null;
  private constructor(readonly socket: net.Socket) {
    socket.on('data', (chunk: Buffer) => {
      const { frames, rest } = splitFrames(Buffer.concat([this.buf, chunk]));
      this.buf = rest;
      this.frames.push(...frames);
    });
    socket.on('error', () => undefined);
    socket.on('close', () => (this.closedAt = Date.now()));
  }

  static plain(port: number): Promise<Peer> {
    return new Promise((resolve, reject) => {
      const s = net.connect({ host: '127.0.0.1', port }, () => resolve(new Peer(s)));
      s.once('error', reject);
    });
  }

  /** TLS 1.2+ to the gateway; `client` is the certificate to present (none: no certificate). */
  static secure(port: number, certs: DemoCertificates, client?: { certFile: string; keyFile: string }): Promise<Peer> {
    return new Promise((resolve, reject) => {
      const s = tls.connect(
        {
          host: '127.0.0.1',
          port,
          ca: readFileSync(certs.caFile),
          minVersion: 'TLSv1.2',
          ...(client ? { cert: readFileSync(client.certFile), key: readFileSync(client.keyFile) } : {}),
        },
        () => resolve(new Peer(s)),
      );
      s.once('error', reject);
    });
  }

  send(message: string): void {
    this.socket.write(Buffer.concat([Buffer.from([0x0b]), Buffer.from(message, 'utf8'), Buffer.from([0x1c, 0x0d])]));
  }

  async answers(n: number, timeoutMs = 15_000): Promise<string[]> {
    const until = Date.now() + timeoutMs;
    while (this.frames.length < n) {
      if (Date.now() > until) throw new Error(`only ${this.frames.length} of ${n} MLLP answers arrived`);
      if (this.closedAt !== null) throw new Error(`connection closed after ${this.frames.length} of ${n} answers`);
      await new Promise((r) => setTimeout(r, 20));
    }
    return this.frames.slice(0, n);
  }

  /** Resolves once the server has closed the connection (or rejects after timeoutMs). */
  async closed(timeoutMs = 15_000): Promise<number> {
    const until = Date.now() + timeoutMs;
    while (this.closedAt === null) {
      if (Date.now() > until) throw new Error('connection still open');
      await new Promise((r) => setTimeout(r, 20));
    }
    return this.closedAt;
  }

  close(): void {
    this.socket.destroy();
  }
}
