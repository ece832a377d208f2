// FHIR date search: every date/dateTime/instant is an interval set by its precision
// (FHIR R4 search, "date" parameter type). A value without a time zone is read as UTC.

export interface Interval {
  lo: number; // inclusive, epoch ms
  hi: number; // exclusive, epoch ms
}

const DATE_RE = /^(\d{4})(?:-(\d{2})(?:-(\d{2})(?:T(\d{2}):(\d{2})(?::(\d{2})(\.\d+)?)?(Z|[+-]\d{2}:\d{2})?)?)?)?$/;

export function parseFhirDate(text: string): Interval | undefined {
  const m = DATE_RE.exec(text);
  if (!m) return undefined;
  const [, y, mo, d, h, mi, s, frac, tz] = m;
  const offsetMs = tz && tz !== 'Z' ? (tz[0] === '-' ? -1 : 1) * (Number(tz.slice(1, 3)) * 60 + Number(tz.slice(4, 6))) * 60_000 : 0;
  const utc = (yy: number, mm = 0, dd = 1, hh = 0, mn = 0, ss = 0, ms = 0) => Date.UTC(yy, mm, dd, hh, mn, ss, ms) - offsetMs;
  const Y = Number(y);
  if (mo === undefined) return { lo: utc(Y), hi: utc(Y + 1) };
  const M = Number(mo) - 1;
  if (d === undefined) return { lo: utc(Y, M), hi: utc(Y, M + 1) };
  const D = Number(d);
  if (h === undefined) return { lo: utc(Y, M, D), hi: utc(Y, M, D + 1) };
  const H = Number(h);
  const N = Number(mi);
  if (s === undefined) return { lo: utc(Y, M, D, H, N), hi: utc(Y, M, D, H, N + 1) };
  const S = Number(s);
  if (frac === undefined) return { lo: utc(Y, M, D, H, N, S), hi: utc(Y, M, D, H, N, S + 1) };
  const ms = Math.floor(Number(frac) * 1000);
  return { lo: utc(Y, M, D, H, N, S, ms), hi: utc(Y, M, D, H, N, S, ms) + 1 };
}

/** A Period's interval: a missing start or end is open on that side. */
export function periodInterval(start?: string, end?: string): Interval | undefined {
  const a = start ? parseFhirDate(start) : undefined;
  const b = end ? parseFhirDate(end) : undefined;
  if (!a && !b) return undefined;
  return { lo: a ? a.lo : -Infinity, hi: b ? b.hi : Infinity };
}

export type DatePrefix = 'eq' | 'ne' | 'gt' | 'lt' | 'ge' | 'le' | 'sa' | 'eb';

/** Does the target interval satisfy `prefix search`? Semantics from the FHIR R4 search page, simplified to intervals. */
export function matchesDate(prefix: DatePrefix, search: Interval, target: Interval): boolean {
  switch (prefix) {
    case 'eq':
      return target.lo >= search.lo && target.hi <= search.hi;
    case 'ne':
      return !(target.lo >= search.lo && target.hi <= search.hi);
    case 'gt':
      return target.hi > search.hi;
    case 'lt':
      return target.lo < search.lo;
    case 'ge':
      return target.hi > search.lo;
    case 'le':
      return target.lo < search.hi;
    case 'sa':
      return target.lo >= search.hi;
    case 'eb':
      return target.hi <= search.lo;
  }
}
