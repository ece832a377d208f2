import { DEFAULT_DELIMITERS, unescapeHl7 } from '@ebbgate/shared/hl7';

/** What an HL7 v2 ACK said (MSA and ERR segments). */
export interface Hl7Ack {
  /** MSA-1: AA/AE/AR (original mode) or CA/CE/CR (enhanced mode). */
  code: string;
  /** MSA-2: the control id of the message acknowledged. */
  controlId: string;
  /** MSA-3 text, if any. */
  text: string;
  accepted: boolean;
  /** ERR-3 error code (HL7 table 0357), ERR-4 severity, ERR-8 user message (or ERR-3 text). */
  errors: { code: string; text: string; severity: string }[];
  raw: string;
}

/** Parses an ACK; throws when there is no MSA segment (then it is not an acknowledgement). */
export function parseAck(raw: string): Hl7Ack {
  const segments = raw.split(/\r\n|\r|\n/).filter(Boolean);
  const msh = segments.find((s) => s.startsWith('MSH'));
  const fieldSep = msh?.[3] ?? '|';
  const compSep = msh?.[4] ?? '^';
  const fields = (s: string) => s.split(fieldSep);
  const delimiters = {
    ...DEFAULT_DELIMITERS,
    field: fieldSep,
    component: compSep,
    repetition: msh?.[5] ?? '~',
    escape: msh?.[6] ?? '\\',
    subcomponent: msh?.[7] ?? '&',
  };
  const unescape = (s: string) => unescapeHl7(s, delimiters);
  const msa = segments.find((s) => s.startsWith('MSA'));
  if (!msa) throw new Error('answer has no MSA segment');
  const f = fields(msa);
  const code = (f[1] ?? '').trim();
  const errors = segments
    .filter((s) => s.startsWith('ERR'))
    .map((s) => {
      const e = fields(s);
      const err3 = (e[3] ?? '').split(compSep);
      return { code: err3[0] ?? '', text: unescape(e[8] || err3[1] || e[7] || ''), severity: e[4] ?? '' };
    });
  return { code, controlId: f[2] ?? '', text: unescape(f[3] ?? ''), accepted: code === 'AA' || code === 'CA', errors, raw };
}

/** One-line reason for a negative ACK. */
export function ackReason(a: Hl7Ack): string {
  const errs = a.errors.map((e) => [e.code, e.text].filter(Boolean).join(' ')).join('; ');
  return [`MSA ${a.code}`, a.text, errs].filter(Boolean).join(' — ');
}
