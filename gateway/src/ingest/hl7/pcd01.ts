/**
 * IHE PCD-01 (ORU^R01) waveform messages → a transport-neutral batch. Rules from IHE PCD TF-2
 * (IHE Patient Care Device Technical Framework, Vol. 2): OBX-3 `code^REFID^MDC`, OBX-4 dotted hierarchy with time
 * inherited from the nearest ancestor (OBX-14 over OBR-7), OBX-18 equipment identifier (EUI-64)
 * inherited from the MDS level, waveforms as NA with a sample-rate facet row under their sub-ID.
 */
import type { AnalysisContext } from '@ebbgate/shared';
import type { ReceivedBatch, ReceivedChannel } from '../decoded-batch';
import { IngestRefusal } from '../refusal';
import { component, field, Hl7ParseError, parseHl7Time, SegmentCursor, timeSlicer, type Hl7Limits, type Hl7Message, type Segment } from '@ebbgate/shared/hl7';

export interface Hl7Header {
  controlId: string;
  version: string;
  messageType: string;
  sendingApplication: string;
  sendingFacility: string;
  receivingApplication: string;
  receivingFacility: string;
  /** MSH-15/16 valued: the sender asked for enhanced-mode acknowledgement (CA/CE/CR). */
  enhancedMode: boolean;
}

export interface Numeric {
  code: string;
  refId: string;
  subId: string;
  value: number | string;
  unit: string;
}

export interface Pcd01Decoded {
  header: Hl7Header;
  batch: ReceivedBatch;
  numerics: Numeric[];
  warnings: string[];
}

export function readHeader(msg: Hl7Message): Hl7Header {
  const msh = msg.segments[0] as Segment;
  const d = msg.delimiters;
  return {
    controlId: component(msh, 10, 1, d),
    version: component(msh, 12, 1, d),
    messageType: `${component(msh, 9, 1, d)}^${component(msh, 9, 2, d)}`,
    sendingApplication: field(msh, 3, d),
    sendingFacility: field(msh, 4, d),
    receivingApplication: field(msh, 5, d),
    receivingFacility: field(msh, 6, d),
    enhancedMode: Boolean(field(msh, 15, d) || field(msh, 16, d)),
  };
}

const PER_SECOND_UNITS = new Set(['/S', 'HZ', 'S-1', '1/S', '264608', 'MDC_DIM_PER_SEC', 'PER SECOND']);

/** Ventilator numerics that are analysis context. REFIDs from memory (IEEE 11073-10101), not confirmed. */
const CONTEXT_NUMERICS: Record<string, keyof AnalysisContext> = {
  MDC_VENT_RESP_RATE_SET: 'setRespiratoryRate',
  MDC_VOL_AWAY_TIDAL_SET: 'tidalVolumeMl',
  MDC_VOL_AWAY_TIDAL: 'tidalVolumeMl',
  // Local codes (our 99EBB system) for context that has no MDC code we could confirm.
  EBB_PT_HEIGHT: 'patientHeightCm',
  EBB_VASOPRESSOR_RUNNING: 'vasopressorRunning',
};

/** Ancestors of a sub-ID, nearest first: 1.2.3.4 → 1.2.3.0, 1.2.0.0, 1.0.0.0 (and plain prefixes). */
function ancestors(subId: string): string[] {
  const parts = subId.split('.');
  const out: string[] = [];
  for (let k = parts.length - 1; k >= 1; k--) {
    const prefix = parts.slice(0, k);
    out.push(prefix.join('.'));
    if (parts.length <= 4) out.push([...prefix, ...Array(Math.max(0, 4 - k)).fill('0')].join('.'));
  }
  return out;
}

const fail = (reason: string, path: string, message: string, hl7Code: number) => new IngestRefusal('invalid', reason, [{ path, message }], hl7Code);

