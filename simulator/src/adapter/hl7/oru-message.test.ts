import { describe, expect, it } from 'vitest';
// Reference parser: node-hl7-client 4.0.0 (npm), independent of our builder.
import { Message } from 'node-hl7-client';
import { NUMERIC_CODES, UNIT_CODES, WAVEFORM_CODES } from './codes';
import { buildOruR01, escapeHl7, hl7Time } from './oru-message';

const EUI = '02EB6AFFFE2C3D4E';
const start = new Date('2026-12-01T10:15:30.250Z');
const abp = Array.from({ length: 250 }, (_, i) => 80 + 40 * Math.max(0, Math.sin((2 * Math.PI * i) / 94)));
const paw = Array.from({ length: 250 }, (_, i) => 5 + (i % 50 < 15 ? 15 : 0));
abp[17] = Number.NaN; // a missing sample

function build(ackMode: 'original' | 'enhanced' = 'enhanced') {
  return buildOruR01({
    controlId: 'batch-42',
    equipmentId: EUI,
    startTime: start,
    messageTime: new Date('2026-12-01T10:15:35Z'),
    ackMode,
    patient: { mrn: 'HGH-400117', assigningAuthority: 'HGH', family: 'Quill^feather', given: ['Maren'], birthDate: '1961-04-23', sex: 'female' },
    location: { unit: 'ICU', bed: 'ICU-01' },
    waveforms: [
      { code: WAVEFORM_CODES.abp, unit: UNIT_CODES.mmHg, sampleRate: 125, samples: abp },
      { code: WAVEFORM_CODES.paw, unit: UNIT_CODES.cmH2O, sampleRate: 125, samples: paw },
    ],
    numerics: [
      { code: NUMERIC_CODES.heartRate, value: 82, unit: UNIT_CODES.beatsPerMin },
      { code: NUMERIC_CODES.spo2, value: 97, unit: UNIT_CODES.percent },
      { code: NUMERIC_CODES.tidalVolume, value: 520, unit: UNIT_CODES.mL },
    ],
  });
}

const obxRows = (m: Message) => m.get('OBX') as unknown as Iterable<{ get(p: string): { toString(): string } }>;

