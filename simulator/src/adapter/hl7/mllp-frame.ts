/** MLLP framing (HL7 v2 implementation guide, appendix C): 0x0B + message + 0x1C 0x0D. */
export const MLLP_START = 0x0b;
export const MLLP_END = 0x1c;
export const MLLP_CR = 0x0d;

export function frameMllp(message: string): Buffer {
  const body = Buffer.from(message, 'utf8');
  const out = Buffer.allocUnsafe(body.length + 3);
  out[0] = MLLP_START;
  body.copy(out, 1);
  out[body.length + 1] = MLLP_END;
  out[body.length + 2] = MLLP_CR;
  return out;
}

/** Reassembles frames from a TCP byte stream (frames may arrive split or several at once). */
export class MllpDeframer {
  private buf: Buffer = Buffer.alloc(0);

  push(chunk: Buffer): string[] {
    this.buf = this.buf.length ? Buffer.concat([this.buf, chunk]) : chunk;
    const out: string[] = [];
    for (;;) {
      const start = this.buf.indexOf(MLLP_START);
      if (start < 0) {
        this.buf = Buffer.alloc(0);
        return out;
      }
      let end = -1;
      for (let i = start + 1; i + 1 < this.buf.length; i++) {
        if (this.buf[i] === MLLP_END && this.buf[i + 1] === MLLP_CR) {
          end = i;
          break;
        }
      }
      if (end < 0) {
        this.buf = this.buf.subarray(start);
        return out;
      }
      out.push(this.buf.subarray(start + 1, end).toString('utf8'));
      this.buf = this.buf.subarray(end + 2);
    }
  }
}
