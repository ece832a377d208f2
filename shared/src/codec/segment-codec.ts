/**
 * Lossless compaction of stored waveform segments (float32 little-endian samples, the decoded form
 * the gateway keeps). Encoding: second-order delta coding of each sample's 32-bit pattern
 * (u[i] − 2·u[i−1] + u[i−2], modulo 2^32, so decoding restores every bit, NaN payloads and −0
 * included; it beat first-order deltas and XOR with the previous sample on our monitor signals),
 * the four bytes of each delta split into four planes (byte shuffle: the high bytes
 * of small deltas are runs of 0x00/0xFF), then DEFLATE (RFC 1951) from node:zlib. Monitor signals
 * are smooth at 125 Hz, so consecutive floats share sign and exponent and their bit patterns
 * differ in the low mantissa bits only.
 *
 * Blob layout: 'E' 'G' 'S' version(1) sampleCount(uint32 LE) deflate-raw payload, padded with zero
 * bytes so the length is ≡ 1 (mod 4). A raw float32 segment is always a multiple of 4 bytes, so a
 * reader tells the two apart without a schema change, and segments stored before compaction stay
 * readable as they are.
 */
import { deflateRawSync, inflateRawSync } from 'node:zlib';

const MAGIC = [0x45, 0x47, 0x53, 0x01] as const; // "EGS" v1
const HEADER = 8;

export function isEncodedSegment(blob: Uint8Array): boolean {
  return blob.length >= HEADER && blob.length % 4 === 1 && MAGIC.every((b, i) => blob[i] === b);
}

/** Encodes raw float32-LE sample bytes (length a multiple of 4). */
export function encodeSegment(raw: Uint8Array, level = 3): Buffer {
  if (raw.length % 4 !== 0) throw new Error(`segment of ${raw.length} bytes is not float32 samples`);
  const n = raw.length / 4;
  const src = new DataView(raw.buffer, raw.byteOffset, raw.byteLength);
  const planes = Buffer.allocUnsafe(raw.length);
  let p1 = 0;
  let p2 = 0;
  for (let i = 0; i < n; i++) {
    const bits = src.getUint32(i * 4, true);
    // Exact in doubles (|value| < 2^35), then reduced modulo 2^32.
    const d = (bits - 2 * p1 + p2) >>> 0;
    p2 = p1;
    p1 = bits;
    planes[i] = d & 0xff;
    planes[n + i] = (d >>> 8) & 0xff;
    planes[2 * n + i] = (d >>> 16) & 0xff;
    planes[3 * n + i] = d >>> 24;
  }
  const payload = deflateRawSync(planes, { level });
  const pad = (1 - ((HEADER + payload.length) % 4) + 4) % 4;
  const out = Buffer.alloc(HEADER + payload.length + pad);
  MAGIC.forEach((b, i) => (out[i] = b));
  out.writeUInt32LE(n, 4);
  payload.copy(out, HEADER);
  return out;
}

/** Raw float32-LE bytes of a stored segment, encoded or not (bit-exact inverse of encodeSegment). */
export function decodeSegment(blob: Uint8Array): Buffer {
  if (!isEncodedSegment(blob)) return Buffer.isBuffer(blob) ? blob : Buffer.from(blob.buffer, blob.byteOffset, blob.byteLength);
  const b = Buffer.isBuffer(blob) ? blob : Buffer.from(blob.buffer, blob.byteOffset, blob.byteLength);
  const n = b.readUInt32LE(4);
  // The payload is followed by 0-3 pad bytes; raw inflate stops at the end of the DEFLATE stream.
  const planes = inflateRawSync(b.subarray(HEADER), { maxOutputLength: Math.max(1, n * 4) });
  if (planes.length !== n * 4) throw new Error(`encoded segment: ${planes.length} bytes for ${n} samples`);
  const out = Buffer.allocUnsafe(n * 4);
  let p1 = 0;
  let p2 = 0;
  for (let i = 0; i < n; i++) {
    const d = (planes[i]! | (planes[n + i]! << 8) | (planes[2 * n + i]! << 16) | (planes[3 * n + i]! << 24)) >>> 0;
    const bits = (d + 2 * p1 - p2) >>> 0;
    out.writeUInt32LE(bits, i * 4);
    p2 = p1;
    p1 = bits;
  }
  return out;
}
