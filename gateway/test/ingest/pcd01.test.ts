import { describe, expect, it } from 'vitest';
import { buildAck } from '../../src/ingest/hl7/ack';
import { parseHl7, parseHl7Time, unescapeHl7 as unescape } from '@ebbgate/shared/hl7';
import { decodePcd01 } from '../../src/ingest/hl7/pcd01';
import { IngestRefusal } from '../../src/ingest/refusal';
import { buildPcd01 } from './pcd01-fixture';

const start = new Date('2026-11-30T08:00:00.000Z');
const wave = { code: '150036', refId: 'MDC_PRESS_BLD_ART_ABP', sampleRate: 125, samples: [80, 81.5, Number.NaN, 120] };

function refusalOf(text: string): IngestRefusal {
  try {
    decodePcd01(Buffer.from(text));
  } catch (err) {
    if (err instanceof IngestRefusal) return err;
    throw err;
  }
  throw new Error('expected a refusal');
}

describe('PCD-01 decoding (IHE PCD Technical Framework Vol. 2 rules)', () => {
  it('reads NA waveform rows with their sample-rate facet, OBX-18 monitor, OBX-14 time and vent numerics', () => {
    const text = buildPcd01({
      controlId: 'M1',
      equipment: '0223456789ABCDEF',
      start,
      waves: [wave],
      heartRate: 80,
      setRespiratoryRate: 14,
      tidalVolumeMl: 450,
    });
    const d = decodePcd01(Buffer.from(text));
    expect(d.header).toMatchObject({ controlId: 'M1', version: '2.6', messageType: 'ORU^R01', enhancedMode: false });
    expect(d.batch.monitorIdentifier).toBe('0223456789ABCDEF');
    expect(d.batch.batchId).toBe('M1');
    expect(d.batch.startTime.toISOString()).toBe(start.toISOString());
    expect(d.batch.channels).toHaveLength(1);
    expect(d.batch.channels[0]).toMatchObject({ code: '150036', altCodes: ['MDC_PRESS_BLD_ART_ABP'], sampleRate: 125 });
    const s = d.batch.channels[0]!.samples;
    expect(s.kind === 'array' && Array.from(s.values)).toEqual([80, 81.5, null, 120]);
    expect(d.batch.context).toEqual({ setRespiratoryRate: 14, tidalVolumeMl: 450 });
    expect(d.numerics.map((n) => n.refId)).toEqual(['MDC_ECG_HEART_RATE', 'MDC_VENT_RESP_RATE_SET', 'MDC_VOL_AWAY_TIDAL_SET']);
  });

  it('reads the patient sex from PID-8 (HL7 table 0001: F, M) as analysis context', () => {
    const text = buildPcd01({ controlId: 'M9', equipment: 'AB', start, waves: [wave], tidalVolumeMl: 450 });
    const withSex = (sex: string) =>
      decodePcd01(Buffer.from(text.replace('PID|||HGH-400117^^^HGH^MR||Quillfeather^Maren', `PID|||HGH-400117^^^HGH^MR||Quillfeather^Maren||19610423|${sex}`)))
        .batch.context;
    expect(withSex('F')).toEqual({ patientSex: 'female', tidalVolumeMl: 450 });
    expect(withSex('M')).toMatchObject({ patientSex: 'male' });
    expect(withSex('U')).toEqual({ tidalVolumeMl: 450 });
  });

  it('inherits the time from OBR-7 when OBX-14 is empty (OBX-14 overrides the ancestor, which overrides OBR-7)', () => {
    const text = buildPcd01({ controlId: 'M2', equipment: 'AA', start, waves: [wave] }).replace(/(OBX\|\d+\|NA\|[^\r]*\|R\|\|\|)[0-9.+]+/, '$1');
    expect(decodePcd01(Buffer.from(text)).batch.startTime.toISOString()).toBe(start.toISOString());
  });

  it('honours the delimiters declared in MSH-1/MSH-2 and resolves escapes', () => {
    const text = buildPcd01({ controlId: 'M3', equipment: 'AA', start, waves: [wave] })
      .replace(/\|/g, '#')
      .replace(/\^/g, '$');
    const d = decodePcd01(Buffer.from(text.replace('MSH#$~\\&', 'MSH#$~\\&')));
    expect(d.batch.channels[0]!.sampleRate).toBe(125);
    const msg = parseHl7('MSH|^~\\&|A\r');
    expect(unescape('a\\F\\b\\S\\c\\E\\d', msg.delimiters)).toBe('a|b^c\\d');
  });

  it('parses HL7 DTM with offsets (HL7 v2 DTM data type)', () => {
    expect(parseHl7Time('20261130090000+0100')?.toISOString()).toBe('2026-11-30T08:00:00.000Z');
    expect(parseHl7Time('20261130080000.25')?.toISOString()).toBe('2026-11-30T08:00:00.250Z');
    expect(parseHl7Time('2026113')).toBeNull();
  });

  it('refuses each kind of bad message naming the segment and field', () => {
    expect(refusalOf('garbage').errors[0]).toMatchObject({ path: 'MSH' });
    expect(refusalOf('MSH|^~\\&|A|B|C|D|20261130||ADT^A01|X|P|2.6\r').errors[0]).toMatchObject({ path: 'MSH-9' });
    expect(refusalOf('MSH|^~\\&|A|B|C|D|20261130||ORU^R01||P|2.6\r').errors[0]).toMatchObject({ path: 'MSH-10' });
    const noEquipment = buildPcd01({ controlId: 'M4', equipment: 'AA', start, waves: [wave] }).replace(/AA\^\^AA\^EUI-64/, '');
    expect(refusalOf(noEquipment).errors[0]).toMatchObject({ path: 'OBX-18' });
    const noRate = buildPcd01({ controlId: 'M5', equipment: 'AA', start, waves: [wave] }).replace(/\rOBX\|\d+\|NM\|67981[^\r]*/, '');
    expect(refusalOf(noRate).errors[0]!.message).toMatch(/MDC_ATTR_SAMP_RATE/);
    const badSample = buildPcd01({ controlId: 'M6', equipment: 'AA', start, waves: [wave] }).replace('81.5', 'x1');
    expect(refusalOf(badSample).errors[0]!.path).toMatch(/^OBX\[\d+\]-5\.2$/);
  });
});

