import net from 'node:net';
import tls from 'node:tls';
import { parseAck, type Hl7Ack } from './ack';
import { frameMllp, MllpDeframer } from './mllp-frame';

export interface MllpSenderOptions {
  host: string;
  port: number;
  /** Time to wait for the ACK, ms (default 10 s). */
  ackTimeoutMs?: number;
  connectTimeoutMs?: number;
  /**
   * MLLP over TLS (1.2+) with a client certificate: the CA the gateway's certificate must chain
   * to, and this adapter's certificate and key (PEM). The gateway identifies the adapter by it.
   */
  tls?: { ca: string | Buffer; cert: string | Buffer; key: string | Buffer; servername?: string };
}

/** The connection failed or the ACK never came: worth another try later. */
export class MllpConnectionError extends Error {
  override readonly name = 'MllpConnectionError';
}

/**
 * Sends HL7 v2 messages over one persistent MLLP connection, one at a time (each waits for its
 * ACK before the next goes), reconnecting when the connection drops.
 */
export class MllpSender {
  private socket: net.Socket | null = null;
  private connecting: Promise<net.Socket> | null = null;
  private chain: Promise<unknown> = Promise.resolve();
  private pending: { controlId: string; resolve: (a: Hl7Ack) => void; reject: (e: Error) => void } | null = null;
  private deframer = new MllpDeframer();

  constructor(private readonly opts: MllpSenderOptions) {}

  /** Sends one message; resolves with its ACK (positive or negative), rejects on connection trouble. */
  send(message: string, controlId: string): Promise<Hl7Ack> {
    const run = this.chain.then(() => this.sendNow(message, controlId));
    this.chain = run.catch(() => undefined);
    return run;
  }

  async close(): Promise<void> {
    const s = this.socket;
    this.socket = null;
    if (s && !s.destroyed) await new Promise<void>((resolve) => s.end(resolve));
  }

  private async sendNow(message: string, controlId: string): Promise<Hl7Ack> {
    const socket = await this.connect();
    return new Promise<Hl7Ack>((resolve, reject) => {
      const timer = setTimeout(() => {
        this.fail(new MllpConnectionError(`no ACK for ${controlId} within ${this.opts.ackTimeoutMs ?? 10_000} ms`));
        socket.destroy();
      }, this.opts.ackTimeoutMs ?? 10_000);
      this.pending = {
        controlId,
        resolve: (a) => {
          clearTimeout(timer);
          resolve(a);
        },
        reject: (e) => {
          clearTimeout(timer);
          reject(e);
        },
      };
      socket.write(frameMllp(message));
    });
  }

  private connect(): Promise<net.Socket> {
    if (this.socket && !this.socket.destroyed) return Promise.resolve(this.socket);
    if (this.connecting) return this.connecting;
    this.connecting = new Promise<net.Socket>((resolve, reject) => {
      const t = this.opts.tls;
      const s: net.Socket = t
        ? tls.connect({ host: this.opts.host, port: this.opts.port, ca: t.ca, cert: t.cert, key: t.key, servername: t.servername, minVersion: 'TLSv1.2' })
        : net.connect({ host: this.opts.host, port: this.opts.port });
      s.setNoDelay(true);
      const timer = setTimeout(() => s.destroy(new Error('connect timeout')), this.opts.connectTimeoutMs ?? 5_000);
      s.once(t ? 'secureConnect' : 'connect', () => {
        clearTimeout(timer);
        this.socket = s;
        this.deframer = new MllpDeframer();
        resolve(s);
      });
      s.on('data', (chunk) => this.onData(chunk));
      s.on('error', (err) => {
        clearTimeout(timer);
        reject(new MllpConnectionError(`MLLP ${this.opts.host}:${this.opts.port}: ${(err as NodeJS.ErrnoException).code ?? err.message}`));
        this.fail(new MllpConnectionError(`MLLP connection error: ${err.message}`));
      });
      s.on('close', () => {
        if (this.socket === s) this.socket = null;
        this.fail(new MllpConnectionError('MLLP connection closed before the ACK'));
      });
    }).finally(() => {
      this.connecting = null;
    });
    return this.connecting;
  }

  private onData(chunk: Buffer): void {
    for (const text of this.deframer.push(chunk)) {
      const p = this.pending;
      if (!p) continue;
      let ack: Hl7Ack;
      try {
        ack = parseAck(text);
      } catch (err) {
        this.pending = null;
        p.reject(new MllpConnectionError(`unreadable answer: ${(err as Error).message}`));
        continue;
      }
      if (ack.controlId && ack.controlId !== p.controlId) continue; // a late ACK of an earlier message
      this.pending = null;
      p.resolve(ack);
    }
  }

  private fail(err: Error): void {
    const p = this.pending;
    this.pending = null;
    p?.reject(err);
  }
}
