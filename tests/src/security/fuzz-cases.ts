/**
 * Bad input for each transport, as fast-check arbitraries, and the in-process checks the suite
 * and `npm run bench:edge` run over them: whatever the bytes, the MLLP reader, the PCD-01
 * decoder and the ACK builder (HTTP: the JSON batch decoder) either succeed or refuse with an
 * IngestRefusal; the ACK always has MSA with an HL7 code and echoes the control id it could read.
 */
import fc from 'fast-check';
import { MllpReader, frameMllp } from '@ebbgate/shared/hl7';
import { ackCodeFor, buildAck, headerOf } from '@ebbgate/gateway/ingest/hl7/ack';
import { decodePcd01 } from '@ebbgate/gateway/ingest/hl7/pcd01';
import { decodeJsonBatch } from '@ebbgate/gateway/ingest/decoded-batch';
import { IngestRefusal } from '@ebbgate/gateway/ingest/refusal';
import { oru } from './edge-support';

const SEED_ORU = oru({ controlId: 'fz-1', equipment: '02EB6AFFFE00EF01', start: new Date('2026-12-01T10:00:00Z'), seconds: 1 });
const SEED_JSON = JSON.stringify({
  monitorId: '02EB6AFFFE00EF01',
  batchId: 'fz-1',
  startTime: '2026-12-01T10:00:00.000Z',
  channels: [{ code: '150036', sampleRate: 125, samples: [80, 81, null, 82] }],
  context: { tidalVolumeMl: 450 },
});
const NASTY = [
  '|',
  '^',
  '~',
  '\\',
  '&',
  '\r',
  '\n',
  '\x0b',
  '\x1c',
  '\x1c\r',
  'MSH|^~\\&|',
  'OBX|',
  '\\X41\\',
  '\\X' + '0'.repeat(300) + '\\',
  '1.2.1.1.1',
  'NA',
  'NM',
  '',
  '\u0000',
  '\uffff',
  'é',
  '9'.repeat(400),
  '-1e309',
  'NaN',
];

/** A seed message with a few splices of nasty or random text at random places. */
const mutated = (seed: string) =>
  fc
    .array(
      fc.record({ at: fc.nat({ max: seed.length }), cut: fc.nat({ max: 40 }), insert: fc.oneof(fc.constantFrom(...NASTY), fc.string({ maxLength: 30 })) }),
      { minLength: 1, maxLength: 6 },
    )
    .map((edits) => {
      let s = seed;
      for (const e of edits) s = s.slice(0, Math.min(e.at, s.length)) + e.insert + s.slice(Math.min(e.at, s.length) + e.cut);
      return s;
    });

/** HL7-ish bytes: mutated valid messages, random text, random bytes. */
export const hl7Input = fc.oneof(
  { weight: 5, arbitrary: mutated(SEED_ORU).map((s) => Buffer.from(s, 'utf8')) },
  { weight: 2, arbitrary: fc.string({ maxLength: 300 }).map((s) => Buffer.from(`MSH|^~\\&|${s}`, 'utf8')) },
  { weight: 1, arbitrary: fc.uint8Array({ maxLength: 300 }).map((a) => Buffer.from(a)) },
);

/** JSON-ish bodies: mutated valid batches, arbitrary JSON values, random text. */
export const jsonInput = fc.oneof(
  { weight: 5, arbitrary: mutated(SEED_JSON).map((s) => Buffer.from(s, 'utf8')) },
  { weight: 2, arbitrary: fc.json({ maxDepth: 4 }).map((s) => Buffer.from(s, 'utf8')) },
  { weight: 1, arbitrary: fc.string({ maxLength: 200 }).map((s) => Buffer.from(s, 'utf8')) },
);

const ACK_CODES = new Set(['AA', 'AE', 'AR', 'CA', 'CE', 'CR']);

/** One HL7 case through framing (random chunking), decoding and the ACK. Throws on any unclear outcome. */
export function checkHl7Case(input: Buffer, chunk: number): void {
  const reader = new MllpReader({ maxFrameBytes: 4096, headBytes: 512 });
  const framed = frameMllp(input);
  const events = [];
  for (let i = 0; i < framed.length; i += chunk) events.push(...reader.push(framed.subarray(i, i + chunk)));
  events.push(...reader.takeStray());
  for (const e of events) {
    const raw = e.kind === 'frame' ? e.message : e.kind === 'stray' ? e.bytes : e.head;
    const header = headerOf(raw);
    let refusal: IngestRefusal | undefined;
    try {
      decodePcd01(raw);
    } catch (err) {
      if (!(err instanceof IngestRefusal)) throw new Error(`decoder threw ${(err as Error).name}: ${(err as Error).message}`, { cause: err });
      if (!err.reason) throw new Error('a refusal without a reason', { cause: err });
      refusal = err;
    }
    const ack = buildAck(header, ackCodeFor(refusal, header?.enhancedMode ?? false), refusal);
    const msa = ack
      .split('\r')
      .find((s) => s.startsWith('MSA|'))
      ?.split('|');
    if (!msa || !ACK_CODES.has(msa[1] ?? '')) throw new Error(`no clear MSA in ${JSON.stringify(ack.slice(0, 200))}`);
    if (refusal && !ack.includes('\rERR|')) throw new Error('a NAK without ERR');
    if (header?.controlId && !msa[2]) throw new Error('MSA-2 empty although MSH-10 was readable');
  }
}

/** One HTTP body through the JSON batch decoder. */
export function checkJsonCase(input: Buffer): void {
  try {
    decodeJsonBatch(input);
  } catch (err) {
    if (!(err instanceof IngestRefusal)) throw new Error(`decoder threw ${(err as Error).name}: ${(err as Error).message}`, { cause: err });
    if (!err.reason) throw new Error('a refusal without a reason', { cause: err });
  }
}

/** Runs `numRuns` cases per transport in process; returns the cases tried and the time taken. */
export function fuzzInProcess(numRuns: number, seed?: number): { mllp: { cases: number; ms: number }; http: { cases: number; ms: number } } {
  let t0 = performance.now();
  let mllpCases = 0;
  fc.assert(
    fc.property(hl7Input, fc.integer({ min: 1, max: 64 }), (input, chunk) => {
      mllpCases++;
      checkHl7Case(input, chunk);
    }),
    { numRuns, seed },
  );
  const mllpMs = performance.now() - t0;
  t0 = performance.now();
  let httpCases = 0;
  fc.assert(
    fc.property(jsonInput, (input) => {
      httpCases++;
      checkJsonCase(input);
    }),
    { numRuns, seed },
  );
  return { mllp: { cases: mllpCases, ms: mllpMs }, http: { cases: httpCases, ms: performance.now() - t0 } };
}
