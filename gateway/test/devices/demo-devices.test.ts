import { readFileSync } from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DEMO_MONITOR_PROFILE, DEMO_MONITORS } from '../../../simulator/src/scenarios/monitor-models';
import { repoRoot } from '../../src/config/load';
import { LARKSPUR_PROFILE, seedDemoDevices } from '../../src/seed/demo-devices';
import { startTestGateway, type TestGateway } from '../support/harness';

let gw: TestGateway;
beforeAll(async () => {
  gw = await startTestGateway();
});
afterAll(async () => gw?.stop());

describe('demo devices seed', () => {
  it('creates the invented profiles, every bed of the demo hospital and one monitor per bed, idempotently', async () => {
    const first = await seedDemoDevices(gw.ctx.ds);
    const again = await seedDemoDevices(gw.ctx.ds);
    expect(again).toEqual(first);
    const hospital = JSON.parse(readFileSync(path.join(repoRoot, 'config/demo/hospital.json'), 'utf8')) as {
      beds: { id: string; locationIdentifier: string }[];
    };
    const integrator = await gw.signIn('integrator');
    const beds = (await integrator.get('/api/v1/beds?pageSize=500')).body.items as { id: string; locationIdentifier: string; monitorId: string | null }[];
    expect(beds.map((b) => b.id).sort()).toEqual(hospital.beds.map((b) => b.id).sort());
    expect(beds.every((b) => b.monitorId)).toBe(true);
    expect(first).toHaveLength(hospital.beds.length + 1);
    // IHE PCD-01 prefers EUI-64: 16 hexadecimal digits.
    expect(first.every((m) => /^[0-9A-F]{16}$/.test(m.identifier))).toBe(true);
    expect((await integrator.get('/api/v1/profiles')).body.total).toBe(3);
    const audit = (await (await gw.signIn('admin')).get('/api/v1/audit?action=monitor.create')).body;
    expect(audit.total).toBe(first.length);
  });

  it('matches the simulator: its monitors and beds, and a profile mapping every code it sends', () => {
    const simulatorCodes = DEMO_MONITOR_PROFILE.channels.map((c) => [c.code, c.role]);
    const seeded = new Map(LARKSPUR_PROFILE.channels.map((c) => [c.code, c.role]));
    for (const [code, role] of simulatorCodes) expect(seeded.get(code!)).toBe(role);
    return seedDemoDevices(gw.ctx.ds).then((monitors) => {
      for (const m of DEMO_MONITORS) expect(monitors.find((s) => s.identifier === m.identifier)?.bedId ?? null).toBe(m.bedId);
    });
  });
});