/**
 * Caps on one message (each refusal names the cap): segments and fields (the reader), the depth
 * of an OBX-4 sub-ID and the samples of all waveforms together. A real PCD-01 waveform message
 * carries tens of rows and a few thousand samples per channel; these leave ample room.
 */
export interface Pcd01Limits extends Hl7Limits {
  maxSubIdDepth: number;
  maxSamples: number;
}

export const PCD01_LIMITS: Pcd01Limits = { maxSegments: 20_000, maxFieldsPerSegment: 64, maxSubIdDepth: 8, maxSamples: 2_000_000 };

const overCap = (reason: string, path: string, limit: string) =>
  new IngestRefusal('too-large', `${reason} (limit ${limit}).`, [{ path, message: `over the limit ${limit}` }], 102);

/** Decodes an ORU^R01 message; throws IngestRefusal('invalid') naming the segment and field. */
export function decodePcd01(raw: Buffer, limits: Pcd01Limits = PCD01_LIMITS): Pcd01Decoded {
  const steps = decodeSteps(raw, limits);
  for (let r = steps.next(); ; r = steps.next()) if (r.done) return r.value;
}

/**
 * The same decoder, giving the event loop a turn every few milliseconds of work: a message near
 * the size cap must not hold up `/healthz`, HTTP ingest or other MLLP connections.
 */
export async function decodePcd01Async(raw: Buffer, limits: Pcd01Limits = PCD01_LIMITS, budgetMs = 4): Promise<Pcd01Decoded> {
  const slice = timeSlicer(budgetMs);
  const steps = decodeSteps(raw, limits);
  for (let r = steps.next(); ; r = steps.next()) {
    if (r.done) return r.value;
    await slice();
  }
}

/** Strict prefixes of a dotted sub-ID, longest first: 1.2.3.4 → 1.2.3, 1.2, 1. */
function prefixes(subId: string): string[] {
  const out: string[] = [];
  for (let at = subId.lastIndexOf('.'); at > 0; at = subId.lastIndexOf('.', at - 1)) out.push(subId.slice(0, at));
  return out;
}

