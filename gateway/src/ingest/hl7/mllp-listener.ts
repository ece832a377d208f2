import { readFileSync } from 'node:fs';
import net from 'node:net';
import path from 'node:path';
import tls from 'node:tls';
import { MllpReader, frameMllp, type MllpEvent } from '@ebbgate/shared/hl7';
import type { AppContext, BackgroundService } from '../../app-context';
import { repoRoot } from '../../config/load';
import { ConnectionGate, type EdgeCounters } from '../edge-counters';
import type { EdgeDirectory } from '../edge-directory';
import { recordInbound } from '../inbound-store';
import type { IngestService } from '../ingest.service';
import { IngestRefusal } from '../refusal';
import { plainAddress, senderLabel, type Sender } from '../sender';
import { ackCodeFor, buildAck, headerOf } from './ack';
import { decodePcd01Async } from './pcd01';

/** Bytes outside a frame are answered as one bad message once the sender pauses this long. */
const STRAY_BYTES_IDLE_MS = 250;
/** What is kept of an oversize frame or a frame cut off by the peer. */
const HEAD_BYTES = 65_536;

export interface MllpEdge {
  directory: EdgeDirectory;
  gate: ConnectionGate;
  counters: EdgeCounters;
}

export interface MllpListenerOptions {
  kind?: ListenerKind;
  /** Shared between listeners so the connection limits hold over all of them. */
  gate?: ConnectionGate;
}

export type ListenerKind = 'plain' | 'tls';

/**
 * An MLLP listener (plain, or TLS 1.2+ with client certificates). Every listener assumes a
 * hostile peer: plain connections only from allowed sources (closed before anything is read),
 * TLS only with a certificate chaining to the configured CA; connections limited in total and
 * per source, closed when idle or when a frame takes too long; reading paused while frames wait
 * for their ACK (backpressure); frames bounded. Every frame gets an ACK on the same connection,
 * in order, echoing MSH-10; bad input gets a NAK with ERR saying why and is kept.
 */
export class MllpListener implements BackgroundService {
  readonly name: string;
  private server: net.Server | null = null;
  private readonly sockets = new Set<net.Socket>();
  private readonly inFlight = new Set<Promise<unknown>>();

  readonly kind: ListenerKind;
  private readonly edge: MllpEdge;

  constructor(
    private readonly ctx: AppContext,
    private readonly service: IngestService,
    opts: MllpListenerOptions = {},
  ) {
    this.kind = opts.kind ?? 'plain';
    this.name = this.kind === 'tls' ? 'mllp-tls-listener' : 'mllp-listener';
    const { maxConnections, maxConnectionsPerSource } = ctx.config.mllp;
    this.edge = { directory: service.directory, counters: service.counters, gate: opts.gate ?? new ConnectionGate(maxConnections, maxConnectionsPerSource) };
  }

  /** The bound port (useful with port 0 in tests). */
  get port(): number {
    const a = this.server?.address();
    return typeof a === 'object' && a ? a.port : 0;
  }

  /** Connections this listener holds open. */
  get connections(): number {
    return this.sockets.size;
  }

  private get maxFrameBytes(): number {
    // The listener's own cap, never above the ingest-wide batch limit.
    const own = this.kind === 'tls' ? this.ctx.config.mllp.tls.maxFrameBytes : this.ctx.config.mllp.maxFrameBytes;
    return Math.min(own, this.ctx.config.ingest.maxBatchBytes);
  }

  async start(): Promise<void> {
    const { mllp } = this.ctx.config;
    const { host, port } = this.kind === 'tls' ? mllp.tls : mllp;
    if (this.kind === 'tls') {
      const file = (f: string) => readFileSync(path.resolve(repoRoot, f));
      const server = tls.createServer({
        key: file(mllp.tls.keyFile),
        cert: file(mllp.tls.certFile),
        ca: file(mllp.tls.caFile),
        requestCert: true,
        rejectUnauthorized: true,
        minVersion: 'TLSv1.2',
        handshakeTimeout: Math.round(mllp.frameTimeoutSeconds * 1000),
      });
      server.on('secureConnection', (socket) => this.accept(socket));
      server.on('tlsClientError', (_err, socket) => {
        this.edge.counters.inc('tls-handshake-failed');
        socket.destroy();
      });
      this.server = server;
    } else {
      this.server = net.createServer({ pauseOnConnect: true }, (socket) => this.admit(socket));
    }
    this.server.maxConnections = mllp.maxConnections;
    await new Promise<void>((resolve, reject) => {
      this.server!.once('error', reject);
      this.server!.listen({ host, port }, () => resolve());
    });
    this.ctx.logger.info({ host, port: this.port, kind: this.kind }, 'MLLP listener started');
  }

