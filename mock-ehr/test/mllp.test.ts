import { connect } from 'node:net';
import hl7 from 'simple-hl7';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { ReceivedHl7, RunningMockEhr } from '../src/index.js';
import { admin, startTestEhr } from './helpers.js';

// References: HL7 v2 implementation guide appendix C (MLLP frame 0x0B … 0x1C 0x0D); HL7 v2 ch. 2
// acknowledgements: MSA-1 AA/AR in original mode, CA in enhanced mode (MSH-15/16 set), MSA-2 echoes
// MSH-10, ERR-3 from HL7 table 0357. The ACK is read back with simple-hl7's parser.

let ehr: RunningMockEhr;
beforeAll(async () => {
  ehr = await startTestEhr();
});
afterAll(() => ehr.stop());

function exchange(message: string): Promise<string> {
  return new Promise((resolve, reject) => {
    const socket = connect(ehr.mllpPort, '127.0.0.1', () => socket.write(`\x0b${message}\x1c\r`));
    let got = '';
    socket.setEncoding('utf8');
    socket.on('data', (d: string) => {
      got += d;
      if (got.endsWith('\x1c\r')) {
        socket.end();
        resolve(got.slice(1, -2));
      }
    });
    socket.on('error', reject);
  });
}

const oru = (controlId: string, msh15 = '') =>
  [
    `MSH|^~\\&|EBBGATE|HGH|MOCKEHR|HGH|20261201100000+0000||ORU^R01^ORU_R01|${controlId}|P|2.6|||${msh15}`,
    'PID|||HGH-400117^^^HGH^MR||Quillfeather^Maren',
    'OBR|1|||PPV^Pulse pressure variation^urn:ebbgate:local',
    'OBX|1|NM|PPV^Pulse pressure variation^urn:ebbgate:local|1.0.0.1|12.5|%^%^UCUM|||||F',
  ].join('\r');

interface Seg {
  getField(i: number): unknown;
}
const parse = (ack: string) => new hl7.Parser().parse(ack) as unknown as { getSegment(n: string): Seg | undefined };
const field = (seg: Seg | undefined, i: number) => String(seg?.getField(i) ?? '');

describe('MLLP receiver', () => {
  it('acknowledges an ORU^R01 with AA echoing the control id, and keeps it', async () => {
    const ack = await exchange(oru('CTRL-0001'));
    const msa = parse(ack).getSegment('MSA');
    expect([field(msa, 1), field(msa, 2)]).toEqual(['AA', 'CTRL-0001']);
    const header = ack.split('\r')[0]!.split('|');
    expect(header[8]).toBe('ACK^R01^ACK');
    expect(header[11]).toBe('2.6');
    const kept = (await admin(ehr, 'GET', 'hl7')).body as ReceivedHl7[];
    expect(kept.at(-1)).toMatchObject({ controlId: 'CTRL-0001', ackCode: 'AA', messageType: 'ORU^R01^ORU_R01' });
  });

  it('answers CA in enhanced acknowledgement mode', async () => {
    const ack = await exchange(oru('CTRL-0002', 'AL'));
    expect(ack.split('\r')[1]!.split('|').slice(0, 3)).toEqual(['MSA', 'CA', 'CTRL-0002']);
  });

  it('rejects a message that is not an ORU with AR and an ERR-3 code from table 0357', async () => {
    const adt = oru('CTRL-0003').replace('ORU^R01^ORU_R01', 'ADT^A01^ADT_A01');
    const ack = await exchange(adt);
    const [, msa, err] = ack.split('\r');
    expect(msa!.split('|').slice(0, 3)).toEqual(['MSA', 'AR', 'CTRL-0003']);
    expect(err!.split('|')[3]).toMatch(/^200\^/);
  });

  it('answers garbage with AR (segment sequence error) and keeps listening', async () => {
    const ack = await exchange('this is not HL7');
    expect(ack.split('\r')[1]!.split('|')[1]).toBe('AR');
    expect(ack.split('\r')[2]!.split('|')[3]).toMatch(/^100\^/);
    const next = await exchange(oru('CTRL-0004'));
    expect(next.split('\r')[1]!.split('|')[1]).toBe('AA');
  });
});
