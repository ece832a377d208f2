/**
 * A small HL7 v2 reader: segments split on CR, delimiters taken from MSH-1/MSH-2 (not assumed),
 * escape sequences resolved in component values (HL7 v2.6 ch. 2.5–2.7). Bounded: a message with
 * more segments, or a segment with more fields, than the caps is refused naming the cap.
 */
import { unescapeHl7, type Delimiters } from './escape';

export interface Segment {
  name: string;
  /** fields[n] is field n as HL7 numbers it (for MSH, fields[1] is the field separator itself). */
  fields: string[];
  /** 1-based position of the segment in the message, for error locations (ERR-2). */
  index: number;
}

export interface Hl7Message {
  delimiters: Delimiters;
  segments: Segment[];
}

export interface Hl7Limits {
  /** Most segments in one message. */
  maxSegments: number;
  /** Most fields in one segment. */
  maxFieldsPerSegment: number;
}

export const DEFAULT_HL7_LIMITS: Hl7Limits = { maxSegments: 100_000, maxFieldsPerSegment: 256 };

export class Hl7ParseError extends Error {
  override name = 'Hl7ParseError';
  constructor(
    message: string,
    /** HL7 table 0357: 100 segment sequence, 101 required field missing, 102 data type (also a cap). */
    readonly code: number,
    readonly location?: string,
    /** Set when a cap (not the syntax) refused the message: which one, e.g. `maxSegments=100000`. */
    readonly limit?: string,
  ) {
    super(message);
  }
}

/**
 * Reads segments one at a time, so a caller can spread a large message over several turns of
 * the event loop (see `parseHl7Async`). Linear in the message length.
 */
export class SegmentCursor {
  readonly delimiters: Delimiters;
  private readonly text: string | null;
  private readonly bytes: Buffer | null;
  private from = 0;
  private index = 0;
  /** Lines of the current CR-separated piece still to read (a piece may hold LF-separated lines). */
  private queued: string[] = [];

  /**
   * `input` as text, or as the received bytes: then each segment is decoded from UTF-8 on its own
   * (CR and LF never occur inside a multi-byte character), so no single step converts megabytes.
   */
  constructor(
    input: string | Buffer,
    private readonly limits: Hl7Limits = DEFAULT_HL7_LIMITS,
  ) {
    let start = 0;
    const at = (i: number) => (typeof input === 'string' ? input.charCodeAt(i) : (input[i] as number));
    // Leading whitespace or a stray MLLP start byte (VT).
    while (start < input.length && [0x20, 0x09, 0x0a, 0x0d, 0x0b, 0x0c].includes(at(start))) start++;
    const headLen = Math.min(input.length - start, 64);
    const head = typeof input === 'string' ? input.slice(start, start + headLen) : input.toString('utf8', start, start + headLen);
    if (!head.startsWith('MSH')) throw new Hl7ParseError('The message does not start with an MSH segment.', 100, 'MSH');
    if (head.length < 8) throw new Hl7ParseError('The MSH segment is too short to carry its delimiters.', 101, 'MSH^1^1');
    const field = head[3] as string;
    const encEnd = head.indexOf(field, 4);
    const enc = head.slice(4, encEnd < 0 ? 8 : Math.min(encEnd, 9));
    if (/[A-Za-z0-9\s]/.test(field) || enc.length < 2 || /[A-Za-z0-9\s]/.test(enc)) {
      throw new Hl7ParseError('MSH-1/MSH-2 do not hold valid delimiters.', 102, 'MSH^1^2');
    }
    this.delimiters = { field, component: enc[0] as string, repetition: enc[1] as string, escape: enc[2] ?? '\\', subcomponent: enc[3] ?? '&' };
    this.text = typeof input === 'string' ? input : null;
    this.bytes = typeof input === 'string' ? null : input;
    this.from = start;
  }

