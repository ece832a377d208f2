import { readFile } from 'node:fs/promises';
import path from 'node:path';
import { DEMO_MONITOR_PROFILE, DEMO_MONITORS } from '../scenarios/monitor-models';
import { listAll, signIn } from './provision';

/** A provisioned demo monitor: what the demo scenario needs to stream as it. */
export interface DemoMonitorInput {
  identifier: string;
  apiKey: string;
  scenario?: string;
}

interface HospitalBed {
  id: string;
  name: string;
  unit: string;
  locationIdentifier: string;
}

/**
 * Makes the gateway ready for the demo through its own API, as the demo integrator would: the
 * simulated monitor profile, one monitor per `DEMO_MONITORS` entry placed in its bed (beds from
 * config/demo/hospital.json are created when missing, found by EHR Location identifier), and a
 * fresh API key for each. Returns what `runDemoScenario` needs. Safe to run on every start.
 */
export async function provisionDemoMonitors(gatewayUrl: string, creds: { username: string; password: string }, repoRoot: string): Promise<DemoMonitorInput[]> {
  const api = await signIn(gatewayUrl, creds.username, creds.password);
  const hospital = JSON.parse(await readFile(path.join(repoRoot, 'config/demo/hospital.json'), 'utf8')) as { beds: HospitalBed[] };
  const must = async (method: string, p: string, body?: unknown, ok = [200, 201]) => {
    const r = await api(method, p, body);
    if (!ok.includes(r.status)) throw new Error(`${method} ${p}: ${r.status} ${JSON.stringify(r.body)}`);
    return r.body as Record<string, unknown> & { id: string };
  };

  const profiles = await listAll<{ id: string; name: string }>(api, '/profiles', { search: DEMO_MONITOR_PROFILE.name });
  const profileId = profiles.find((p) => p.name === DEMO_MONITOR_PROFILE.name)?.id ?? (await must('POST', '/profiles', DEMO_MONITOR_PROFILE)).id;
  const beds = await listAll<{ id: string; locationIdentifier: string }>(api, '/beds');

  const out: DemoMonitorInput[] = [];
  for (const m of DEMO_MONITORS) {
    let bedId: string | null = null;
    if (m.bedId) {
      const hb = hospital.beds.find((b) => b.id === m.bedId);
      if (hb)
        bedId =
          beds.find((b) => b.locationIdentifier === hb.locationIdentifier)?.id ??
          (await must('POST', '/beds', { name: hb.name, unit: hb.unit, locationIdentifier: hb.locationIdentifier })).id;
    }
    const existing = (await listAll<{ id: string; identifier: string }>(api, '/monitors', { search: m.identifier })).find((x) => x.identifier === m.identifier);
    const monitorId = existing
      ? (await must('PATCH', `/monitors/${existing.id}`, { profileId, bedId, enabled: true })).id
      : (await must('POST', '/monitors', { identifier: m.identifier, profileId, bedId, enabled: true })).id;
    const key = await must('POST', `/monitors/${monitorId}/api-key`);
    out.push({ identifier: m.identifier, apiKey: key.apiKey as string, scenario: m.scenario });
  }
  return out;
}
