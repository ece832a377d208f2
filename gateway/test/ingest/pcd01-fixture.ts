/**
 * Builds ORU^R01 messages the way IHE PCD TF-2 (PCD-01) lays them out: MSH with the PCD-01
 * profile id (MSH-21), PID/PV1, one OBR, then OBX rows in depth-first order of the containment
 * tree (MDS 1.0.0.0 with OBX-18 EUI-64 → VMD → channel → metric), waveforms as NA with the
 * sample-rate facet at <metric>.1. Codes: 150036 MDC_PRESS_BLD_ART_ABP and 147842
 * MDC_ECG_HEART_RATE (IEEE 11073-10101, confirmed); 150452 MDC_PULS_OXIM_PLETH (from tables);
 * 69965 MDS and 67981 MDC_ATTR_SAMP_RATE, 264608 MDC_DIM_PER_SEC and 266016 MDC_DIM_MMHG units
 * (units confirmed; the MDS and sample-rate attribute codes from memory).
 */
export interface Pcd01Wave {
  code: string;
  refId: string;
  unit?: string;
  sampleRate: number;
  samples: ArrayLike<number>;
}

export interface Pcd01Options {
  controlId: string;
  equipment: string;
  start: Date;
  waves: Pcd01Wave[];
  heartRate?: number;
  setRespiratoryRate?: number;
  tidalVolumeMl?: number;
  /** Ask for enhanced-mode acknowledgement (MSH-15 AL, MSH-16 NE). */
  enhanced?: boolean;
  version?: string;
}

export function hl7Time(d: Date): string {
  const p = (n: number, w = 2) => String(n).padStart(w, '0');
  return `${d.getUTCFullYear()}${p(d.getUTCMonth() + 1)}${p(d.getUTCDate())}${p(d.getUTCHours())}${p(d.getUTCMinutes())}${p(d.getUTCSeconds())}.${p(d.getUTCMilliseconds(), 3)}+0000`;
}

export function buildPcd01(o: Pcd01Options): string {
  const t = hl7Time(o.start);
  const version = o.version ?? '2.6';
  const segs: string[] = [
    `MSH|^~\\&|CORVANE_GW^${o.equipment}^EUI-64|HGH|EBBGATE|HGH|${hl7Time(new Date())}||ORU^R01^ORU_R01|${o.controlId}|P|${version}|||${o.enhanced ? 'AL' : ''}|${o.enhanced ? 'NE' : ''}||UNICODE UTF-8|||IHE_PCD_001^IHE PCD^1.3.6.1.4.1.19376.1.6.1.1.1^ISO`,
    'PID|||HGH-400117^^^HGH^MR||Quillfeather^Maren',
    'PV1||I|ICU^^ICU-01',
    `OBR|1|||182777000^monitoring of patient^SCT|||${t}`,
    `OBX|1||69965^MDC_DEV_MON_PHYSIO_MULTI_PARAM_MDS^MDC|1.0.0.0|||||||X|||||||${o.equipment}^^${o.equipment}^EUI-64`,
  ];
  let n = 2;
  if (o.heartRate !== undefined) segs.push(`OBX|${n++}|NM|147842^MDC_ECG_HEART_RATE^MDC|1.1.1.1|${o.heartRate}|264864^MDC_DIM_BEAT_PER_MIN^MDC|||||R|||${t}`);
  if (o.setRespiratoryRate !== undefined)
    segs.push(`OBX|${n++}|NM|^MDC_VENT_RESP_RATE_SET^MDC|1.3.1.1|${o.setRespiratoryRate}|264928^MDC_DIM_RESP_PER_MIN^MDC|||||R|||${t}`);
  if (o.tidalVolumeMl !== undefined) segs.push(`OBX|${n++}|NM|^MDC_VOL_AWAY_TIDAL_SET^MDC|1.3.1.2|${o.tidalVolumeMl}|263762^MDC_DIM_MILLI_L^MDC|||||R|||${t}`);
  o.waves.forEach((w, i) => {
    const sub = `1.2.${i + 1}.1`;
    const values = Array.from(w.samples, (v) => (Number.isNaN(v) ? '' : Number(v.toFixed(3)).toString())).join('^');
    segs.push(`OBX|${n++}|NA|${w.code}^${w.refId}^MDC|${sub}|${values}|${w.unit ?? '266016^MDC_DIM_MMHG^MDC'}|||||R|||${t}`);
    segs.push(`OBX|${n++}|NM|67981^MDC_ATTR_SAMP_RATE^MDC|${sub}.1|${w.sampleRate}|264608^MDC_DIM_PER_SEC^MDC|||||R`);
  });
  return segs.join('\r') + '\r';
}
