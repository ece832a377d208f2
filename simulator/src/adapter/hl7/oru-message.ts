import { escapeHl7 as escapeKit, formatHl7Time } from '@ebbgate/shared/hl7';
import { MDS_CODE, OBR_SERVICE, PCD01_PROFILE, SAMPLE_RATE_ATTR, UNIT_CODES, type CodedValue } from './codes';

/**
 * ORU^R01 in the IHE PCD-01 style (IHE PCD TF-2; HL7 v2.6): MSH (MSH-21 profile), optional PID and
 * PV1, one OBR, then OBX rows depth-first under the device: the MDS row 1.0.0.0 carries the
 * equipment id in OBX-18, waveform metrics 1.1.1.k are NA (samples `^`-joined in OBX-5, OBX-14 =
 * time of the first sample) each with its sample-rate facet row 1.1.1.k.1, numerics are NM rows
 * under channel 1.1.2. Segments end with CR.
 */
export interface OruWaveform {
  code: CodedValue;
  unit: CodedValue;
  sampleRate: number;
  /** NaN = missing sample (sent as an empty component). */
  samples: ArrayLike<number>;
}

export interface OruNumeric {
  code: CodedValue;
  value: number;
  unit: CodedValue;
}

export interface OruPatient {
  /** Medical record number (PID-3); empty when the adapter only knows sex and the like. */
  mrn: string;
  assigningAuthority?: string;
  family?: string;
  given?: string[];
  /** YYYY-MM-DD */
  birthDate?: string;
  sex?: 'male' | 'female';
}

export interface OruMessageInput {
  /** MSH-10, echoed in the ACK's MSA-2; also the batch's idempotency key. */
  controlId: string;
  /** EUI-64 (16 hex digits) or serial of the monitor, sent in OBX-18 of the MDS row. */
  equipmentId: string;
  /** Time of the first sample of every waveform. */
  startTime: Date;
  /** MSH-7 (default now). */
  messageTime?: Date;
  waveforms: OruWaveform[];
  numerics?: OruNumeric[];
  patient?: OruPatient;
  location?: { unit?: string; bed?: string };
  /** `enhanced` sets MSH-15/16 (AL/NE) and the receiver answers CA/CE/CR; `original` gets AA/AE/AR. */
  ackMode?: 'original' | 'enhanced';
  sendingApplication?: string;
  sendingFacility?: string;
  receivingApplication?: string;
  receivingFacility?: string;
  /** Decimals kept per sample (default 2). */
  decimals?: number;
}

/** HL7 v2 field length limit of OBX-5 for NA values (standards notes). */
export const OBX5_MAX_LENGTH = 65_536;

/** HL7 v2 escape sequences (ch. 2.7) and DTM timestamps come from the shared kit. */
export const escapeHl7 = (text: string): string => escapeKit(text);
export const hl7Time = (d: Date): string => formatHl7Time(d);

const cwe = (c: CodedValue) => `${escapeHl7(c.code)}^${escapeHl7(c.text)}^${escapeHl7(c.system)}`;

function formatSamples(samples: ArrayLike<number>, decimals: number): string {
  const parts = new Array<string>(samples.length);
  const f = 10 ** decimals;
  for (let i = 0; i < samples.length; i++) {
    const v = samples[i];
    parts[i] = Number.isFinite(v) ? String(Math.round(v * f) / f) : '';
  }
  return parts.join('^');
}

/** Builds the message text (segments joined by CR, final CR included). */
export function buildOruR01(m: OruMessageInput): string {
  const eq = escapeHl7(m.equipmentId);
  const ts = hl7Time(m.startTime);
  const enhanced = (m.ackMode ?? 'enhanced') === 'enhanced';
  const seg: string[] = [];
  const msh = [
    'MSH',
    '^~\\&',
    `${escapeHl7(m.sendingApplication ?? 'EBBGATE_ADAPTER')}^${eq}^EUI-64`,
    escapeHl7(m.sendingFacility ?? ''),
    escapeHl7(m.receivingApplication ?? 'EBBGATE'),
    escapeHl7(m.receivingFacility ?? ''),
    hl7Time(m.messageTime ?? new Date()),
    '',
    'ORU^R01^ORU_R01',
    escapeHl7(m.controlId),
    'P',
    '2.6',
    '',
    '',
    enhanced ? 'AL' : '',
    enhanced ? 'NE' : '',
    '',
    'UNICODE UTF-8',
    '',
    '',
    PCD01_PROFILE,
  ];
  seg.push(msh.join('|'));
  if (m.patient) {
    const p = m.patient;
    const name =
      p.family || p.given?.length ? `${escapeHl7(p.family ?? '')}^${escapeHl7(p.given?.[0] ?? '')}^${escapeHl7(p.given?.slice(1).join(' ') ?? '')}` : '';
    const sex = p.sex === 'male' ? 'M' : p.sex === 'female' ? 'F' : '';
    const id = p.mrn ? `${escapeHl7(p.mrn)}^^^${escapeHl7(p.assigningAuthority ?? '')}^MR` : '';
    seg.push(['PID', '', '', id, '', name, '', (p.birthDate ?? '').replace(/-/g, ''), sex].join('|'));
  }
  if (m.location) seg.push(['PV1', '', 'I', `${escapeHl7(m.location.unit ?? '')}^^${escapeHl7(m.location.bed ?? '')}`].join('|'));
  seg.push(['OBR', '1', escapeHl7(m.controlId), '', cwe(OBR_SERVICE), '', '', ts].join('|'));

  let n = 0;
  const obx = (type: string, code: CodedValue, subId: string, value: string, unit: CodedValue | null, status: string, time: string, equipment: string) =>
    seg.push(['OBX', String(++n), type, cwe(code), subId, value, unit ? cwe(unit) : '', '', '', '', '', status, '', '', time, '', '', '', equipment].join('|'));

  obx('', MDS_CODE, '1.0.0.0', '', null, 'X', '', `${eq}^^${eq}^EUI-64`);
  m.waveforms.forEach((w, k) => {
    const value = formatSamples(w.samples, m.decimals ?? 2);
    if (value.length > OBX5_MAX_LENGTH)
      throw new RangeError(`waveform ${w.code.text}: OBX-5 would be ${value.length} characters (limit ${OBX5_MAX_LENGTH}); send shorter batches`);
    obx('NA', w.code, `1.1.1.${k + 1}`, value, w.unit, 'R', ts, '');
    obx('NM', SAMPLE_RATE_ATTR, `1.1.1.${k + 1}.1`, String(w.sampleRate), UNIT_CODES.perSecond, 'R', '', '');
  });
  (m.numerics ?? []).forEach((v, k) => obx('NM', v.code, `1.1.2.${k + 1}`, String(Math.round(v.value * 100) / 100), v.unit, 'R', ts, ''));
  return seg.join('\r') + '\r';
}