describe('ACK building (HL7 v2 MSA/ERR, table 0357)', () => {
  it('echoes MSH-10 in MSA-2 and answers in the mode asked for, with ERR on errors', () => {
    const header = decodePcd01(Buffer.from(buildPcd01({ controlId: 'C-9', equipment: 'AA', start, waves: [wave], enhanced: true }))).header;
    const ok = parseHl7(buildAck(header, 'CA'));
    expect(ok.segments.map((s) => s.name)).toEqual(['MSH', 'MSA']);
    expect(ok.segments[1]!.fields.slice(1, 3)).toEqual(['CA', 'C-9']);
    expect(ok.segments[0]!.fields[9]).toBe('ACK^R01^ACK');
    const refusal = new IngestRefusal('unmapped', 'Some channels do not match the monitor profile.', [
      { path: 'OBX[7].code', message: 'code 1 is not in profile' },
    ]);
    const nak = parseHl7(buildAck(header, 'CE', refusal));
    const err = nak.segments[2]!;
    expect(err.name).toBe('ERR');
    expect(err.fields[2]).toBe('OBX^7^3');
    expect(err.fields[3]).toBe('103^Table value not found^HL70357');
    expect(err.fields[4]).toBe('E');
    expect(err.fields[8]).toMatch(/not in profile/);
    // Control ids differ between two ACKs built in the same millisecond.
    expect(parseHl7(buildAck(header, 'CA')).segments[0]!.fields[10]).not.toBe(parseHl7(buildAck(header, 'CA')).segments[0]!.fields[10]);
  });
});
