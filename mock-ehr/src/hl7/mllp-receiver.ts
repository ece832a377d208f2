import { once } from 'node:events';
import type { AddressInfo, Socket } from 'node:net';
import hl7 from 'simple-hl7';
import { buildAck } from './ack.js';
import { checkOru } from './oru-checks.js';

// HL7 v2 receiver over MLLP (simple-hl7's TCP server, bound to loopback). Every message is kept,
// accepted or not, and answered with our own ACK (AA, or AR with the reason in MSA-3 and ERR).
// Deliberately not the shared HL7 kit: an independent implementation on this side of the wire is
// what lets the delivery tests catch a framing fault in the kit the gateway sends with (README).

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
    } catch {
      /* fall through to the stand-in */
    }
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

/** Every control id (MSH-10) ever received and how often: a resend is seen even after the list rolls over. */
export interface Hl7Counts {
  total: number;
  distinct: number;
  duplicated: { controlId: string; count: number }[];
  /** Control ids received with different content (MSH-7, the send time, aside): a receiver could not drop these as resends. */
  conflicting: string[];
}

/** The message without MSH-7 (date/time of message), which a resend may carry anew. */
function contentKey(message: string): string {
  return message.replace(/^(MSH(?:\|[^|\r\n]*){5}\|)[^|\r\n]*/, '$1');
}

export class MllpReceiver {
  private messages: ReceivedHl7[] = [];
  private readonly byControlId = new Map<string, number>();
  private readonly contentOf = new Map<string, Set<string>>();
  private total = 0;
  private ackDelayMs = 0;
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
        id: this.nextId++,
        receivedAt: new Date().toISOString(),
        controlId,
        messageType: message.split(/\r|\n/)[0]?.split('|')[8] ?? '',
        ackCode: code,
        ...(error ? { error: `${error.code}: ${error.text}` } : {}),
        message,
        ack,
      });
      this.total++;
      this.byControlId.set(controlId, (this.byControlId.get(controlId) ?? 0) + 1);
      const contents = this.contentOf.get(controlId) ?? new Set<string>();
      contents.add(contentKey(message));
      this.contentOf.set(controlId, contents);
      res.ack = ack;
      // A slow receiver (tests of the sender's lease and fencing): the ACK comes late.
      if (this.ackDelayMs > 0) setTimeout(() => res.end(), this.ackDelayMs);
      else res.end();
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
    this.byControlId.clear();
    this.contentOf.clear();
    this.total = 0;
    this.ackDelayMs = 0;
  }

  counts(): Hl7Counts {
    const duplicated = [...this.byControlId].filter(([, n]) => n > 1).map(([controlId, count]) => ({ controlId, count }));
    const conflicting = [...this.contentOf].filter(([, c]) => c.size > 1).map(([id]) => id);
    return { total: this.total, distinct: this.byControlId.size, duplicated, conflicting };
  }

  setAckDelay(ms: number): void {
    this.ackDelayMs = ms;
  }

  private keep(m: ReceivedHl7): void {
    this.messages.push(m);
    if (this.messages.length > this.capacity) this.messages.shift();
  }
}
