/**
 * Spoofing at the device edge (issue: "an ORU with no key, naming ICU bed 2's monitor, was
 * answered AA"): plain MLLP only from allowed sources, MLLP over TLS only with a client
 * certificate registered for the monitor named in OBX-18. Against the real gateway process.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { oru, Peer, readAck, registerMllpMonitor, startEdgeGateway, type EdgeGateway } from './edge-support';

let e: EdgeGateway;
const M1 = '02EB6AFFFE00E101';
const M2 = '02EB6AFFFE00E102';
const M3 = '02EB6AFFFE00E103';
const M4 = '02EB6AFFFE00E104';
let ids: Record<string, { profileId: string; monitorId: string }>;
const start = new Date('2026-12-01T08:00:00.000Z');
const segments = async (identifier: string) =>
  Number(
    (
      await e.query<{ n: number }>('SELECT COUNT(*) AS n FROM waveform_segment s JOIN monitor m ON m.id = s.monitor_id WHERE m.identifier = ?', [identifier])
    )[0]!.n,
  );

beforeAll(async () => {
  // Nothing allowed by configuration: plain MLLP only from sources registered on a monitor or profile.
  e = await startEdgeGateway({ mllp: { allowedSources: [] } });
  ids = {};
  for (const m of [M1, M2, M3, M4]) ids[m] = await registerMllpMonitor(e, m);
}, 120_000);
afterAll(async () => e?.stop());

describe('plain MLLP from a source that is not allowed', () => {
  it('is closed before anything is read: no answer, nothing stored, counted in /metrics', async () => {
    const peer = await Peer.plain(e.gw.mllpPort!);
    peer.send(oru({ controlId: 'spoof-1', equipment: M1, start }));
    await peer.closed();
    expect(peer.frames).toEqual([]);
    expect(Number((await e.query<{ n: number }>('SELECT COUNT(*) AS n FROM inbound_message'))[0]!.n)).toBe(0);
    expect(await e.metric('source-not-allowed')).toBeGreaterThanOrEqual(1);
  });
});

describe('MLLP over TLS with client certificates', () => {
  it('refuses a connection without a client certificate in the handshake', async () => {
    const outcome = await Peer.secure(e.tlsPort, e.certs).then(
      async (peer) => {
        // TLS 1.3: the server's refusal can arrive just after the client thinks it is connected.
        peer.send(oru({ controlId: 'nocert-1', equipment: M1, start }));
        await peer.closed();
        return peer.frames.length ? 'answered' : 'closed';
      },
      () => 'refused',
    );
    expect(['refused', 'closed']).toContain(outcome);
    expect(Number((await e.query<{ n: number }>('SELECT COUNT(*) AS n FROM inbound_message'))[0]!.n)).toBe(0);
  });

  it('files a message whose certificate is registered on the monitor, storing the sender', async () => {
    const [a, b] = e.certs.clients;
    const reg = await e.integrator.post(`/monitors/${ids[M1]!.monitorId}/edge-credentials`, {
      kind: 'certificate-fingerprint',
      value: a!.fingerprint.match(/../g)!.join(':'),
      note: 'adapter A',
    });
    expect(reg.status).toBe(201);
    expect(reg.body.value).toBe(a!.fingerprint);
    expect((await e.integrator.post(`/profiles/${ids[M2]!.profileId}/edge-credentials`, { kind: 'certificate-subject', value: b!.subject })).status).toBe(201);
    expect((await e.integrator.get(`/monitors/${ids[M1]!.monitorId}/edge-credentials`)).body).toHaveLength(1);
    // No wait: a change through this gateway's API is seen by its edge at once (other processes within seconds).
    const peer = await Peer.secure(e.tlsPort, e.certs, a);
    peer.send(oru({ controlId: 'tls-ok-1', equipment: M1, start }));
    const [ack] = await peer.answers(1);
    expect(readAck(ack!)).toMatchObject({ code: 'AA', controlId: 'tls-ok-1' });
    peer.close();
    const [row] = await e.query<{ sender: string; outcome: string }>("SELECT sender, outcome FROM inbound_message WHERE batch_id = 'tls-ok-1'");
    expect(row!.outcome).toBe('accepted');
    expect(row!.sender).toBe(`certificate:${a!.fingerprint} ${a!.subject}`);
    expect(await segments(M1)).toBe(2);
  });

  it("refuses with AR/CR and a reason a message naming a monitor the certificate does not cover (another adapter's), filing nothing", async () => {
    const [, b] = e.certs.clients;
    const peer = await Peer.secure(e.tlsPort, e.certs, b);
    peer.send(oru({ controlId: 'tls-spoof-1', equipment: M1, start: new Date(start.getTime() + 4_000) }));
    peer.send(oru({ controlId: 'tls-spoof-2', equipment: M1, start: new Date(start.getTime() + 8_000), enhanced: true }));
    peer.send(oru({ controlId: 'tls-own-1', equipment: M2, start }));
    const [ar, cr, own] = (await peer.answers(3)).map(readAck);
    peer.close();
    expect(ar).toMatchObject({ code: 'AR', controlId: 'tls-spoof-1' });
    expect(ar!.errors[0]!.text).toMatch(/not registered for monitor 02EB6AFFFE00E101/);
    expect(cr).toMatchObject({ code: 'CR', controlId: 'tls-spoof-2' });
    expect(own).toMatchObject({ code: 'AA', controlId: 'tls-own-1' });
    expect(await segments(M1)).toBe(2);
    expect(await segments(M2)).toBe(2);
    const kept = await e.query<{ outcome: string; stranger: number; size_bytes: number; raw: Buffer; monitor_id: string | null }>(
      "SELECT outcome, stranger, size_bytes, raw, monitor_id FROM inbound_message WHERE reason LIKE '%not registered for monitor%' ORDER BY id",
    );
    expect(kept).toHaveLength(2);
    for (const k of kept) {
      expect(k).toMatchObject({ outcome: 'rejected', stranger: 1, monitor_id: null });
      expect(k.raw.length).toBe(4096);
      expect(k.size_bytes).toBeGreaterThan(4096);
    }
  });
});

describe('plain MLLP from a registered source', () => {
  it('accepts it only for monitors that source covers and that have no certificate', async () => {
    expect((await e.integrator.post(`/profiles/${ids[M3]!.profileId}/edge-credentials`, { kind: 'source', value: '127.0.0.0/8' })).status).toBe(201);
    expect((await e.integrator.post(`/profiles/${ids[M3]!.profileId}/edge-credentials`, { kind: 'source', value: '127.0.0.300' })).status).toBe(400);
    const peer = await Peer.plain(e.gw.mllpPort!);
    peer.send(oru({ controlId: 'plain-3', equipment: M3, start }));
    peer.send(oru({ controlId: 'plain-1', equipment: M1, start: new Date(start.getTime() + 20_000) }));
    peer.send(oru({ controlId: 'plain-4', equipment: M4, start }));
    const [ok, tlsOnly, notAllowed] = (await peer.answers(3)).map(readAck);
    peer.close();
    expect(ok).toMatchObject({ code: 'AA', controlId: 'plain-3' });
    expect(tlsOnly).toMatchObject({ code: 'AR', controlId: 'plain-1' });
    expect(tlsOnly!.errors[0]!.text).toMatch(/sends over MLLP\/TLS only/);
    expect(notAllowed).toMatchObject({ code: 'AR', controlId: 'plain-4' });
    expect(notAllowed!.errors[0]!.text).toMatch(/not allowed to send for monitor 02EB6AFFFE00E104/);
    expect(await segments(M1)).toBe(2);
    expect(await segments(M4)).toBe(0);
    const [row] = await e.query<{ sender: string; source_address: string }>("SELECT sender, source_address FROM inbound_message WHERE batch_id = 'plain-3'");
    expect(row).toEqual({ sender: 'source:127.0.0.1', source_address: '127.0.0.1' });
  });
});
