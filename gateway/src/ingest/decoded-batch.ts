import { endianness } from 'node:os';
import type { AnalysisContext, ChannelRole, IngestBatch } from '@ebbgate/shared';
import { ingestBatchSchema } from '@ebbgate/shared';
import { decodeSegment } from '@ebbgate/shared/codec';
import { zodFieldErrors } from '../http/problem';
import { IngestRefusal } from './refusal';

/** Samples as they arrived: float32 little-endian bytes (base64 input, HL7) or a JSON array (null = gap). */
export type ReceivedSamples = { kind: 'float32le'; bytes: Buffer } | { kind: 'array'; values: ArrayLike<number | null> };

export interface ReceivedChannel {
  code: string;
  /** Other names of the same channel (HL7: the REFID beside the numeric MDC code). */
  altCodes?: string[];
  sampleRate: number;
  unit?: string;
  role?: ChannelRole;
  samples: ReceivedSamples;
  /** Where the channel came from in the message, for error paths (`channels.1`, `OBX[4]`). */
  path: string;
}

/** A batch in transport-neutral form, before the monitor profile is applied. */
export interface ReceivedBatch {
  monitorIdentifier: string;
  batchId: string;
  startTime: Date;
  channels: ReceivedChannel[];
  context?: AnalysisContext;
}

export const sampleCount = (s: ReceivedSamples) => (s.kind === 'float32le' ? s.bytes.length / 4 : s.values.length);

/** Parses and validates an HTTP/JSON batch body (also the JSON capture format of the test bench). */
export function decodeJsonBatch(raw: Buffer): ReceivedBatch {
  let json: unknown;
  try {
    json = JSON.parse(raw.toString('utf8'));
  } catch (err) {
    throw new IngestRefusal('invalid', 'The body is not valid JSON.', [{ path: '(root)', message: (err as Error).message }]);
  }
  const parsed = ingestBatchSchema.safeParse(json);
  if (!parsed.success) throw new IngestRefusal('invalid', 'The batch does not match the IngestBatch schema.', zodFieldErrors(parsed.error));
  return fromIngestBatch(parsed.data);
}

export function fromIngestBatch(b: IngestBatch): ReceivedBatch {
  const errors: { path: string; message: string }[] = [];
  const channels = b.channels.map((c, i): ReceivedChannel => {
    let samples: ReceivedSamples;
    if (Array.isArray(c.samples)) samples = { kind: 'array', values: c.samples };
    else {
      const bytes = Buffer.from(c.samples.data, 'base64');
      if (bytes.length === 0 || bytes.length % 4 !== 0)
        errors.push({ path: `channels.${i}.samples.data`, message: `decodes to ${bytes.length} bytes, not a whole number of 4-byte float32 samples` });
      samples = { kind: 'float32le', bytes };
    }
    return { code: c.code, sampleRate: c.sampleRate, unit: c.unit, role: c.role, samples, path: `channels.${i}` };
  });
  if (errors.length) throw new IngestRefusal('invalid', 'Some samples cannot be decoded.', errors);
  return { monitorIdentifier: b.monitorId, batchId: b.batchId, startTime: new Date(b.startTime), channels, context: b.context };
}

const littleEndianHost = endianness() === 'LE';

/**
 * Physical-unit samples as float32 little-endian bytes (the storage format). The common case,
 * base64 float32 with unit scaling, stores the decoded bytes as they are, without a copy.
 */
export function toStoredSamples(s: ReceivedSamples, gain: number, offset: number): Buffer {
  const identity = gain === 1 && offset === 0;
  if (s.kind === 'float32le') {
    if (identity) return s.bytes;
    const n = s.bytes.length / 4;
    const out = new Float32Array(n);
    if (littleEndianHost && s.bytes.byteOffset % 4 === 0) {
      const view = new Float32Array(s.bytes.buffer, s.bytes.byteOffset, n);
      for (let i = 0; i < n; i++) out[i] = gain * (view[i] as number) + offset;
    } else {
      for (let i = 0; i < n; i++) out[i] = gain * s.bytes.readFloatLE(i * 4) + offset;
    }
    return float32Bytes(out);
  }
  const out = new Float32Array(s.values.length);
  for (let i = 0; i < out.length; i++) {
    const v = s.values[i];
    out[i] = v === null || v === undefined ? Number.NaN : gain * v + offset;
  }
  return float32Bytes(out);
}

function float32Bytes(a: Float32Array): Buffer {
  if (littleEndianHost) return Buffer.from(a.buffer, a.byteOffset, a.byteLength);
  const b = Buffer.allocUnsafe(a.length * 4);
  for (let i = 0; i < a.length; i++) b.writeFloatLE(a[i] as number, i * 4);
  return b;
}

/** Reads stored float32 LE bytes (compacted or not, see shared/codec) into a Float32Array (copying only when the Buffer is unaligned). */
export function storedSamplesToFloat32(stored: Buffer): Float32Array {
  const bytes = decodeSegment(stored);
  const n = Math.floor(bytes.length / 4);
  if (littleEndianHost && bytes.byteOffset % 4 === 0) return new Float32Array(bytes.buffer, bytes.byteOffset, n);
  const out = new Float32Array(n);
  for (let i = 0; i < n; i++) out[i] = bytes.readFloatLE(i * 4);
  return out;
}
