/**
 * MLLP framing (HL7 v2 implementation guide, appendix C, "Minimal Lower Layer Protocol"):
 * <VT 0x0B> message <FS 0x1C><CR 0x0D>. One reader for every MLLP peer in the project (the
 * gateway listener, the HL7 destination, the adapter client), bounded by a maximum frame size.
 */
export const MLLP_START = 0x0b;
export const MLLP_END = 0x1c;
export const MLLP_CR = 0x0d;

export function frameMllp(message: string | Buffer): Buffer {
  const body = typeof message === 'string' ? Buffer.from(message, 'utf8') : message;
  const out = Buffer.allocUnsafe(body.length + 3);
  out[0] = MLLP_START;
  body.copy(out, 1);
  out[body.length + 1] = MLLP_END;
  out[body.length + 2] = MLLP_CR;
  return out;
}

/** What the reader found in the byte stream, in stream order. */
export type MllpEvent =
  /** A complete message (the bytes between the start block and FS CR). */
  | { kind: 'frame'; message: Buffer }
  /** Bytes outside any frame that are not just whitespace. */
  | { kind: 'stray'; bytes: Buffer }
  /** A frame grew past the limit: its first `head` bytes; the rest is skipped up to its end block. */
  | { kind: 'oversize'; head: Buffer; size: number };

export interface MllpReaderOptions {
  /** Largest message (between the start and end blocks) the reader assembles. */
  maxFrameBytes: number;
  /** How much of an oversize frame is kept for the answer and the record (default 64 KiB). */
  headBytes?: number;
}

const isBlank = (b: Buffer) => {
  for (let i = 0; i < b.length; i++) {
    const x = b[i];
    if (x !== 0x20 && x !== 0x0a && x !== 0x0d && x !== 0x09) return false;
  }
  return true;
};

/**
 * Reassembles frames from a TCP byte stream (frames may arrive split or several at once). Each
 * chunk is scanned once (a frame's parts are kept as a list and joined once it is complete), so
 * a slow drip of a large frame costs linear time; memory is bounded by `maxFrameBytes`.
 */
export class MllpReader {
  private readonly max: number;
  private readonly headBytes: number;
  /** Bytes outside a frame that have not been reported yet. */
  private outside: Buffer[] = [];
  private outsideLen = 0;
  /** Parts of the frame being assembled (after the start block), when `inFrame`. */
  private parts: Buffer[] = [];
  private partsLen = 0;
  private inFrame = false;
  /** The last byte seen in the frame was FS: a CR at the start of the next chunk ends it. */
  private pendingFs = false;
  /** Skipping the rest of an oversize frame up to its end block. */
  private discarding = false;

  constructor(opts: MllpReaderOptions) {
    this.max = opts.maxFrameBytes;
    this.headBytes = opts.headBytes ?? 65_536;
  }

  /** Bytes held (frame being assembled and unreported stray bytes). */
  get buffered(): number {
    return this.partsLen + this.outsideLen;
  }

  /** True while a frame is half received. */
  get midFrame(): boolean {
    return this.inFrame;
  }

  push(chunk: Buffer): MllpEvent[] {
    const out: MllpEvent[] = [];
    let data = chunk;
    while (data.length) {
      if (this.discarding) data = this.skip(data);
      else if (!this.inFrame) data = this.seekStart(data, out);
      else data = this.collect(data, out);
    }
    return out;
  }

  /** Reports stray bytes held outside a frame (the sender paused or the connection ended). */
  takeStray(): MllpEvent[] {
    if (!this.outsideLen) return [];
    const bytes = Buffer.concat(this.outside, this.outsideLen);
    this.outside = [];
    this.outsideLen = 0;
    return isBlank(bytes) ? [] : [{ kind: 'stray', bytes }];
  }

  /** Whatever is held and not blank (a frame cut off by the peer closing, or stray bytes). */
  takeRemainder(): Buffer | null {
    const all = Buffer.concat([...this.outside, ...(this.inFrame ? [Buffer.from([MLLP_START]), ...this.parts] : [])]);
    this.outside = [];
    this.outsideLen = 0;
    this.parts = [];
    this.partsLen = 0;
    this.inFrame = false;
    return all.length && !isBlank(all) ? all : null;
  }