  async stop(): Promise<void> {
    const server = this.server;
    if (!server) return;
    const closed = new Promise<void>((resolve) => server.close(() => resolve()));
    await Promise.allSettled([...this.inFlight]);
    for (const s of this.sockets) s.end();
    const force = setTimeout(() => this.sockets.forEach((s) => s.destroy()), 2_000);
    await closed;
    clearTimeout(force);
    this.server = null;
  }

  /** Plain MLLP: the source must be allowed before a single byte is read. */
  private admit(socket: net.Socket): void {
    const address = plainAddress(socket.remoteAddress);
    this.edge.directory.sourceMayConnect(address).then(
      (ok) => {
        if (!ok) {
          this.edge.counters.inc('source-not-allowed');
          socket.destroy();
          return;
        }
        this.accept(socket);
        socket.resume();
      },
      (err: unknown) => {
        this.ctx.logger.error({ err: (err as Error).message }, 'MLLP source check failed; connection closed');
        socket.destroy();
      },
    );
  }

  private senderOf(socket: net.Socket): Sender {
    const address = plainAddress(socket.remoteAddress);
    if (socket instanceof tls.TLSSocket) {
      const cert = socket.getPeerCertificate();
      const subject = Object.entries(cert.subject ?? {})
        .map(([k, v]) => `${k}=${Array.isArray(v) ? v.join('+') : v}`)
        .join(',');
      const cn = cert.subject?.CN;
      return {
        kind: 'certificate',
        fingerprint: (cert.fingerprint256 ?? '').replace(/:/g, '').toUpperCase(),
        subject,
        commonName: Array.isArray(cn) ? (cn[0] ?? '') : (cn ?? ''),
        address,
      };
    }
    return { kind: 'source', address: address ?? 'unknown' };
  }

  private accept(socket: net.Socket): void {
    const { mllp } = this.ctx.config;
    const source = plainAddress(socket.remoteAddress) ?? 'unknown';
    const slot = this.edge.gate.acquire(source);
    if (slot !== 'ok') {
      this.edge.counters.inc(slot);
      socket.destroy();
      return;
    }
    this.sockets.add(socket);
    const sender = this.senderOf(socket);
    const reader = new MllpReader({ maxFrameBytes: this.maxFrameBytes, headBytes: HEAD_BYTES });
    let chain: Promise<void> = Promise.resolve();
    let pending = 0;
    let paused = false;
    let strayTimer: NodeJS.Timeout | null = null;
    let frameTimer: NodeJS.Timeout | null = null;
    const idleMs = Math.round(mllp.idleTimeoutSeconds * 1000);

    const close = (why: 'idle-closed' | 'frame-timeout') => {
      this.edge.counters.inc(why);
      socket.destroy();
    };
    socket.setTimeout(idleMs, () => {
      // Waiting for our own answer is not idleness.
      if (pending > 0) return socket.setTimeout(idleMs);
      close('idle-closed');
    });

    const reply = (work: () => Promise<string>) => {
      pending++;
      if (pending >= mllp.maxPendingFrames && !paused) {
        paused = true;
        socket.pause();
      }
      const p = (chain = chain.then(async () => {
        const ack = await work();
        if (socket.writable) socket.write(frameMllp(ack));
        pending--;
        if (paused && pending < mllp.maxPendingFrames) {
          paused = false;
          socket.resume();
        }
      }));
      this.inFlight.add(p);
      void p.finally(() => this.inFlight.delete(p));
    };

    const onEvent = (e: MllpEvent) => {
      if (e.kind === 'frame') reply(() => this.handle(e.message, sender));
      else if (e.kind === 'stray') reply(() => this.stray(e.bytes, sender));
      else reply(() => this.oversize(e.head, e.size, sender));
    };

    const afterPush = () => {
      if (reader.midFrame) {
        frameTimer ??= setTimeout(() => close('frame-timeout'), Math.round(mllp.frameTimeoutSeconds * 1000));
      } else if (frameTimer) {
        clearTimeout(frameTimer);
        frameTimer = null;
      }
      if (!reader.midFrame && reader.buffered > 0) {
        strayTimer ??= setTimeout(() => {
          strayTimer = null;
          reader.takeStray().forEach(onEvent);
        }, STRAY_BYTES_IDLE_MS);
      }
    };

    socket.on('data', (chunk: Buffer) => {
      if (strayTimer) {
        clearTimeout(strayTimer);
        strayTimer = null;
      }
      try {
        reader.push(chunk).forEach(onEvent);
      } catch (err) {
        this.ctx.logger.error({ err: (err as Error).message }, 'MLLP framing failed');
        socket.destroy();
        return;
      }
      afterPush();
    });
    socket.on('error', (err) => this.ctx.logger.warn({ err: err.message, source }, 'MLLP connection error'));
    socket.on('close', () => {
      if (strayTimer) clearTimeout(strayTimer);
      if (frameTimer) clearTimeout(frameTimer);
      this.sockets.delete(socket);
      this.edge.gate.release(source);
      // A frame cut off by the sender closing: nobody to answer, but the bytes are kept.
      const rest = reader.takeRemainder();
      if (rest) {
        const size = rest.length;
        void recordInbound(this.ctx.ds, {
          transport: 'mllp',
          receivedAt: new Date(),
          outcome: 'quarantined',
          reason: 'The connection closed in the middle of an MLLP frame.',
          raw: size > HEAD_BYTES ? Buffer.from(rest.subarray(0, HEAD_BYTES)) : rest,
          sizeBytes: size,
          sender: senderLabel(sender),
          sourceAddress: source,
        }).catch((err: unknown) => this.ctx.logger.error({ err: (err as Error).message }, 'could not keep a cut-off MLLP frame'));
      }
    });
  }

