/**
 * Attack on the logs: the database fails while a message naming a patient arrives over MLLP and
 * while a person searches assessments by a patient's name over HTTP. The gateway's own log
 * (its process output) must hold neither the name nor the record number, in any spelling.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { Peer, oru, readAck, registerMllpMonitor, startEdgeGateway, type EdgeGateway } from './edge-support';

let e: EdgeGateway;
const NAME = 'Wrenhallow';
const MRN = 'HGH-771043';
const MONITOR = '0AB1C2FFFE3D4E71';

beforeAll(async () => {
  e = await startEdgeGateway();
  await registerMllpMonitor(e, MONITOR);
});
afterAll(async () => e?.stop());

const forms = (s: string) => [s, Buffer.from(s).toString('hex'), Buffer.from(s).toString('base64'), JSON.stringify([...Buffer.from(s)]).slice(1, -1)];

describe('no PHI in logs when the database fails', () => {
  it('keeps the patient name and record number out of the log during MLLP and HTTP failures', async () => {
    await e.query('RENAME TABLE inbound_message TO inbound_message_away, assessment TO assessment_away');
    try {
      const message = oru({ controlId: 'PHI-1', equipment: MONITOR, start: new Date(Date.now() - 10_000) }).replace(
        'PID|||HGH-1^^^HGH^MR||Testpatient^Edge',
        `PID|||${MRN}^^^HGH^MR||${NAME}^Maren||19610423|F`,
      );
      expect(message).toContain(NAME);
      const peer = await Peer.plain(e.gw.mllpPort!);
      peer.send(message);
      // Either an answer that makes a conforming sender resend (AR/CR echoing MSA-2), or a close.
      const outcome = await Promise.race([peer.answers(1).then(([a]) => readAck(a!)), peer.closed().then(() => 'closed' as const)]);
      if (outcome !== 'closed') {
        expect(['AR', 'CR']).toContain(outcome.code);
        expect(outcome.controlId).toBe('PHI-1');
      }
      peer.close();
      const search = await e.integrator.get(`/assessments?patient=${encodeURIComponent(NAME)}`);
      expect(search.status).toBeGreaterThanOrEqual(500);
      expect(JSON.stringify(search.body)).not.toContain(NAME);
    } finally {
      await e.query('RENAME TABLE inbound_message_away TO inbound_message, assessment_away TO assessment');
    }
    await new Promise((r) => setTimeout(r, 500));
    const log = e.gw.output();
    expect(log).toContain('ER_NO_SUCH_TABLE'); // the failures were logged, by kind
    for (const f of [...forms(NAME), ...forms(MRN)]) expect(log, `log holds ${f}`).not.toContain(f);
    expect(log).not.toMatch(/INSERT INTO|SELECT .* FROM/);
  });
});
