import net from 'node:net';
import type { AnalysisResult } from '@ebbgate/shared/analysis';
import { DEMO_MONITOR_PROFILE } from '@ebbgate/simulator/scenarios';
import type { SignedInClient, TestGateway } from '@ebbgate/gateway/test/support/harness';

/** A free TCP port on 127.0.0.1 (for the gateway's MLLP listener). */
export async function freePort(): Promise<number> {
  const s = net.createServer();
  await new Promise<void>((r) => s.listen(0, '127.0.0.1', r));
  const port = (s.address() as net.AddressInfo).port;
  await new Promise<void>((r) => s.close(() => r()));
  return port;
}

/** Registers the simulator's monitor profile and one monitor per identifier, as an integrator; returns keys and row ids. */
export async function registerMonitors(integrator: SignedInClient, identifiers: string[]) {
  const p = await integrator.post('/api/v1/profiles', DEMO_MONITOR_PROFILE);
  if (p.status !== 201) throw new Error(`profile: ${p.status} ${JSON.stringify(p.body)}`);
  const out = new Map<string, { id: string; apiKey: string }>();
  for (const identifier of identifiers) {
    const m = await integrator.post('/api/v1/monitors', { identifier, profileId: p.body.id, enabled: true });
    if (m.status !== 201) throw new Error(`monitor ${identifier}: ${m.status} ${JSON.stringify(m.body)}`);
    const k = await integrator.post(`/api/v1/monitors/${m.body.id}/api-key`);
    if (k.status !== 201) throw new Error(`key ${identifier}: ${k.status} ${JSON.stringify(k.body)}`);
    out.set(identifier, { id: m.body.id as string, apiKey: k.body.apiKey as string });
  }
  return out;
}

export interface StoredAssessment {
  id: string;
  monitorId: string;
  windowStart: string;
  verdict: string;
  result: AnalysisResult;
}

/**
 * Assessments of one monitor: through GET /api/v1/assessments (api-plan.md) when the gateway
 * serves it; until that route lands, read from the assessment table the analysis worker writes.
 */
export type ApiGet = (path: string) => Promise<{ status: number; body: any }>; // eslint-disable-line @typescript-eslint/no-explicit-any

export async function assessmentsOf(
  gw: Pick<TestGateway, 'ctx'>,
  reviewer: SignedInClient | ApiGet,
  monitorRowId: string,
): Promise<{ items: StoredAssessment[]; via: 'api' | 'table' }> {
  const get: ApiGet = typeof reviewer === 'function' ? reviewer : async (p) => reviewer.get(p);
  const list = await get(`/api/v1/assessments?monitor=${monitorRowId}&pageSize=200`);
  if (list.status === 200) {
    const items: StoredAssessment[] = [];
    for (const s of (list.body.items as { id: string; monitorId: string }[]).filter((x) => x.monitorId === monitorRowId)) {
      const d = await get(`/api/v1/assessments/${s.id}`);
      items.push({ ...d.body.assessment, result: d.body.assessment.result as AnalysisResult });
    }
    return { items, via: 'api' };
  }
  const rows: { id: string; monitor_id: string; window_start: Date; verdict: string; result: string }[] = await gw.ctx.ds.query(
    'SELECT id, monitor_id, window_start, verdict, result FROM assessment WHERE monitor_id = ? ORDER BY window_start',
    [monitorRowId],
  );
  return {
    items: rows.map((r) => ({
      id: r.id,
      monitorId: r.monitor_id,
      windowStart: new Date(r.window_start).toISOString(),
      verdict: r.verdict,
      result: JSON.parse(r.result) as AnalysisResult,
    })),
    via: 'table',
  };
}

export async function waitFor<T>(what: string, probe: () => Promise<T | undefined>, timeoutMs = 90_000): Promise<T> {
  const until = Date.now() + timeoutMs;
  for (;;) {
    const v = await probe();
    if (v !== undefined) return v;
    if (Date.now() > until) throw new Error(`timed out waiting for ${what}`);
    await new Promise((r) => setTimeout(r, 500));
  }
}
