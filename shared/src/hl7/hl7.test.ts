import { describe, expect, it } from 'vitest';
import { escapeHl7, formatHl7Time, frameMllp, MllpDeframer, MllpReader, parseHl7, parseHl7Async, parseHl7Time, unescapeHl7, type MllpEvent } from './index';

// Framing per HL7 v2 implementation guide appendix C (MLLP): 0x0B message 0x1C 0x0D.
const frames = (events: MllpEvent[]) => events.filter((e) => e.kind === 'frame').map((e) => (e.kind === 'frame' ? e.message.toString('utf8') : ''));

describe('MLLP framing', () => {
  it('wraps a message in VT … FS CR', () => {
    const f = frameMllp('MSH|^~\\&|A\r');
    expect(f[0]).toBe(0x0b);
    expect(f.subarray(-2)).toEqual(Buffer.from([0x1c, 0x0d]));
    expect(f.subarray(1, -2).toString()).toBe('MSH|^~\\&|A\r');
  });

  it('reassembles frames split at every byte, including between FS and CR, and several frames in one chunk', () => {
    const all = Buffer.concat([frameMllp('ONE\r'), frameMllp('T\x1cWO\r'), frameMllp('THREE\r')]);
    const r = new MllpReader({ maxFrameBytes: 100 });
    const got: MllpEvent[] = [];
    for (let i = 0; i < all.length; i++) got.push(...r.push(all.subarray(i, i + 1)));
    expect(frames(got)).toEqual(['ONE\r', 'T\x1cWO\r', 'THREE\r']);
    expect(frames(new MllpReader({ maxFrameBytes: 100 }).push(all))).toEqual(['ONE\r', 'T\x1cWO\r', 'THREE\r']);
    expect(new MllpDeframer().push(all)).toEqual(['ONE\r', 'T\x1cWO\r', 'THREE\r']);
  });

  it('reports bytes outside a frame as stray, and ignores whitespace between frames', () => {
    const r = new MllpReader({ maxFrameBytes: 100 });
    const ev = r.push(Buffer.concat([Buffer.from('\r\n'), frameMllp('A'), Buffer.from('junk'), frameMllp('B')]));
    expect(ev.map((e) => e.kind)).toEqual(['frame', 'stray', 'frame']);
    expect(ev[1]!.kind === 'stray' && ev[1]!.bytes.toString()).toBe('junk');
    r.push(Buffer.from('tail'));
    expect(r.takeStray().map((e) => e.kind)).toEqual(['stray']);
    expect(r.takeStray()).toEqual([]);
  });

  it('stops assembling at the frame limit: one oversize event with the head, the rest skipped to the end block', () => {
    const r = new MllpReader({ maxFrameBytes: 10, headBytes: 4 });
    const big = frameMllp('0123456789ABCDEF');
    const ev = [...r.push(big.subarray(0, 7)), ...r.push(big.subarray(7, 15)), ...r.push(big.subarray(15)), ...r.push(frameMllp('ok'))];
    expect(ev.map((e) => e.kind)).toEqual(['oversize', 'frame']);
    expect(ev[0]!.kind === 'oversize' && ev[0]!.head.toString()).toBe('0123');
    expect(frames(ev)).toEqual(['ok']);
    expect(r.buffered).toBe(0);
  });

  it('holds no more than the frame limit while a sender drips an endless frame', () => {
    const r = new MllpReader({ maxFrameBytes: 1000 });
    r.push(Buffer.from([0x0b]));
    let oversize = 0;
    for (let i = 0; i < 10_000; i++) oversize += r.push(Buffer.from('x')).filter((e) => e.kind === 'oversize').length;
    expect(oversize).toBe(1);
    expect(r.buffered).toBeLessThanOrEqual(1000);
  });

  it('keeps a frame cut off by the peer closing', () => {
    const r = new MllpReader({ maxFrameBytes: 100 });
    r.push(Buffer.from('\x0bMSH|half'));
    expect(r.midFrame).toBe(true);
    expect(r.takeRemainder()?.toString()).toBe('\x0bMSH|half');
  });
});

