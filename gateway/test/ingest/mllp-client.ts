import net from 'node:net';

/**
 * The complete MLLP frames (0x0B … 0x1C 0x0D) in `buf` as text, and the bytes after the last one.
 * Written here, apart from the shared kit, so framing tests do not check the kit against itself.
 */
export function splitFrames(buf: Buffer): { frames: string[]; rest: Buffer } {
  const frames: string[] = [];
  let rest = buf;
  for (;;) {
    const s = rest.indexOf(0x0b);
    const e = rest.indexOf(Buffer.from([0x1c, 0x0d]));
    if (s < 0 || e < 0) break;
    frames.push(rest.subarray(s + 1, e).toString('utf8'));
    rest = rest.subarray(e + 2);
  }
  return { frames, rest };
}

/** A bare MLLP peer for framing tests: writes bytes as given and collects framed answers. */
export class RawMllpPeer {
  private buf: Buffer = Buffer.alloc(0);
  private readonly frames: string[] = [];
  private waiters: (() => void)[] = [];
  private constructor(private readonly socket: net.Socket) {
    socket.on('data', (chunk: Buffer) => {
      const { frames, rest } = splitFrames(Buffer.concat([this.buf, chunk]));
      this.buf = rest;
      this.frames.push(...frames);
      this.waiters.splice(0).forEach((w) => w());
    });
  }

  static connect(port: number): Promise<RawMllpPeer> {
    return new Promise((resolve, reject) => {
      const s = net.connect({ host: '127.0.0.1', port }, () => resolve(new RawMllpPeer(s)));
      s.once('error', reject);
    });
  }

  write(bytes: Buffer | string): void {
    this.socket.write(bytes);
  }

  send(message: string): void {
    this.write(Buffer.concat([Buffer.from([0x0b]), Buffer.from(message, 'utf8'), Buffer.from([0x1c, 0x0d])]));
  }

  /** Waits until `n` answers have arrived (or times out), returns them all. */
  async answers(n: number, timeoutMs = 10_000): Promise<string[]> {
    const until = Date.now() + timeoutMs;
    while (this.frames.length < n) {
      if (Date.now() > until) throw new Error(`only ${this.frames.length} of ${n} MLLP answers arrived`);
      await new Promise<void>((r) => {
        this.waiters.push(r);
        setTimeout(r, 100);
      });
    }
    return this.frames.slice(0, n);
  }

  get open(): boolean {
    return !this.socket.destroyed;
  }

  close(): void {
    this.socket.end();
  }
}

/** MSA-1 and MSA-2 and the ERR-3 codes of an ACK. */
export function readAck(ack: string) {
  const segs = ack
    .split('\r')
    .filter(Boolean)
    .map((s) => s.split('|'));
  const msa = segs.find((s) => s[0] === 'MSA') ?? [];
  return { code: msa[1], controlId: msa[2], errors: segs.filter((s) => s[0] === 'ERR').map((s) => ({ location: s[2], code: s[3], text: s[8] })) };
}
