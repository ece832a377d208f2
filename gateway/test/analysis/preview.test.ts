import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { generateWindow, toCsvCapture, toIngestBatch } from '@ebbgate/shared/synthetic';
import { startTestGateway, type SignedInClient, type TestGateway } from '../support/harness';
import { corvaneProfile } from '../devices/fixtures';
import { buildPcd01 } from '../ingest/pcd01-fixture';

let gw: TestGateway;
let integrator: SignedInClient;
let profileId: string;
beforeAll(async () => {
  gw = await startTestGateway({ analysis: { previewMaxBytes: 600_000 } });
  integrator = await gw.signIn('integrator');
  profileId = (await integrator.post('/api/v1/profiles', corvaneProfile('Corvane bench'))).body.id;
});
afterAll(async () => gw?.stop());

const window = generateWindow({ seed: 11, durationSeconds: 30, heartRate: 72, respiratoryRate: 12, ppv: 15, channels: ['abp', 'paw'] });
/** A multipart request with the signed-in client's cookies and CSRF header. */
const multipart = (who: SignedInClient) =>
  request(gw.server).post('/api/v1/analysis/preview').set('Cookie', who.cookies.join('; ')).set('X-CSRF-Token', who.csrfToken);
const upload = (content: string | Buffer, filename: string, fields: Record<string, string> = {}) => {
  const t = multipart(integrator);
  for (const [k, v] of Object.entries(fields)) t.field(k, v);
  return t.attach('file', Buffer.from(content), filename);
};
const counts = async () => {
  const [r] = await gw.ctx.ds.query(
    'SELECT (SELECT COUNT(*) FROM inbound_message) AS i, (SELECT COUNT(*) FROM waveform_segment) AS s, (SELECT COUNT(*) FROM assessment) AS a',
  );
  return r;
};

describe('POST /analysis/preview (test bench)', () => {
  it('analyses a JSON batch through a profile and stores nothing', async () => {
    const before = await counts();
    const batch = toIngestBatch(window, {
      monitorId: 'BENCH',
      batchId: 'b',
      startTime: '2026-11-30T11:00:00.000Z',
      context: { ventilationMode: 'controlled', tidalVolumeMl: 520 },
    });
    const res = await upload(JSON.stringify(batch), 'capture.json', { profileId });
    expect(res.status).toBe(200);
    expect(res.body.parseReport).toMatchObject({ format: 'json', profileId, warnings: [] });
    expect(res.body.parseReport.channels.map((c: { role: string; samples: number }) => [c.role, c.samples])).toEqual([
      ['abp', 3750],
      ['paw', 3750],
    ]);
    expect(res.body.waveform.channels[0].samples).toHaveLength(3750);
    expect(res.body.analysis.engineVersion).toBeTruthy();
    expect(res.body.analysis.beats.abp.beats.length).toBeGreaterThan(30);
    // PPV is 15 % by construction of the synthetic signal (the engine's accuracy is tested in shared).
    const ppv = res.body.analysis.indices.ppv.value;
    expect(ppv).not.toBeNull();
    expect(Math.abs(ppv - 15)).toBeLessThan(3);
    expect(await counts()).toEqual(before);
  });

  it('reads a CSV capture and an HL7 file without a profile', async () => {
    const csv = await upload(toCsvCapture(window), 'capture.csv');
    expect(csv.status).toBe(200);
    expect(csv.body.parseReport.format).toBe('csv');
    expect(csv.body.parseReport.channels.map((c: { role: string }) => c.role)).toEqual(['abp', 'paw']);
    const hl7 = buildPcd01({
      controlId: 'bench-1',
      equipment: 'AA',
      start: new Date('2026-11-30T11:00:00Z'),
      waves: [{ code: '150036', refId: 'MDC_PRESS_BLD_ART_ABP', sampleRate: 125, samples: window.channels[0]!.samples }],
    });
    const res = await upload(hl7, 'capture.hl7');
    expect(res.status).toBe(200);
    expect(res.body.parseReport).toMatchObject({ format: 'hl7', channels: [{ code: '150036', role: 'abp', unit: 'mmHg', sampleRate: 125, samples: 3750 }] });
  });

  it('answers clear errors: no file 400, unreadable CSV 400 naming the line, unknown profile 422, too big 413, reviewer 403', async () => {
    expect((await multipart(integrator).field('profileId', profileId)).body.errors).toEqual([{ path: 'file', message: 'required' }]);
    const bad = await upload('time,abp[mmHg]\n0,80\n0.008,eighty\n', 'bad.csv');
    expect(bad.status).toBe(400);
    expect(bad.body.errors[0].path).toMatch(/^line \d+$/);
    expect((await upload('{}', 'x.json', { profileId: 'nope' })).status).toBe(422);
    expect((await upload(Buffer.alloc(700_000, 0x41), 'big.csv')).status).toBe(413);
    const reviewer = await gw.signIn('reviewer');
    const r = await multipart(reviewer).attach('file', Buffer.from(toCsvCapture(window)), 'c.csv');
    expect(r.status).toBe(403);
  });
});
