/** HL7 v2 delimiters and escape sequences (HL7 v2.6 ch. 2.5.4 and 2.7). */
export interface Delimiters {
  field: string;
  component: string;
  repetition: string;
  escape: string;
  subcomponent: string;
}

/** The delimiters every message we write declares in MSH-1/MSH-2 (`|^~\&`). */
export const DEFAULT_DELIMITERS: Delimiters = { field: '|', component: '^', repetition: '~', escape: '\\', subcomponent: '&' };

/** Longest `\X..\` hex escape resolved (HL7 leaves the length open; a cap keeps decoding bounded). */
export const MAX_HEX_ESCAPE_CHARS = 256;

/**
 * Text → field content: the five delimiters become `\F\ \S\ \T\ \R\ \E\`; a line break
 * becomes a space (our fields are single-line; FT line breaks are not used).
 */
export function escapeHl7(value: string, d: Delimiters = DEFAULT_DELIMITERS): string {
  let out = '';
  let plainFrom = 0;
  for (let i = 0; i < value.length; i++) {
    const ch = value[i] as string;
    let rep: string | null = null;
    if (ch === d.escape) rep = 'E';
    else if (ch === d.field) rep = 'F';
    else if (ch === d.component) rep = 'S';
    else if (ch === d.subcomponent) rep = 'T';
    else if (ch === d.repetition) rep = 'R';
    else if (ch === '\r' || ch === '\n') rep = ' ';
    if (rep === null) continue;
    out += value.slice(plainFrom, i) + (rep === ' ' ? ' ' : `${d.escape}${rep}${d.escape}`);
    plainFrom = i + 1;
  }
  return plainFrom === 0 ? value : out + value.slice(plainFrom);
}

const reCache = new Map<string, RegExp>();
function escapeRegex(d: Delimiters): RegExp {
  let re = reCache.get(d.escape);
  if (!re) {
    const e = d.escape.replace(/[.*+?^${}()|[\]\\]/g, '\\$&');
    // The hex escape is capped so an endless `\X0000…` cannot make one value arbitrarily costly.
    re = new RegExp(`${e}([FSTRE]|X[0-9A-Fa-f]{2,${MAX_HEX_ESCAPE_CHARS}}|\\.br)${e}`, 'g');
    reCache.set(d.escape, re);
  }
  return re;
}

/** Field content → text: resolves `\F\ \S\ \T\ \R\ \E\ \.br\ \Xhh…\`; unknown sequences stay as they are. */
export function unescapeHl7(value: string, d: Delimiters = DEFAULT_DELIMITERS): string {
  if (!value.includes(d.escape)) return value;
  return value.replace(escapeRegex(d), (_m, code: string) => {
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
