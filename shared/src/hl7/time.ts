/** HL7 v2 DTM (HL7 v2.6 ch. 2A.22): YYYY[MM[DD[HH[MM[SS[.S[S[S[S]]]]]]]]][+/-ZZZZ]. */

/** DTM → Date; a missing offset is read as UTC (our senders always write +0000). Null when not a DTM. */
export function parseHl7Time(value: string): Date | null {
  if (value.length > 40) return null;
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

/** Date (or ISO string) → DTM in UTC with milliseconds and an explicit offset: YYYYMMDDHHMMSS.SSS+0000. */
export function formatHl7Time(at: Date | string): string {
  const d = typeof at === 'string' ? new Date(at) : at;
  const p = (n: number, w = 2) => String(n).padStart(w, '0');
  return `${d.getUTCFullYear()}${p(d.getUTCMonth() + 1)}${p(d.getUTCDate())}${p(d.getUTCHours())}${p(d.getUTCMinutes())}${p(d.getUTCSeconds())}.${p(d.getUTCMilliseconds(), 3)}+0000`;
}
