/**
 * The raw body of an accepted batch, kept compressed: its samples are stored decoded as well
 * (waveform_segment), so the raw copy is there only to reproduce the message as received.
 * raw_encoding says how a row's bytes are kept (NULL: as received; 'deflate': RFC 1951 raw DEFLATE).
 */
import { deflateRawSync, inflateRawSync } from 'node:zlib';

export type RawEncoding = 'deflate' | null;

/** Level 1: most of the gain (base64 float32 text is ~70 % after DEFLATE at any level) for the least CPU on the ingest path. */
export function compressRawBody(raw: Buffer): { bytes: Buffer; encoding: RawEncoding } {
  return { bytes: deflateRawSync(raw, { level: 1 }), encoding: 'deflate' };
}

/** The body exactly as received. */
export function rawBodyOf(row: { raw: Buffer; rawEncoding?: string | null }): Buffer {
  if (!row.rawEncoding) return row.raw;
  if (row.rawEncoding === 'deflate') return inflateRawSync(row.raw);
  throw new Error(`inbound message: unknown raw_encoding "${row.rawEncoding}"`);
}
