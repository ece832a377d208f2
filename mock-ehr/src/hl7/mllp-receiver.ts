import { once } from 'node:events';
import type { AddressInfo, Socket } from 'node:net';
import hl7 from 'simple-hl7';
import { buildAck } from './ack.js';
import { checkOru } from './oru-checks.js';

// HL7 v2 receiver over MLLP (simple-hl7's TCP server, bound to loopback). Every message is kept,
// accepted or not, and answered with our own ACK (AA, or AR with the reason in MSA-3 and ERR).

export interface ReceivedHl7 {
  id: number;
  receivedAt: string;
  controlId: string;
  messageType: string;
  ackCode: string;
  error?: string;
  message: string;
  ack: string;
}

// simple-hl7 throws on some malformed input and then has no response object to answer with; this
// parser never throws (a stand-in header when needed), so every frame reaches the handler and we
// judge the raw text ourselves.
const realParser = new hl7.Parser();
const STAND_IN = 'MSH|^~\\&|||||||||||';
const tolerantParser = {
  parse(s: string) {
    try {
      const m = realParser.parse(s);
      if (s.startsWith('MSH') && m.header.fields.length >= 11) return m;
    } catch { /* fall through to the stand-in */ }
    return realParser.parse(STAND_IN);
  },
};

/** Strips the MLLP frame (0x0B … 0x1C 0x0D) that simple-hl7 leaves on req.raw. */
function unframe(raw: string): string {
  let s = raw.startsWith('\u000b') ? raw.slice(1) : raw;
  if (s.endsWith('\r')) s = s.slice(0, -1);
  if (s.endsWith('\u001c')) s = s.slice(0, -1);
  return s;
}

export class MllpReceiver {
  private messages: ReceivedHl7[] = [];
  private nextId = 1;
  private server: ReturnType<typeof hl7.Server.createTcpServer> | undefined;
  private readonly sockets = new Set<Socket>();

  constructor(private readonly capacity = 1000) {}

  async start(host: string, port: number): Promise<number> {
    const server = hl7.Server.createTcpServer({ parser: tolerantParser }, (err, req, res) => {
      if (err || !req || !res) return; // socket errors: the client is gone, nothing to answer
      const message = unframe(req.raw);
      const error = checkOru(message);
      const { ack, code } = buildAck(message, error ? 'reject' : 'accept', error);
      const controlId = message.split(/\r|\n/)[0]?.split('|')[9] ?? '';
      this.keep({
        id: this.nextId++, receivedAt: new Date().toISOString(), controlId,
        messageType: message.split(/\r|\n/)[0]?.split('|')[8] ?? '', ackCode: code,
        ...(error ? { error: `${error.code}: ${error.text}` } : {}), message, ack,
      });
      res.ack = ack;
      res.end();
    });
    server.start({ port, host });
    const net = server.server!;
    net.on('connection', (s: Socket) => {
      this.sockets.add(s);
      s.on('close', () => this.sockets.delete(s));
    });
    if (!net.listening) await Promise.race([once(net, 'listening'), once(net, 'error').then(([e]) => Promise.reject(e))]);
    this.server = server;
    return (net.address() as AddressInfo).port;
  }

  async stop(): Promise<void> {
    const net = this.server?.server;
    this.server = undefined;
    if (!net) return;
    for (const s of this.sockets) s.destroy();
    await new Promise<void>((resolve) => net.close(() => resolve()));
  }

  list(): ReceivedHl7[] {
    return [...this.messages];
  }

  clear(): void {
    this.messages = [];
  }

  private keep(m: ReceivedHl7): void {
    this.messages.push(m);
    if (this.messages.length > this.capacity) this.messages.shift();
  }
}