  private async stray(bytes: Buffer, sender: Sender): Promise<string> {
    const refusal = new IngestRefusal(
      'invalid',
      'Bytes arrived outside an MLLP frame (no 0x0B start block).',
      [{ path: 'MLLP', message: `${bytes.length} stray bytes` }],
      100,
    );
    const keep = this.ctx.config.ingest.strangers.keepBytes;
    await this.keep(
      { outcome: 'quarantined', reason: refusal.describe(), raw: bytes.length > keep ? Buffer.from(bytes.subarray(0, keep)) : bytes, sizeBytes: bytes.length },
      sender,
    );
    return buildAck(headerOf(bytes), 'AR', refusal);
  }

  private async oversize(head: Buffer, size: number, sender: Sender): Promise<string> {
    const limit = this.maxFrameBytes;
    const refusal = new IngestRefusal(
      'too-large',
      `The message is over the limit of ${limit} bytes (maxFrameBytes=${limit}).`,
      [{ path: 'MLLP', message: `at least ${size} bytes` }],
      102,
    );
    await this.keep({ outcome: 'rejected', reason: refusal.describe() + ' Only the first 64 kB are kept.', raw: head, sizeBytes: size }, sender);
    const header = headerOf(head);
    return buildAck(header, ackCodeFor(refusal, header?.enhancedMode ?? false), refusal);
  }

  /** Keeps a record of input that never reached the pipeline; storage trouble does not stop the answer. */
  private async keep(r: { outcome: 'quarantined' | 'rejected'; reason: string; raw: Buffer; sizeBytes: number }, sender: Sender): Promise<void> {
    try {
      await recordInbound(this.ctx.ds, { transport: 'mllp', receivedAt: new Date(), ...r, sender: senderLabel(sender), sourceAddress: sender.address });
    } catch (err) {
      this.ctx.logger.error({ err: (err as Error).message }, 'could not keep a refused MLLP message');
    }
  }

  /** One framed message: ingest it and build the acknowledgement in the sender's mode. */
  async handle(message: Buffer, sender?: Sender): Promise<string> {
    const header = headerOf(message);
    const enhanced = header?.enhancedMode ?? false;
    try {
      const outcome = await this.service.ingest({
        transport: 'mllp',
        raw: message,
        receivedAt: new Date(),
        decode: async (raw) => (await decodePcd01Async(raw)).batch,
        sender,
      });
      const note = outcome.stored?.outcome === 'duplicate' ? 'Duplicate of an earlier message; not stored again.' : undefined;
      return buildAck(header, ackCodeFor(outcome.refusal, enhanced), outcome.refusal, note);
    } catch (err) {
      // The gateway's own trouble (typically the database is away): not a fault of the message.
      // AR/CR with ERR-3 207 and MSA-2 echoed, so a conforming sender keeps it and sends again.
      this.edge.counters.inc('storage-unavailable');
      this.ctx.logger.error(
        { err: (err as Error).name, code: (err as { code?: string }).code },
        'MLLP message could not be stored; answered AR/CR (send again)',
      );
      const refusal = new IngestRefusal(
        'unavailable',
        'The gateway cannot store messages right now (storage unavailable); keep this message and send it again.',
        [],
        207,
      );
      return buildAck(header, ackCodeFor(refusal, enhanced), refusal);
    }
  }
}