/** The decoder as steps: it yields between units of work (a segment, a row) and returns the result. */
function* decodeSteps(raw: Buffer, limits: Pcd01Limits): Generator<void, Pcd01Decoded> {
  let msg: Hl7Message;
  try {
    const cursor = new SegmentCursor(raw, limits);
    const segments: Segment[] = [];
    for (let seg = cursor.next(); seg; seg = cursor.next()) {
      segments.push(seg);
      if ((segments.length & 127) === 0) yield;
    }
    msg = { delimiters: cursor.delimiters, segments };
  } catch (err) {
    if (err instanceof Hl7ParseError && err.limit) throw overCap(err.message.replace(/\.$/, ''), err.location ?? 'MSH', err.limit);
    if (err instanceof Hl7ParseError) throw fail('The message is not readable HL7 v2.', err.location ?? 'MSH', err.message, err.code);
    throw err;
  }
  const header = readHeader(msg);
  const d = msg.delimiters;
  if (!header.controlId) throw fail('MSH-10 (message control id) is empty.', 'MSH-10', 'required', 101);
  if (header.messageType !== 'ORU^R01')
    throw fail(`Only ORU^R01 is accepted here, not ${header.messageType}.`, 'MSH-9', `unsupported message type ${header.messageType}`, 200);

  let obrTime: Date | null = null;
  // PID-8 administrative sex (HL7 table 0001): F / M; anything else leaves the sex unknown.
  let patientSex: AnalysisContext['patientSex'];
  const timeBySubId = new Map<string, Date>();
  const equipmentBySubId = new Map<string, string>();
  const rows: { seg: Segment; subId: string }[] = [];
  for (const seg of msg.segments) {
    if (seg.name === 'PID') {
      const sex = field(seg, 8, d).toUpperCase();
      patientSex = sex === 'F' ? 'female' : sex === 'M' ? 'male' : undefined;
    } else if (seg.name === 'OBR') {
      const t = component(seg, 7, 1, d);
      obrTime = t ? parseHl7Time(t) : null;
      if (t && !obrTime) throw fail('OBR-7 is not an HL7 date/time.', `OBR[${seg.index}]-7`, `"${t}"`, 102);
    } else if (seg.name === 'OBX') {
      const subId = component(seg, 4, 1, d) || `#${seg.index}`;
      const t = component(seg, 14, 1, d);
      if (t) {
        const parsed = parseHl7Time(t);
        if (!parsed) throw fail('OBX-14 is not an HL7 date/time.', `OBX[${seg.index}]-14`, `"${t}"`, 102);
        timeBySubId.set(subId, parsed);
      }
      const eq = component(seg, 18, 1, d);
      if (eq) equipmentBySubId.set(subId, eq);
      if (subId.split('.', limits.maxSubIdDepth + 1).length > limits.maxSubIdDepth) {
        throw overCap(`OBX-4 sub-ID ${subId.slice(0, 40)} is nested too deep`, `OBX[${seg.index}]-4`, `maxSubIdDepth=${limits.maxSubIdDepth}`);
      }
      rows.push({ seg, subId });
    }
    if ((seg.index & 127) === 0) yield;
  }
  // Indexes instead of scans over all rows (a scan per row made large messages quadratic):
  // the first sample-rate facet under each sub-ID, and the sub-IDs that are waveforms.
  const rateRowUnder = new Map<string, Segment>();
  const waveformSubIds = new Set<string>();
  for (const [i, r] of rows.entries()) {
    if ((i & 255) === 0) yield;
    if (field(r.seg, 2, d) === 'NA') waveformSubIds.add(r.subId);
    if (/SAMP_RATE/i.test(`${component(r.seg, 3, 1, d)} ${component(r.seg, 3, 2, d)}`)) {
      for (const p of prefixes(r.subId)) if (!rateRowUnder.has(p)) rateRowUnder.set(p, r.seg);
    }
  }
  yield;
  if (!rows.length) throw fail('The message has no OBX segments.', 'OBX', 'at least one OBX is required', 100);
  const inherit = <T>(map: Map<string, T>, subId: string): T | undefined => {
    const own = map.get(subId);
    if (own !== undefined) return own;
    for (const a of ancestors(subId)) {
      const v = map.get(a);
      if (v !== undefined) return v;
    }
    return undefined;
  };

  const equipment = new Set<string>();
  for (const [i, r] of rows.entries()) {
    if ((i & 255) === 0) yield;
    const eq = inherit(equipmentBySubId, r.subId);
    if (eq) equipment.add(eq);
  }
  if (equipment.size === 0) throw fail('No OBX-18 equipment identifier names the monitor.', 'OBX-18', 'required at the MDS level (EUI-64)', 101);
  if (equipment.size > 1) throw fail('The message names several monitors in OBX-18.', 'OBX-18', [...equipment].join(', '), 102);
  const monitorIdentifier = [...equipment][0] as string;

  const channels: ReceivedChannel[] = [];
  const numerics: Numeric[] = [];
  const context: AnalysisContext = patientSex ? { patientSex } : {};
  const warnings: string[] = [];
  let startTime: Date | null = null;
  let samplesSoFar = 0;
  for (const { seg, subId } of rows) {
    yield;
    const valueType = field(seg, 2, d);
    const code = component(seg, 3, 1, d);
    const refId = component(seg, 3, 2, d);
    const where = `OBX[${seg.index}]`;
    if (valueType === 'NA') {
      const rateSeg = rateRowUnder.get(subId);
      const rateRow = rateSeg ? { seg: rateSeg } : undefined;
      if (!rateRow)
        throw fail(
          `Waveform ${refId || code} has no sample-rate facet row under sub-ID ${subId}.`,
          `${where}-4`,
          `expected an OBX with MDC_ATTR_SAMP_RATE at ${subId}.1`,
          101,
        );
      const rate = Number(component(rateRow.seg, 5, 1, d));
      const rateUnit = (component(rateRow.seg, 6, 2, d) || component(rateRow.seg, 6, 1, d)).toUpperCase();
      if (!(rate > 0) || rate > 2000)
        throw fail('The sample-rate facet is not a positive number.', `OBX[${rateRow.seg.index}]-5`, `"${component(rateRow.seg, 5, 1, d)}"`, 102);
      if (rateUnit && !PER_SECOND_UNITS.has(rateUnit) && !PER_SECOND_UNITS.has(component(rateRow.seg, 6, 1, d).toUpperCase())) {
        throw fail('The sample-rate facet is not in a per-second unit.', `OBX[${rateRow.seg.index}]-6`, `"${rateUnit}"`, 102);
      }
      const t = inherit(timeBySubId, subId) ?? obrTime;
      if (!t) throw fail(`Waveform ${refId || code} has no time (OBX-14, an ancestor's OBX-14, or OBR-7).`, `${where}-14`, 'required', 101);
      if (startTime && t.getTime() !== startTime.getTime())
        throw fail('Waveforms in one message must start at the same time.', `${where}-14`, `${t.toISOString()} vs ${startTime.toISOString()}`, 102);
      startTime = t;
      const parts = (seg.fields[5] ?? '').split(d.component, limits.maxSamples - samplesSoFar + 1);
      samplesSoFar += parts.length;
      if (samplesSoFar > limits.maxSamples) throw overCap('The message carries too many waveform samples', `${where}-5`, `maxSamples=${limits.maxSamples}`);
      const values = new Array<number | null>(parts.length);
      for (let i = 0; i < parts.length; i++) {
        const p = parts[i] as string;
        if (p === '') values[i] = null;
        else {
          const v = Number(p);
          if (!Number.isFinite(v))
            throw fail(`Sample ${i + 1} of waveform ${refId || code} is not a number.`, `${where}-5.${i + 1}`, `"${p.slice(0, 20)}"`, 102);
          values[i] = v;
        }
      }
      if (!values.length || (values.length === 1 && values[0] === null))
        throw fail(`Waveform ${refId || code} carries no samples.`, `${where}-5`, 'empty', 101);
      channels.push({
        code: code || refId,
        altCodes: refId && code ? [refId] : [],
        sampleRate: rate,
        unit: component(seg, 6, 1, d) || undefined,
        samples: { kind: 'array', values },
        path: where,
      });
    } else if (valueType === 'NM' || valueType === 'ST' || valueType === 'CWE' || valueType === 'CE') {
      if (prefixes(subId).some((p) => waveformSubIds.has(p))) continue; // a facet of a waveform
      const rawValue = component(seg, 5, 1, d);
      const value = valueType === 'NM' ? Number(rawValue) : rawValue;
      if (valueType === 'NM' && rawValue !== '' && !Number.isFinite(value))
        throw fail(`OBX ${refId || code} is NM but not a number.`, `${where}-5`, `"${rawValue.slice(0, 20)}"`, 102);
      numerics.push({ code, refId, subId, value, unit: component(seg, 6, 2, d) || component(seg, 6, 1, d) });
      const key = CONTEXT_NUMERICS[refId.toUpperCase()] ?? CONTEXT_NUMERICS[code.toUpperCase()];
      if (key === 'vasopressorRunning' && typeof value === 'number') context.vasopressorRunning = value === 1;
      else if (key && typeof value === 'number' && value > 0) (context as Record<string, unknown>)[key] = value;
    } else if (valueType && valueType !== 'X') {
      warnings.push(`${where}: value type ${valueType} ignored`);
    }
  }
  return {
    header,
    batch: {
      monitorIdentifier,
      batchId: header.controlId,
      startTime: startTime ?? obrTime ?? new Date(0),
      channels,
      context: Object.keys(context).length ? context : undefined,
    },
    numerics,
    warnings,
  };
}
