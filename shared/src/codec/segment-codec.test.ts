/**
 * The segment codec is lossless to the bit: float32 samples (as IEEE 754 binary32 bit patterns,
 * compared through Uint32Array so NaN payloads and −0 count) survive encode → decode, for
 * monitor-like signals, arbitrary bit patterns and the special values; the blob is also decoded
 * by an independent implementation of the documented layout (Python's zlib, RFC 1951 raw
 * DEFLATE, with struct for the bytes, via Debian's /usr/bin/python3), which must give the same
 * bytes; and segments stored before compaction read back unchanged.
 */
import { execFileSync } from 'node:child_process';
import { describe, expect, it } from 'vitest';
import { generateWindow } from '../synthetic';
import { createPrng } from '../synthetic/prng';
import { decodeSegment, encodeSegment, isEncodedSegment } from './segment-codec';

const bytesOf = (a: Float32Array | Uint32Array) => Buffer.from(a.buffer, a.byteOffset, a.byteLength);
const bitsOf = (b: Buffer) => Array.from(new Uint32Array(b.buffer.slice(b.byteOffset, b.byteOffset + b.byteLength)));

function roundTrip(samples: Float32Array | Uint32Array): void {
  const raw = bytesOf(samples);
  const blob = encodeSegment(raw);
  expect(isEncodedSegment(blob)).toBe(true);
  expect(blob.length % 4).toBe(1);
  const back = decodeSegment(blob);
  expect(back.length).toBe(raw.length);
  expect(bitsOf(back)).toEqual(bitsOf(raw));
}

/** Independent decoder of the documented layout (header, raw DEFLATE, byte planes, second-order deltas). */
const PYTHON_DECODER = `
import sys, zlib, struct
b = bytes.fromhex(sys.stdin.read().strip())
assert b[:4] == b'EGS\\x01'
n = struct.unpack('<I', b[4:8])[0]
planes = zlib.decompressobj(-15).decompress(b[8:])
assert len(planes) == 4 * n
out = bytearray()
p1 = p2 = 0
for i in range(n):
    d = planes[i] | planes[n + i] << 8 | planes[2 * n + i] << 16 | planes[3 * n + i] << 24
    v = (d + 2 * p1 - p2) % (1 << 32)
    out += struct.pack('<I', v)
    p2, p1 = p1, v
sys.stdout.write(out.hex())
`;

describe('segment codec (second-order delta + byte planes + DEFLATE)', () => {
  it('restores synthetic arterial, airway and pleth waveforms bit for bit', () => {
    const w = generateWindow({ seed: 11, durationSeconds: 10, heartRate: 92, respiratoryRate: 18, ppv: 15, channels: ['abp', 'paw', 'pleth'] });
    expect(w.channels.length).toBe(3);
    for (const c of w.channels) roundTrip(new Float32Array(c.samples));
  });

  it('restores arbitrary 32-bit patterns (every NaN payload, denormals, both zeros, infinities)', () => {
    const rng = createPrng(7);
    const random = new Uint32Array(4096);
    for (let i = 0; i < random.length; i++) random[i] = Math.floor(rng.next() * 2 ** 32) >>> 0;
    roundTrip(random);
    roundTrip(new Uint32Array([0x7fc00001, 0xffffffff, 0x80000000, 0x00000000, 0x00000001, 0x007fffff, 0x7f800000, 0xff800000, 0x7f7fffff, 0xffc00000]));
    roundTrip(new Float32Array([Number.NaN, -0, 0, Infinity, -Infinity, 1e-45, 3.4028234663852886e38]));
  });

  it('handles empty and one-sample segments', () => {
    roundTrip(new Float32Array(0));
    roundTrip(new Float32Array([120.25]));
  });

  it('matches an independent decoder of the layout (Python zlib)', () => {
    const w = generateWindow({ seed: 5, durationSeconds: 5, heartRate: 70, respiratoryRate: 12, ppv: 8, channels: ['abp'] });
    const raw = bytesOf(new Float32Array(w.channels[0]!.samples));
    const blob = encodeSegment(raw);
    const hex = execFileSync('/usr/bin/python3', ['-c', PYTHON_DECODER], { input: blob.toString('hex'), encoding: 'utf8' });
    expect(Buffer.from(hex, 'hex').equals(raw)).toBe(true);
  });

  it('reads a segment stored before compaction (raw float32) unchanged, and refuses a non-float32 length', () => {
    const raw = bytesOf(new Float32Array([1, 2, 3, 4]));
    expect(isEncodedSegment(raw)).toBe(false);
    expect(decodeSegment(raw).equals(raw)).toBe(true);
    expect(() => encodeSegment(Buffer.alloc(6))).toThrow(/not float32/);
  });
});
