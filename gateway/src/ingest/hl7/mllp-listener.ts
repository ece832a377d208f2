import net from 'node:net';
import type { AppContext, BackgroundService } from '../../app-context';
import { recordInbound } from '../inbound-store';
import type { IngestService } from '../ingest.service';
import { IngestRefusal } from '../refusal';
import { ackCodeFor, buildAck, headerOf } from './ack';
import { decodePcd01 } from './pcd01';

// MLLP framing (HL7 v2 implementation guide, appendix C): <VT> message <FS><CR>.
const VT = 0x0b;
const FS = 0x1c;
const CR = 0x0d;
/** Bytes outside a frame are answered as one bad message once the sender pauses this long. */
const STRAY_BYTES_IDLE_MS = 250;

const frame = (text: string) => Buffer.concat([Buffer.from([VT]), Buffer.from(text, 'utf8'), Buffer.from([FS, CR])]);
const isBlank = (b: Buffer) => b.every((x) => x === 0x20 || x === 0x0a || x === 0x0d || x === 0x09);

/**
 * The MLLP listener: every frame gets an ACK on the same connection, in order; bad input gets a
 * NAK with ERR saying why (never silence, never a dropped connection) and is kept like every
 * inbound message. Built on node:net because simple-hl7's server cannot answer a message it
 * fails to parse and splits frames per TCP chunk (see handbook toolchain pitfalls).
 */
export class MllpListener implements BackgroundService {
  readonly name = 'mllp-listener';
  private server: net.Server | null = null;
  private readonly sockets = new Set<net.Socket>();
  private readonly inFlight = new Set<Promise<unknown>>();

  constructor(
    private readonly ctx: AppContext,
    private readonly service: IngestService,
  ) {}

  /** The bound port (useful with port 0 in tests). */
  get port(): number {
    const a = this.server?.address();
    return typeof a === 'object' && a ? a.port : 0;
  }