  private skip(data: Buffer): Buffer {
    if (this.pendingFs && data[0] === MLLP_CR) {
      this.pendingFs = false;
      this.discarding = false;
      return data.subarray(1);
    }
    this.pendingFs = false;
    let at = data.indexOf(MLLP_END);
    while (at >= 0) {
      if (at + 1 >= data.length) {
        this.pendingFs = true;
        return Buffer.alloc(0);
      }
      if (data[at + 1] === MLLP_CR) {
        this.discarding = false;
        return data.subarray(at + 2);
      }
      at = data.indexOf(MLLP_END, at + 1);
    }
    return Buffer.alloc(0);
  }

  private seekStart(data: Buffer, out: MllpEvent[]): Buffer {
    const at = data.indexOf(MLLP_START);
    const before = at < 0 ? data : data.subarray(0, at);
    if (before.length && !(this.outsideLen === 0 && isBlank(before))) {
      this.outside.push(before);
      this.outsideLen += before.length;
    }
    if (at < 0) {
      if (this.outsideLen > this.max) out.push(...this.takeStray());
      return Buffer.alloc(0);
    }
    out.push(...this.takeStray());
    this.inFrame = true;
    this.parts = [];
    this.partsLen = 0;
    this.pendingFs = false;
    return data.subarray(at + 1);
  }

  private collect(data: Buffer, out: MllpEvent[]): Buffer {
    let end = -1;
    if (this.pendingFs && data[0] === MLLP_CR) {
      // FS was the last byte of the previous chunk: drop it from the parts and finish.
      const last = this.parts[this.parts.length - 1] as Buffer;
      this.parts[this.parts.length - 1] = last.subarray(0, last.length - 1);
      this.partsLen--;
      this.pendingFs = false;
      return this.finish(out, data.subarray(1));
    }
    this.pendingFs = false;
    let at = data.indexOf(MLLP_END);
    while (at >= 0) {
      if (at + 1 >= data.length) {
        this.pendingFs = true;
        break;
      }
      if (data[at + 1] === MLLP_CR) {
        end = at;
        break;
      }
      at = data.indexOf(MLLP_END, at + 1);
    }
    const body = end < 0 ? data : data.subarray(0, end);
    const rest = end < 0 ? Buffer.alloc(0) : data.subarray(end + 2);
    if (this.partsLen + body.length - (end < 0 && this.pendingFs ? 1 : 0) > this.max) {
      const head = Buffer.concat([...this.parts, body]).subarray(0, this.headBytes);
      const size = this.partsLen + body.length;
      this.parts = [];
      this.partsLen = 0;
      this.inFrame = false;
      if (end < 0) {
        // Skip the remainder of this frame; an FS at the very end of the chunk may end it.
        this.discarding = true;
      } else this.pendingFs = false;
      out.push({ kind: 'oversize', head: Buffer.from(head), size });
      return rest;
    }
    this.parts.push(body);
    this.partsLen += body.length;
    if (end < 0) return rest;
    return this.finish(out, rest);
  }

  private finish(out: MllpEvent[], rest: Buffer): Buffer {
    // Copied so the frame does not pin the socket's (possibly much larger) chunk buffers.
    out.push({ kind: 'frame', message: Buffer.from(Buffer.concat(this.parts, this.partsLen)) });
    this.parts = [];
    this.partsLen = 0;
    this.inFrame = false;
    return rest;
  }
}

/** The text-only reader for peers that only ever expect answers (ACKs): frames as UTF-8 strings. */
export class MllpDeframer {
  private readonly reader: MllpReader;
  constructor(maxFrameBytes = 1_048_576) {
    this.reader = new MllpReader({ maxFrameBytes, headBytes: 4096 });
  }

  push(chunk: Buffer): string[] {
    const out: string[] = [];
    for (const e of this.reader.push(chunk)) if (e.kind === 'frame') out.push(e.message.toString('utf8'));
    // Stray bytes between answers are dropped: an answer peer has nobody to tell.
    this.reader.takeStray();
    return out;
  }
}
