import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startTestGateway, type SignedInClient, type TestGateway } from '../support/harness';
import { corvaneProfile } from './fixtures';

let gw: TestGateway;
let integrator: SignedInClient;
let admin: SignedInClient;
beforeAll(async () => {
  gw = await startTestGateway();
  integrator = await gw.signIn('integrator');
  admin = await gw.signIn('admin');
});
afterAll(async () => gw?.stop());

const auditOf = async (action: string) =>
  (await admin.get(`/api/v1/audit?action=${action}`)).body.items as { entityId: string; before: unknown; after: unknown }[];

describe('monitor profiles', () => {
  it('creates, reads, replaces and deletes a profile, auditing each change', async () => {
    const created = await integrator.post('/api/v1/profiles', corvaneProfile('Corvane Wayfarer crud'));
    expect(created.status).toBe(201);
    expect(created.body.channels[0]).toMatchObject({ code: '150036', role: 'abp', unit: 'mmHg', sampleRate: 125 });
    const id = created.body.id as string;
    expect((await integrator.get(`/api/v1/profiles/${id}`)).body.name).toBe('Corvane Wayfarer crud');

    const replaced = await integrator.put(`/api/v1/profiles/${id}`, { ...corvaneProfile('Corvane Wayfarer crud'), plethScaling: 'auto-scaled' });
    expect(replaced.status).toBe(200);
    expect(replaced.body.plethScaling).toBe('auto-scaled');

    expect((await integrator.delete(`/api/v1/profiles/${id}`)).status).toBe(204);
    expect((await integrator.get(`/api/v1/profiles/${id}`)).status).toBe(404);
    expect((await auditOf('profile.create')).some((e) => e.entityId === id)).toBe(true);
    const upd = (await auditOf('profile.update')).find((e) => e.entityId === id)!;
    expect(upd.before).toMatchObject({ plethScaling: 'raw' });
    expect(upd.after).toMatchObject({ plethScaling: 'auto-scaled' });
    expect((await auditOf('profile.delete')).some((e) => e.entityId === id)).toBe(true);
  });

  it('answers 400 problem details naming each bad field', async () => {
    const bad = { ...corvaneProfile('bad'), transports: ['fax'], channels: [{ code: '', role: 'ecg', unit: 'mV', sampleRate: -1 }] };
    const res = await integrator.post('/api/v1/profiles', bad);
    expect(res.status).toBe(400);
    expect(res.headers['content-type']).toMatch(/application\/problem\+json/);
    const paths = (res.body.errors as { path: string }[]).map((e) => e.path);
    expect(paths).toEqual(expect.arrayContaining(['transports.0', 'channels.0.code', 'channels.0.role', 'channels.0.sampleRate']));
  });

  it('refuses a channel unit the analysis engine cannot convert, naming the channel', async () => {
    const p = corvaneProfile('Corvane odd unit');
    const res = await integrator.post('/api/v1/profiles', { ...p, channels: [{ ...p.channels[0], unit: 'furlong' }] });
    expect(res.status).toBe(400);
    expect(res.body.errors[0]).toMatchObject({ path: 'channels.0.unit' });
  });

  it('refuses a duplicate name (409) and a duplicate channel code (400)', async () => {
    await integrator.post('/api/v1/profiles', corvaneProfile('Corvane dup')).expect(201);
    expect((await integrator.post('/api/v1/profiles', corvaneProfile('Corvane dup'))).status).toBe(409);
    const p = corvaneProfile('Corvane dup codes');
    const res = await integrator.post('/api/v1/profiles', { ...p, channels: [p.channels[0], p.channels[0]] });
    expect(res.status).toBe(400);
  });

  it('lets only the integrator change profiles (reviewer 403, anonymous 401)', async () => {
    const reviewer = await gw.signIn('reviewer');
    expect((await reviewer.post('/api/v1/profiles', corvaneProfile('nope'))).status).toBe(403);
    expect((await reviewer.get('/api/v1/profiles')).status).toBe(200);
    expect((await request(gw.server).get('/api/v1/profiles')).status).toBe(401);
  });
});

