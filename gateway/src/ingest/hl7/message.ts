/**
 * A small HL7 v2 reader: segments split on CR, delimiters taken from MSH-1/MSH-2 (not assumed),
 * escape sequences (\F\ \S\ \T\ \R\ \E\) resolved in component values. (HL7 v2.6 ch. 2.)
 */
export interface Delimiters {
  field: string;
  component: string;
  repetition: string;
  escape: string;
  subcomponent: string;
}

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

export class Hl7ParseError extends Error {
  override name = 'Hl7ParseError';
  constructor(
    message: string,
    /** HL7 table 0357 code: 100 segment sequence, 101 required field missing, 102 data type. */
    readonly code: number,
    readonly location?: string,
  ) {
    super(message);
  }
}

export function parseHl7(text: string): Hl7Message {
  const body = text.replace(/^[\s\v]+/, ''); // leading whitespace or a stray MLLP start byte (VT = \v)
  if (!body.startsWith('MSH')) throw new Hl7ParseError('The message does not start with an MSH segment.', 100, 'MSH');
  if (body.length < 8) throw new Hl7ParseError('The MSH segment is too short to carry its delimiters.', 101, 'MSH^1^1');
  const field = body[3] as string;
  const encEnd = body.indexOf(field, 4);
  const enc = body.slice(4, encEnd < 0 ? 8 : encEnd);
  if (/[A-Za-z0-9\s]/.test(field) || enc.length < 2 || /[A-Za-z0-9\s]/.test(enc)) {
    throw new Hl7ParseError('MSH-1/MSH-2 do not hold valid delimiters.', 102, 'MSH^1^2');
  }
  const delimiters: Delimiters = { field, component: enc[0] as string, repetition: enc[1] as string, escape: enc[2] ?? '\\', subcomponent: enc[3] ?? '&' };
  const segments: Segment[] = [];
  const lines = body.split(/\r\n|\r|\n/);
  let index = 0;
  for (const line of lines) {
    if (!line.trim()) continue;
    index++;
    const parts = line.split(field);
    const name = parts[0] as string;
    if (!/^[A-Z][A-Z0-9]{2}$/.test(name)) throw new Hl7ParseError(`Segment ${index} has no valid segment name ("${name.slice(0, 10)}").`, 100, `${index}`);
    // MSH-1 is the field separator itself, so MSH fields shift by one.
    const fields = name === 'MSH' ? ['MSH', field, ...parts.slice(1)] : parts;
    segments.push({ name, fields, index });
  }
  return { delimiters, segments };
}

export function unescape(value: string, d: Delimiters): string {
  if (!value.includes(d.escape)) return value;
  const e = d.escape.replace(/[.*+?^${}()|[\]\\]/g, '\\$&');
  return value.replace(new RegExp(`${e}([FSTRE]|X[0-9A-Fa-f]+|\\.br)${e}`, 'g'), (_m, code: string) => {
    switch (code) {
      case 'F':
        return d.field;
      case 'S':
        return d.component;
      case 'T':
        return d.subcomponent;
      case 'R':
        return d.repetition;
      case 'E':
        return d.escape;
      case '.br':
        return '\n';
      default:
        return String.fromCharCode(...(code.slice(1).match(/../g) ?? []).map((h) => parseInt(h, 16)));
    }
  });
}

export function escape(value: string, d: Delimiters): string {
  let out = '';
  for (const ch of value) {
    if (ch === d.escape) out += `${d.escape}E${d.escape}`;
    else if (ch === d.field) out += `${d.escape}F${d.escape}`;
    else if (ch === d.component) out += `${d.escape}S${d.escape}`;
    else if (ch === d.subcomponent) out += `${d.escape}T${d.escape}`;
    else if (ch === d.repetition) out += `${d.escape}R${d.escape}`;
    else if (ch === '\r' || ch === '\n') out += ' ';
    else out += ch;
  }
  return out;
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
  const parts = field(seg, n, d).split(d.component);
  return unescape(parts[c - 1] ?? '', d);
}

/** HL7 DTM (YYYY[MM[DD[HH[MM[SS[.S+]]]]]][+/-ZZZZ]) → Date; a missing offset is read as UTC. */
export function parseHl7Time(value: string): Date | null {
  const m = /^(\d{4})(\d{2})?(\d{2})?(\d{2})?(\d{2})?(\d{2})?(?:\.(\d{1,4}))?([+-]\d{4})?$/.exec(value.trim());
  if (!m) return null;
  const [, y, mo = '01', dd = '01', hh = '00', mi = '00', ss = '00', frac = '0', tz] = m;
  const msFrac = Math.round(Number(`0.${frac}`) * 1000);
  let t = Date.UTC(Number(y), Number(mo) - 1, Number(dd), Number(hh), Number(mi), Number(ss), msFrac);
  if (Number.isNaN(t)) return null;
  if (tz) {
    const sign = tz.startsWith('-') ? -1 : 1;
    t -= sign * (Number(tz.slice(1, 3)) * 60 + Number(tz.slice(3, 5))) * 60_000;
  }
  return new Date(t);
}

/** Date → HL7 DTM in UTC with milliseconds and an explicit +0000 offset. */
export function formatHl7Time(d: Date): string {
  const p = (n: number, w = 2) => String(n).padStart(w, '0');
  return `${d.getUTCFullYear()}${p(d.getUTCMonth() + 1)}${p(d.getUTCDate())}${p(d.getUTCHours())}${p(d.getUTCMinutes())}${p(d.getUTCSeconds())}.${p(d.getUTCMilliseconds(), 3)}+0000`;
}