  async start(): Promise<void> {
    const { host, port } = this.ctx.config.mllp;
    this.server = net.createServer((socket) => this.accept(socket));
    await new Promise<void>((resolve, reject) => {
      this.server!.once('error', reject);
      this.server!.listen({ host, port }, () => resolve());
    });
    this.ctx.logger.info({ host, port: this.port }, 'MLLP listener started');
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

  private accept(socket: net.Socket): void {
    this.sockets.add(socket);
    const max = this.ctx.config.ingest.maxBatchBytes;
    let buf: Buffer = Buffer.alloc(0);
    let discardingOversize = false;
    let chain: Promise<void> = Promise.resolve();
    let strayTimer: NodeJS.Timeout | null = null;

    const reply = (work: () => Promise<string>) => {
      const p = (chain = chain.then(async () => {
        let ack: string;
        try {
          ack = await work();
        } catch (err) {
          this.ctx.logger.error({ err }, 'MLLP message handling failed');
          ack = buildAck(null, 'AE', new IngestRefusal('backlog', 'The gateway could not store the message (internal error); send it again.'));
        }
        if (socket.writable) socket.write(frame(ack));
      }));
      this.inFlight.add(p);
      void p.finally(() => this.inFlight.delete(p));
    };

    const stray = (bytes: Buffer) =>
      reply(async () => {
        const refusal = new IngestRefusal('invalid', 'Bytes arrived outside an MLLP frame (no 0x0B start block).', [{ path: 'MLLP', message: `${bytes.length} stray bytes` }], 100);
        await recordInbound(this.ctx.ds, { transport: 'mllp', receivedAt: new Date(), outcome: 'quarantined', reason: refusal.describe(), raw: bytes });
        return buildAck(headerOf(bytes), 'AR', refusal);
      });

    const pump = () => {
      for (;;) {
        if (discardingOversize) {
          const end = buf.indexOf(FS);
          if (end < 0) {
            buf = Buffer.alloc(0);
            return;
          }
          buf = buf.subarray(end + 1);
          discardingOversize = false;
        }
        const start = buf.indexOf(VT);
        if (start < 0) {
          if (buf.length && !isBlank(buf)) {
            if (buf.length > max) {
              stray(buf);
              buf = Buffer.alloc(0);
            } else {
              strayTimer ??= setTimeout(() => {
                strayTimer = null;
                const at = buf.indexOf(VT);
                const bytes = at < 0 ? buf : buf.subarray(0, at);
                if (bytes.length && !isBlank(bytes)) stray(Buffer.from(bytes));
                buf = at < 0 ? Buffer.alloc(0) : buf.subarray(at);
                pump();
              }, STRAY_BYTES_IDLE_MS);
            }
          } else buf = Buffer.alloc(0);
          return;
        }
        if (start > 0) {
          const before = buf.subarray(0, start);
          if (!isBlank(before)) stray(Buffer.from(before));
          buf = buf.subarray(start);
        }
        let end = buf.indexOf(FS, 1);
        while (end >= 0 && end + 1 < buf.length && buf[end + 1] !== CR) end = buf.indexOf(FS, end + 1);
        if (end < 0 || end + 1 >= buf.length) {
          if (buf.length > max + 2) {
            const head = Buffer.from(buf.subarray(1, Math.min(buf.length, 65_536)));
            reply(() => this.oversize(head, buf.length));
            buf = Buffer.alloc(0);
            discardingOversize = true;
          }
          return;
        }
        const message = Buffer.from(buf.subarray(1, end));
        buf = buf.subarray(end + 2);
        reply(() => this.handle(message));
      }
    };

    socket.on('data', (chunk: Buffer) => {
      if (strayTimer) {
        clearTimeout(strayTimer);
        strayTimer = null;
      }
      buf = buf.length ? Buffer.concat([buf, chunk]) : chunk;
      try {
        pump();
      } catch (err) {
        this.ctx.logger.error({ err }, 'MLLP framing failed');
        buf = Buffer.alloc(0);
      }
    });
    socket.on('error', (err) => this.ctx.logger.warn({ err: err.message }, 'MLLP connection error'));
    socket.on('close', () => {
      if (strayTimer) clearTimeout(strayTimer);
      this.sockets.delete(socket);
      // A frame cut off by the sender closing: nobody to answer, but the bytes are kept.
      if (buf.length && !isBlank(buf)) {
        const bytes = Buffer.from(buf);
        void recordInbound(this.ctx.ds, { transport: 'mllp', receivedAt: new Date(), outcome: 'quarantined', reason: 'The connection closed in the middle of an MLLP frame.', raw: bytes }).catch(
          (err: unknown) => this.ctx.logger.error({ err }, 'could not keep a cut-off MLLP frame'),
        );
      }
    });
  }

  private async oversize(head: Buffer, size: number): Promise<string> {
    const refusal = new IngestRefusal('too-large', `The message is over the limit of ${this.ctx.config.ingest.maxBatchBytes} bytes.`, [{ path: 'MLLP', message: `at least ${size} bytes` }], 207);
    await recordInbound(this.ctx.ds, { transport: 'mllp', receivedAt: new Date(), outcome: 'rejected', reason: refusal.describe() + ' Only the first 64 kB are kept.', raw: head, sizeBytes: size });
    const header = headerOf(head);
    return buildAck(header, ackCodeFor(refusal, header?.enhancedMode ?? false), refusal);
  }

  /** One framed message: ingest it and build the acknowledgement in the sender's mode. */
  async handle(message: Buffer): Promise<string> {
    const header = headerOf(message);
    const outcome = await this.service.ingest({ transport: 'mllp', raw: message, receivedAt: new Date(), decode: (raw) => decodePcd01(raw).batch });
    const enhanced = header?.enhancedMode ?? false;
    const note = outcome.stored?.outcome === 'duplicate' ? 'Duplicate of an earlier message; not stored again.' : undefined;
    return buildAck(header, ackCodeFor(outcome.refusal, enhanced), outcome.refusal, note);
  }
}