describe('beds and monitors', () => {
  it('registers a bed and a monitor (EUI-64), assigns it, lists it with hasApiKey, and audits', async () => {
    const bed = await integrator.post('/api/v1/beds', { name: 'Test bed A', unit: 'ICU', locationIdentifier: 'ICU-T-A' });
    expect(bed.status).toBe(201);
    const profile = await integrator.post('/api/v1/profiles', corvaneProfile('Corvane for monitor'));
    const mon = await integrator.post('/api/v1/monitors', { identifier: '02A0C9FFFE123456', profileId: profile.body.id, bedId: bed.body.id });
    expect(mon.status).toBe(201);
    expect(mon.body).toMatchObject({ identifier: '02A0C9FFFE123456', enabled: true, hasApiKey: false, lastSeenAt: null, dataRate: null });
    expect((await integrator.get(`/api/v1/beds/${bed.body.id}`)).body.monitorId).toBe(mon.body.id);

    const key = await integrator.post(`/api/v1/monitors/${mon.body.id}/api-key`);
    expect(key.status).toBe(201);
    expect(key.body.apiKey).toMatch(/^ebk_/);
    const listed = (await integrator.get('/api/v1/monitors?pageSize=500')).body.items as { id: string; hasApiKey: boolean }[];
    expect(listed.find((m) => m.id === mon.body.id)?.hasApiKey).toBe(true);

    // The key works for a device, then stops working once revoked.
    const probe = () => request(gw.server).get('/api/v1/monitors').set('Authorization', `Bearer ${key.body.apiKey}`);
    expect((await probe()).status).toBe(403); // a device may only ingest
    expect((await integrator.delete(`/api/v1/monitors/${mon.body.id}/api-key`)).status).toBe(204);
    expect((await integrator.get(`/api/v1/monitors/${mon.body.id}`)).body.hasApiKey).toBe(false);

    const patched = await integrator.patch(`/api/v1/monitors/${mon.body.id}`, { enabled: false });
    expect(patched.body.enabled).toBe(false);
    const audit = await auditOf('monitor.update');
    expect(audit.find((e) => e.entityId === mon.body.id)?.after).toMatchObject({ enabled: false });
    expect((await auditOf('device-key.revoke')).some((e) => e.entityId === mon.body.id)).toBe(true);
  });

  it('answers 422 naming the field for a missing profile, 409 for a bed already taken or a duplicate identifier', async () => {
    const res = await integrator.post('/api/v1/monitors', { identifier: 'SERIAL-0001', profileId: 'no-such-profile' });
    expect(res.status).toBe(422);
    expect(res.body.errors).toEqual([{ path: 'profileId', message: 'no monitor profile no-such-profile' }]);
    const bed = await integrator.post('/api/v1/beds', { name: 'Test bed B', unit: 'ICU', locationIdentifier: 'ICU-T-B' });
    await integrator.post('/api/v1/monitors', { identifier: 'SERIAL-0002', bedId: bed.body.id }).expect(201);
    expect((await integrator.post('/api/v1/monitors', { identifier: 'SERIAL-0003', bedId: bed.body.id })).status).toBe(409);
    expect((await integrator.post('/api/v1/monitors', { identifier: 'SERIAL-0002' })).status).toBe(409);
    expect((await integrator.post('/api/v1/monitors', { identifier: 'has space' })).status).toBe(400);
  });

  it('refuses to delete a profile in use, and unassigns the monitor when its bed is deleted', async () => {
    const bed = await integrator.post('/api/v1/beds', { name: 'Test bed C', unit: 'THEATRES', locationIdentifier: 'TH-C' });
    const profile = await integrator.post('/api/v1/profiles', corvaneProfile('Corvane in use'));
    const mon = await integrator.post('/api/v1/monitors', { identifier: 'SERIAL-0004', profileId: profile.body.id, bedId: bed.body.id });
    expect((await integrator.delete(`/api/v1/profiles/${profile.body.id}`)).status).toBe(409);
    expect((await integrator.delete(`/api/v1/beds/${bed.body.id}`)).status).toBe(204);
    expect((await integrator.get(`/api/v1/monitors/${mon.body.id}`)).body.bedId).toBeNull();
    expect((await integrator.delete(`/api/v1/monitors/${mon.body.id}`)).status).toBe(204);
  });
});