describe('ORU^R01 builder, read back by node-hl7-client (IHE PCD TF-2 PCD-01 rules, HL7 v2.6)', () => {
  const text = build();
  const msg = new Message({ text });

  it('writes MSH with ORU^R01, v2.6, the control id, enhanced-mode ack fields and the PCD-01 profile in MSH-21', () => {
    expect(msg.get('MSH.9.1').toString()).toBe('ORU');
    expect(msg.get('MSH.9.2').toString()).toBe('R01');
    expect(msg.get('MSH.10').toString()).toBe('batch-42');
    expect(msg.get('MSH.12').toString()).toBe('2.6');
    expect(msg.get('MSH.15').toString()).toBe('AL');
    expect(msg.get('MSH.16').toString()).toBe('NE');
    // IHE PCD TF-2: MSH-21 = IHE_PCD_001^IHE PCD^1.3.6.1.4.1.19376.1.6.1.1.1^ISO (standards notes, confirmed)
    expect(msg.get('MSH.21.1').toString()).toBe('IHE_PCD_001');
    expect(msg.get('MSH.21.3').toString()).toBe('1.3.6.1.4.1.19376.1.6.1.1.1');
  });

  it('leaves MSH-15/16 empty in original mode (the receiver then answers AA/AE/AR)', () => {
    const m = new Message({ text: build('original') });
    expect(m.get('MSH.15').toString()).toBe('');
  });

  it('escapes HL7 delimiters in text (HL7 v2 ch. 2.7) so a name with ^ stays one component', () => {
    expect(escapeHl7('a|b^c&d~e\\f')).toBe('a\\F\\b\\S\\c\\T\\d\\R\\e\\E\\f');
    expect(msg.get('PID.5.1').toString()).toBe('Quill^feather'); // the reference parser unescapes \S\
    expect(msg.get('PID.5.2').toString()).toBe('Maren');
    expect(msg.get('PID.8').toString()).toBe('F');
    expect(msg.get('PID.3.1').toString()).toBe('HGH-400117');
  });

  it('puts the MDS row first at 1.0.0.0 with OBX-11 X and the EUI-64 equipment id in OBX-18', () => {
    const rows = [...obxRows(msg)];
    expect(rows[0].get('OBX.4').toString()).toBe('1.0.0.0');
    expect(rows[0].get('OBX.11').toString()).toBe('X');
    expect(rows[0].get('OBX.18.1').toString()).toBe(EUI);
    expect(rows[0].get('OBX.18.4').toString()).toBe('EUI-64');
  });

  it('writes each waveform as NA with ^-joined samples, OBX-14 = first sample time, and a .1 sample-rate facet', () => {
    const rows = [...obxRows(msg)];
    const wave = rows[1];
    expect(wave.get('OBX.2').toString()).toBe('NA');
    expect(wave.get('OBX.3.1').toString()).toBe('150036');
    expect(wave.get('OBX.3.2').toString()).toBe('MDC_PRESS_BLD_ART_ABP');
    expect(wave.get('OBX.3.3').toString()).toBe('MDC');
    expect(wave.get('OBX.4').toString()).toBe('1.1.1.1');
    expect(wave.get('OBX.6.1').toString()).toBe('266016');
    expect(wave.get('OBX.14').toString()).toBe(hl7Time(start));
    const values: string[] = [];
    for (let i = 1; i <= abp.length; i++) values.push(wave.get(`OBX.5.${i}`).toString());
    expect(values[17]).toBe('');
    values.forEach((v, i) => {
      if (i !== 17) expect(Number(v)).toBeCloseTo(abp[i], 2);
    });
    expect(wave.get(`OBX.5.${abp.length + 1}`).toString()).toBe('');
    const facet = rows[2];
    expect(facet.get('OBX.2').toString()).toBe('NM');
    expect(facet.get('OBX.3.2').toString()).toBe('MDC_ATTR_SAMP_RATE');
    expect(facet.get('OBX.4').toString()).toBe('1.1.1.1.1');
    expect(facet.get('OBX.5').toString()).toBe('125');
    expect(rows[3].get('OBX.4').toString()).toBe('1.1.1.2');
    expect(rows[4].get('OBX.4').toString()).toBe('1.1.1.2.1');
  });

  it('writes numerics as NM rows with MDC units, after the waveforms (depth-first order)', () => {
    const rows = [...obxRows(msg)].slice(5);
    expect(rows.map((r) => r.get('OBX.2').toString())).toEqual(['NM', 'NM', 'NM']);
    expect(rows.map((r) => r.get('OBX.3.2').toString())).toEqual(['MDC_ECG_HEART_RATE', 'MDC_PULS_OXIM_SAT_O2', 'MDC_VOL_AWAY_TIDAL']);
    expect(rows.map((r) => r.get('OBX.5').toString())).toEqual(['82', '97', '520']);
    expect(rows.map((r) => r.get('OBX.4').toString())).toEqual(['1.1.2.1', '1.1.2.2', '1.1.2.3']);
    expect(rows[0].get('OBX.6.1').toString()).toBe('264864');
  });

  it('ends every segment with CR (HL7 v2 message construction rules)', () => {
    expect(text.endsWith('\r')).toBe(true);
    expect(text.includes('\n')).toBe(false);
    expect(
      text
        .split('\r')
        .filter(Boolean)
        .map((s) => s.slice(0, 3)),
    ).toEqual(['MSH', 'PID', 'PV1', 'OBR', ...Array(8).fill('OBX')]);
  });

  it('refuses a waveform longer than the OBX-5 limit of 65,536 characters', () => {
    expect(() =>
      buildOruR01({
        controlId: 'x',
        equipmentId: EUI,
        startTime: start,
        waveforms: [{ code: WAVEFORM_CODES.abp, unit: UNIT_CODES.mmHg, sampleRate: 125, samples: new Float64Array(20_000).fill(123.45) }],
      }),
    ).toThrow(/65536/);
  });
});
