import { readMsh, type AckError } from './ack.js';

// What the mock receiver demands of an inbound message before it accepts it: a readable MSH with
// a control id and version (HL7 v2 ch. 2), and an ORU^R01 (the result message the gateway sends).
// Codes from HL7 table 0357.

export function checkOru(message: string): AckError | undefined {
  const msh = readMsh(message);
  if (!msh) return { code: '100', text: 'the message does not start with an MSH segment' };
  if (!msh.field(10)) return { code: '101', text: 'MSH-10 message control id is missing' };
  if (!msh.field(12)) return { code: '101', text: 'MSH-12 version id is missing' };
  const [type, event] = msh.field(9).split('^');
  if (type !== 'ORU') return { code: '200', text: `message type ${type || '(none)'} is not accepted here (ORU only)` };
  if (event !== 'R01') return { code: '201', text: `event ${event || '(none)'} is not accepted here (R01 only)` };
  const segments = message
    .split(/\r\n|\r|\n/)
    .filter(Boolean)
    .map((s) => s.slice(0, 3));
  if (!segments.includes('OBX')) return { code: '100', text: 'an ORU^R01 needs at least one OBX segment' };
  return undefined;
}