describe('escaping (HL7 v2.6 ch. 2.7.1: \\F\\ \\S\\ \\T\\ \\R\\ \\E\\)', () => {
  it('escapes every delimiter and reads it back', () => {
    expect(escapeHl7('a|b^c&d~e\\f')).toBe('a\\F\\b\\S\\c\\T\\d\\R\\e\\E\\f');
    expect(unescapeHl7('a\\F\\b\\S\\c\\T\\d\\R\\e\\E\\f')).toBe('a|b^c&d~e\\f');
    expect(escapeHl7('two\r\nlines')).toBe('two  lines');
  });

  it('uses the delimiters the message declares', () => {
    const d = { field: '#', component: '$', repetition: '*', escape: '!', subcomponent: '@' };
    expect(escapeHl7('a#b$c!', d)).toBe('a!F!b!S!c!E!');
    expect(unescapeHl7('a!F!b!S!c!E!', d)).toBe('a#b$c!');
  });

  it('resolves a hex escape (ch. 2.7.4 \\Xhh\\) but leaves one longer than the cap as written', () => {
    expect(unescapeHl7('\\X41\\')).toBe('A');
    const long = `\\X${'41'.repeat(200)}\\`;
    expect(unescapeHl7(long)).toBe(long);
  });
});

describe('DTM timestamps (HL7 v2.6 ch. 2A.22)', () => {
  it('formats in UTC with milliseconds and +0000, and parses offsets and partial precision', () => {
    const t = new Date('2026-11-30T08:01:02.034Z');
    expect(formatHl7Time(t)).toBe('20261130080102.034+0000');
    expect(formatHl7Time('2026-11-30T08:01:02.034Z')).toBe('20261130080102.034+0000');
    expect(parseHl7Time(formatHl7Time(t))?.toISOString()).toBe(t.toISOString());
    expect(parseHl7Time('20261130090000+0100')?.toISOString()).toBe('2026-11-30T08:00:00.000Z');
    expect(parseHl7Time('202611')?.toISOString()).toBe('2026-11-01T00:00:00.000Z');
    expect(parseHl7Time('2026113')).toBeNull();
  });
});

describe('segment reader', () => {
  const msg = (n: number) => ['MSH|^~\\&|A|B|C|D|20261130||ORU^R01|X|P|2.6', ...Array.from({ length: n }, (_, i) => `OBX|${i + 1}|NM|x`)].join('\r');

  it('refuses more segments or fields than its caps, naming the cap', () => {
    expect(() => parseHl7(msg(10), { maxSegments: 5, maxFieldsPerSegment: 50 })).toThrow(expect.objectContaining({ limit: 'maxSegments=5' }));
    expect(() => parseHl7(`MSH|^~\\&|${'|'.repeat(60)}`, { maxSegments: 5, maxFieldsPerSegment: 50 })).toThrow(
      expect.objectContaining({ limit: 'maxFieldsPerSegment=50' }),
    );
    expect(parseHl7(msg(4), { maxSegments: 5, maxFieldsPerSegment: 50 }).segments).toHaveLength(5);
  });

  it('reads the received bytes segment by segment the same as the text (UTF-8, CR or LF endings)', () => {
    const text = 'MSH|^~\\&|Ä|B\rPID|||1||Ødegård^Åsa\nOBX|1|ST|x||naïve ✓\r\n';
    const limits = { maxSegments: 10, maxFieldsPerSegment: 50 };
    const fromBytes = parseHl7(Buffer.from('\x0b' + text), limits).segments;
    expect(fromBytes.map((x) => x.fields)).toEqual(parseHl7(text, limits).segments.map((x) => x.fields));
    expect(fromBytes.map((x) => x.name)).toEqual(['MSH', 'PID', 'OBX']);
    expect(fromBytes[1]!.fields[5]).toBe('Ødegård^Åsa');
  });

  it('the time-sliced reader gives the event loop turns on a large message and reads the same segments', async () => {
    const text = msg(60_000);
    let turns = 0;
    const ticker = setInterval(() => turns++, 0);
    const parsed = await parseHl7Async(
      text,
      { maxSegments: 100_000, maxFieldsPerSegment: 50 },
      (() => {
        let n = 0;
        return () => (++n % 10 === 0 ? new Promise<void>((r) => setImmediate(r)) : undefined);
      })(),
    );
    clearInterval(ticker);
    expect(parsed.segments).toHaveLength(60_001);
    expect(parsed.segments.map((s) => s.fields[1])).toEqual(parseHl7(text, { maxSegments: 100_000, maxFieldsPerSegment: 50 }).segments.map((s) => s.fields[1]));
    expect(turns).toBeGreaterThan(0);
  });
});
