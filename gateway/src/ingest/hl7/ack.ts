import { randomBytes } from 'node:crypto';
import type { FieldError } from '../../http/problem';
import type { IngestRefusal } from '../refusal';
import { DEFAULT_DELIMITERS, escapeHl7, formatHl7Time, parseHl7 } from '@ebbgate/shared/hl7';
import { readHeader, type Hl7Header } from './pcd01';

export type AckCode = 'AA' | 'AE' | 'AR' | 'CA' | 'CE' | 'CR';

/** Best-effort header of a message we could not fully read, so the ACK can still echo MSH-10. */
export function headerOf(raw: Buffer): Hl7Header | null {
  try {
    // Only the first segment is decoded, however large the message.
    let start = 0;
    while (start < raw.length && (raw[start] === 0x0b || raw[start] === 0x20 || raw[start] === 0x0a || raw[start] === 0x0d || raw[start] === 0x09)) start++;
    let end = start;
    while (end < raw.length && end - start < 65_536 && raw[end] !== 0x0d && raw[end] !== 0x0a) end++;
    return readHeader(parseHl7(raw.subarray(start, end).toString('utf8')));
  } catch {
    return null;
  }
}

/** HL7 ERR-2 location (segment^sequence^field) from our error paths (`OBX[7]-14`, `OBX[7].code`). */
function errorLocation(path: string): string {
  const m = /^([A-Z][A-Z0-9]{2})(?:\[(\d+)\])?(?:-(\d+))?(?:\.(code|sampleRate))?/.exec(path);
  if (!m) return path === 'monitorId' ? 'OBX^^18' : '';
  const fieldNo = m[3] ?? (m[4] === 'code' ? '3' : m[4] === 'sampleRate' ? '4' : '');
  return [m[1], m[2] ?? '', fieldNo].join('^');
}

/**
 * Acknowledgement code for a refusal (HL7 v2.6 ch. 2.9): reject (AR/CR) for unreadable,
 * oversize or unauthorised input and for the gateway's own passing trouble (database down,
 * backlog full: ERR-3 207, so a conforming sender sends the message again), error (AE/CE) for
 * content the gateway read but cannot use.
 */
export function ackCodeFor(refusal: IngestRefusal | undefined, enhanced: boolean): AckCode {
  if (!refusal) return enhanced ? 'CA' : 'AA';
  const reject = refusal.kind === 'invalid' || refusal.kind === 'too-large' || refusal.kind === 'unauthorized' || refusal.transient;
  return enhanced ? (reject ? 'CR' : 'CE') : reject ? 'AR' : 'AE';
}

/** HL7 table 0357 code for a refusal (ERR-3). */
export function hl7ErrorCode(refusal: IngestRefusal, e: FieldError | undefined): number {
  if (refusal.hl7Code) return refusal.hl7Code;
  switch (refusal.kind) {
    case 'invalid':
      return 102; // data type error
    case 'unmapped':
      return e?.path === 'monitorId' ? 204 : 103; // unknown key identifier / table value not found
    case 'conflict':
    case 'conflicting':
      return 205; // duplicate key identifier
    case 'unauthorized':
      return 204; // unknown key identifier (the credential does not cover this monitor)
    case 'too-large':
      return 102; // data type error (a length or count over its cap); never 207, which asks for a resend
    default:
      return 207; // application internal error (backlog, database unavailable): send again later
  }
}

const ERROR_TEXT: Record<number, string> = {
  100: 'Segment sequence error',
  101: 'Required field missing',
  102: 'Data type error',
  103: 'Table value not found',
  200: 'Unsupported message type',
  204: 'Unknown key identifier',
  205: 'Duplicate key identifier',
  207: 'Application internal error',
};

let counter = 0;
const processTag = randomBytes(3).toString('hex').toUpperCase();

/**
 * ACK^R01 answering `header` (or an unreadable message): MSA-1 in the sender's mode, MSA-2
 * echoing MSH-10, one ERR per problem (ERR-2 location, ERR-3 table 0357 code, ERR-4 severity,
 * ERR-8 the reason in words). Control ids are unique per process and message, not per second.
 */
export function buildAck(header: Hl7Header | null, code: AckCode, refusal?: IngestRefusal, note?: string): string {
  counter = (counter + 1) % 1_000_000_000;
  const now = formatHl7Time(new Date());
  const version = header?.version || '2.6';
  const e = (s: string) => escapeHl7(s, DEFAULT_DELIMITERS);
  const segs = [
    [
      'MSH',
      '^~\\&',
      'EBBGATE',
      'EBBGATE',
      header?.sendingApplication ?? '',
      header?.sendingFacility ?? '',
      now,
      '',
      'ACK^R01^ACK',
      `EBG${processTag}${counter}`,
      'P',
      version,
    ].join('|'),
    ['MSA', code, e(header?.controlId ?? ''), e((refusal ? refusal.reason : (note ?? '')).slice(0, 80))].join('|'),
  ];
  if (refusal) {
    const errors = refusal.errors.length ? refusal.errors : [undefined];
    for (const err of errors) {
      const c = hl7ErrorCode(refusal, err);
      const words = err ? `${refusal.reason} ${err.path}: ${err.message}` : refusal.reason;
      segs.push(
        [
          'ERR',
          '',
          errorLocation(err?.path ?? ''),
          `${c}^${ERROR_TEXT[c] ?? 'Error'}^HL70357`,
          'E',
          '',
          '',
          e(words.slice(0, 2000)),
          e(words.slice(0, 250)),
        ].join('|'),
      );
    }
  }
  return segs.join('\r') + '\r';
}
