// HL7 v2 acknowledgement built by hand (simple-hl7's own ACK is fixed to v2.3 and its control id
// repeats within a second). MSA-1 is AA/AE/AR in original mode, CA/CE/CR in enhanced mode
// (MSH-15/16 present); MSA-2 echoes MSH-10; ERR-3 uses HL7 table 0357, ERR-4 the severity.

export interface MshView {
  fieldSep: string;
  encoding: string;
  field: (n: number) => string;
}

/** Reads MSH-n from the first segment (MSH-1 is the field separator itself). */
export function readMsh(message: string): MshView | undefined {
  const first = message.split(/\r\n|\r|\n/)[0] ?? '';
  if (!first.startsWith('MSH') || first.length < 8) return undefined;
  const fieldSep = first[3]!;
  const parts = first.split(fieldSep);
  return { fieldSep, encoding: parts[1] ?? '^~\\&', field: (n) => (n === 1 ? fieldSep : (parts[n - 1] ?? '')) };
}

export type AckOutcome = 'accept' | 'error' | 'reject';
export interface AckError {
  code: string;
  text: string;
  severity?: 'E' | 'W' | 'F';
}

let sequence = 0;
function controlId(): string {
  sequence = (sequence + 1) % 1_000_000;
  return `MEHR${Date.now().toString(36)}${sequence.toString(36)}`.slice(0, 20);
}

function hl7Timestamp(d = new Date()): string {
  const p = (n: number) => String(n).padStart(2, '0');
  return `${d.getUTCFullYear()}${p(d.getUTCMonth() + 1)}${p(d.getUTCDate())}${p(d.getUTCHours())}${p(d.getUTCMinutes())}${p(d.getUTCSeconds())}+0000`;
}

/** Replaces HL7 delimiters in free text so an error message cannot break the ACK's structure. */
function safeText(s: string): string {
  return s.replace(/[|^~\\&\r\n]/g, ' ').slice(0, 200);
}

export function buildAck(message: string, outcome: AckOutcome, error?: AckError): { ack: string; code: string } {
  const msh = readMsh(message);
  const enhanced = !!msh && (msh.field(15) !== '' || msh.field(16) !== '');
  const code = (enhanced ? 'C' : 'A') + { accept: 'A', error: 'E', reject: 'R' }[outcome];
  const event = msh?.field(9).split('^')[1] ?? '';
  const header = [
    'MSH',
    '^~\\&',
    msh?.field(5) ?? '',
    msh?.field(6) ?? '',
    msh?.field(3) ?? '',
    msh?.field(4) ?? '',
    hl7Timestamp(),
    '',
    `ACK^${event}^ACK`,
    controlId(),
    msh?.field(11) || 'P',
    msh?.field(12) || '2.6',
  ].join('|');
  const segments = [header, ['MSA', code, msh?.field(10) ?? '', error ? safeText(error.text) : ''].join('|').replace(/\|+$/, '')];
  if (error)
    segments.push(
      ['ERR', '', '', `${error.code}^${error.code === '207' ? 'Application internal error' : safeText(error.text)}^HL70357`, error.severity ?? 'E'].join('|'),
    );
  return { ack: segments.join('\r'), code };
}
