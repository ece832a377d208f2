import { describe, expect, it } from 'vitest';
import { decodeSamples, ingestBatchSchema } from '@ebbgate/shared';
import { SampleBatcher } from './sample-batcher';

describe('sample batcher', () => {
  it('cuts arbitrary chunks into whole batches that tile in time and keep every sample', () => {
    const b = new SampleBatcher({
      monitorId: 'M1',
      channels: [
        { code: 'ABP', sampleRate: 125, unit: 'mmHg' },
        { code: 'PAW', sampleRate: 50 },
      ],
      batchSeconds: 2,
      startTime: new Date('2026-12-01T10:00:00.000Z'),
    });
    const abp = Array.from({ length: 125 * 5 }, (_, i) => i);
    const paw = Array.from({ length: 50 * 5 }, (_, i) => -i);
    const out = [];
    for (let s = 0; s < 5; s++) {
      out.push(...b.push('ABP', abp.slice(s * 125, (s + 1) * 125)));
      out.push(...b.push('PAW', paw.slice(s * 50, (s + 1) * 50)));
    }
    out.push(...b.flush());
    expect(out.map((x) => x.startTime)).toEqual(['2026-12-01T10:00:00.000Z', '2026-12-01T10:00:02.000Z', '2026-12-01T10:00:04.000Z']);
    for (const x of out) expect(ingestBatchSchema.safeParse(x).success).toBe(true);
    expect(out.flatMap((x) => [...decodeSamples(x.channels[0].samples)])).toEqual(abp);
    expect(out.flatMap((x) => [...decodeSamples(x.channels[1].samples)])).toEqual(paw);
    expect(new Set(out.map((x) => x.batchId)).size).toBe(3);
  });

  it('refuses a batch length that is not a whole number of samples', () => {
    expect(() => new SampleBatcher({ monitorId: 'M', channels: [{ code: 'X', sampleRate: 62.5 }], batchSeconds: 1, startTime: new Date() })).toThrow(
      RangeError,
    );
  });
});
