import request from 'supertest';
import { generateWindow, toIngestBatch } from '@ebbgate/shared/synthetic';
import type { SyntheticSpec } from '@ebbgate/shared/synthetic';
import type { TestGateway } from '../support/harness';

/**
 * Sends one long synthetic recording as consecutive 10-s batches (slices of one generated
 * signal, so the stream is contiguous), like an adapter would.
 */
export async function sendRecording(gw: TestGateway, apiKey: string, monitorId: string, startMs: number, spec: SyntheticSpec, batchSeconds = 10) {
  const whole = generateWindow(spec);
  const fs = spec.sampleRate ?? 125;
  const total = whole.channels[0]!.samples.length / fs;
  const statuses: number[] = [];
  for (let t = 0; t + batchSeconds <= total; t += batchSeconds) {
    const slice = { ...whole, channels: whole.channels.map((c) => ({ ...c, samples: c.samples.slice(t * fs, (t + batchSeconds) * fs) })) };
    const body = toIngestBatch(slice, {
      monitorId,
      batchId: `rec-${startMs}-${t}`,
      startTime: new Date(startMs + t * 1000).toISOString(),
      context: { ventilationMode: 'controlled', tidalVolumeMl: 500, patientHeightCm: 175, patientSex: 'male' },
    });
    const res = await request(gw.server)
      .post('/api/v1/ingest/batches')
      .set('Authorization', `Bearer ${apiKey}`)
      .set('Content-Type', 'application/json')
      .send(JSON.stringify(body));
    statuses.push(res.status);
  }
  return { whole, statuses };
}