  private nextLine(): string | null {
    if (this.queued.length) return this.queued.shift() as string;
    if (this.text !== null) {
      const body = this.text;
      if (this.from >= body.length) return null;
      let to = this.from;
      while (to < body.length && body.charCodeAt(to) !== 13 && body.charCodeAt(to) !== 10) to++;
      const line = body.slice(this.from, to);
      this.from = to + 1;
      return line;
    }
    const buf = this.bytes as Buffer;
    if (this.from >= buf.length) return null;
    let to = buf.indexOf(13, this.from);
    if (to < 0) to = buf.length;
    const piece = buf.toString('utf8', this.from, to);
    this.from = to + 1;
    if (!piece.includes('\n')) return piece;
    this.queued = piece.split('\n');
    return this.queued.shift() as string;
  }

  /** The next segment, or null at the end of the message. */
  next(): Segment | null {
    const { limits } = this;
    const field = this.delimiters.field;
    for (let line = this.nextLine(); line !== null; line = this.nextLine()) {
      if (!line.trim()) continue;
      const index = ++this.index;
      if (index > limits.maxSegments) {
        throw new Hl7ParseError(`The message has more than ${limits.maxSegments} segments.`, 102, `${index}`, `maxSegments=${limits.maxSegments}`);
      }
      const parts = line.split(field, limits.maxFieldsPerSegment + 2);
      if (parts.length > limits.maxFieldsPerSegment + 1) {
        throw new Hl7ParseError(
          `Segment ${index} has more than ${limits.maxFieldsPerSegment} fields.`,
          102,
          `${index}`,
          `maxFieldsPerSegment=${limits.maxFieldsPerSegment}`,
        );
      }
      const name = parts[0] as string;
      if (!/^[A-Z][A-Z0-9]{2}$/.test(name)) throw new Hl7ParseError(`Segment ${index} has no valid segment name ("${name.slice(0, 10)}").`, 100, `${index}`);
      // MSH-1 is the field separator itself, so MSH fields shift by one.
      const fields = name === 'MSH' ? ['MSH', field, ...parts.slice(1)] : parts;
      return { name, fields, index };
    }
    return null;
  }
}

export function parseHl7(text: string | Buffer, limits: Hl7Limits = DEFAULT_HL7_LIMITS): Hl7Message {
  const cursor = new SegmentCursor(text, limits);
  const segments: Segment[] = [];
  for (let s = cursor.next(); s; s = cursor.next()) segments.push(s);
  return { delimiters: cursor.delimiters, segments };
}

/**
 * Cooperative time slicing: `await slice()` returns at once until `budgetMs` of work has passed
 * since the last pause, then gives the event loop a turn (setImmediate), so one large message
 * cannot hold up health checks, other connections or HTTP.
 */
export function timeSlicer(budgetMs = 4): () => Promise<void> | undefined {
  let since = performance.now();
  return () => {
    if (performance.now() - since < budgetMs) return undefined;
    return new Promise<void>((resolve) =>
      setImmediate(() => {
        since = performance.now();
        resolve();
      }),
    );
  };
}

/** `parseHl7` that pauses every few ms of work. */
export async function parseHl7Async(text: string | Buffer, limits: Hl7Limits = DEFAULT_HL7_LIMITS, slice = timeSlicer()): Promise<Hl7Message> {
  const cursor = new SegmentCursor(text, limits);
  const segments: Segment[] = [];
  for (let s = cursor.next(); s; s = cursor.next()) {
    segments.push(s);
    if ((segments.length & 255) === 0) await slice();
  }
  return { delimiters: cursor.delimiters, segments };
}

/** Raw field n (first repetition), '' when absent. */
export function field(seg: Segment, n: number, d: Delimiters): string {
  const f = seg.fields[n] ?? '';
  if (seg.name === 'MSH' && n <= 2) return f;
  const i = f.indexOf(d.repetition);
  return i < 0 ? f : f.slice(0, i);
}

/** Component c (1-based) of field n, unescaped. */
export function component(seg: Segment, n: number, c: number, d: Delimiters): string {
  const f = field(seg, n, d);
  let start = 0;
  for (let k = 1; k < c; k++) {
    const at = f.indexOf(d.component, start);
    if (at < 0) return '';
    start = at + 1;
  }
  const end = f.indexOf(d.component, start);
  return unescapeHl7(end < 0 ? f.slice(start) : f.slice(start, end), d);
}
