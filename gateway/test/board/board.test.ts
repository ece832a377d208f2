import { randomUUID } from 'node:crypto';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startTestGateway, type TestGateway } from '../support/harness';

let gw: TestGateway;
beforeAll(async () => {
  gw = await startTestGateway();
});
afterAll(async () => gw?.stop());

const q = (sql: string, params: unknown[] = []) => gw.ctx.ds.query(sql, params);

async function bed(name: string, unit: string) {
  const id = randomUUID();
  await q('INSERT INTO bed (id, name, unit, location_identifier, created_at, updated_at) VALUES (?, ?, ?, ?, NOW(3), NOW(3))', [id, name, unit, `loc-${name}`]);
  return id;
}
async function monitor(bedId: string | null, lastSeenAgoMs: number | null) {
  const id = randomUUID();
  const identifier = `02${randomUUID().replace(/-/g, '').slice(0, 14).toUpperCase()}`;
  await q(
    'INSERT INTO monitor (id, identifier, profile_id, bed_id, enabled, last_seen_at, created_at, updated_at) VALUES (?, ?, NULL, ?, 1, ?, NOW(3), NOW(3))',
    [id, identifier, bedId, lastSeenAgoMs === null ? null : new Date(Date.now() - lastSeenAgoMs)],
  );
  return { id, identifier };
}
interface Win {
  verdict?: string;
  ppv?: number | null;
  hr?: number;
  flags?: { code: string; severity: string; reason: string }[];
  patient?: string | null;
  name?: string;
  mrn?: string;
  monitorId: string;
}
async function assessment(bedId: string, end: Date, w: Win) {
  const id = randomUUID();
  const flags = w.flags ?? [];
  await q(
    `INSERT INTO assessment (id, monitor_id, bed_id, patient_ref, patient_name, patient_mrn, window_start, window_end, engine_version, verdict, ppv, spv, delta_pop, heart_rate, respiratory_rate, flags, result, created_at)
     VALUES (?, ?, ?, ?, ?, ?, ?, ?, 'test', ?, ?, ?, NULL, ?, 14, ?, ?, NOW(3))`,
    [
      id,
      w.monitorId,
      bedId,
      w.patient ?? null,
      w.name ?? null,
      w.mrn ?? null,
      new Date(end.getTime() - 10_000),
      end,
      w.verdict ?? 'valid',
      w.ppv ?? null,
      w.ppv === null || w.ppv === undefined ? null : w.ppv / 2,
      w.hr ?? 80,
      JSON.stringify(flags.map((f) => f.code)),
      JSON.stringify({ flags }),
    ],
  );
  return id;
}

describe('beds board', () => {
  it('derives each bed state, the latest window with its main flag in words, counts, filters and paging', async () => {
    const now = Date.now();
    const sending = await bed('T-01', 'Test ICU');
    const m1 = await monitor(sending, 5_000);
    await assessment(sending, new Date(now - 60_000), { monitorId: m1.id, ppv: 20, patient: 'Patient/p1' });
    const latestId = await assessment(sending, new Date(now - 10_000), {
      monitorId: m1.id,
      ppv: 12.5,
      verdict: 'questionable',
      patient: 'Patient/p1',
      name: 'Maren Quillfeather',
      mrn: 'HGH-400117',
      flags: [
        { code: 'gap', severity: 'info', reason: 'short gap' },
        { code: 'irregular-rhythm', severity: 'critical', reason: 'Beat intervals vary too much' },
        { code: 'noise-motion', severity: 'warning', reason: 'motion' },
      ],
    });
    const stale = await bed('T-02', 'Test ICU');
    await monitor(stale, 5 * 60_000);
    const empty = await bed('T-03', 'Test theatre');
    const quarantining = await bed('T-04', 'Test theatre');
    const m4 = await monitor(quarantining, 2_000);
    await q(`INSERT INTO inbound_message (received_at, transport, outcome, monitor_id, size_bytes, raw) VALUES (NOW(3), 'http', 'quarantined', ?, 2, 'x')`, [
      m4.id,
    ]);
    const noPatient = await bed('T-05', 'Test theatre');
    const m5 = await monitor(noPatient, 3_000);
    const waiting = await assessment(noPatient, new Date(now - 15_000), { monitorId: m5.id, ppv: 8 });
    await q(`INSERT IGNORE INTO destination (id, name, kind, updated_at) VALUES ('ehr', 'EHR', 'fhir', NOW(3))`);
    await q(
      `INSERT INTO delivery (assessment_id, destination_id, index_name, kind, status, identifier, next_attempt_at, created_at, updated_at) VALUES (?, 'ehr', 'ppv', 'fhir', 'waiting-context', ?, NOW(3), NOW(3), NOW(3))`,
      [waiting, randomUUID()],
    );

    const reviewer = await gw.signIn('reviewer');
    const res = await reviewer.get('/api/v1/board?pageSize=500').expect(200);
    const byName = Object.fromEntries(res.body.items.map((t: { bedName: string }) => [t.bedName, t]));
    expect(byName['T-01'].state).toBe('sending');
    expect(byName['T-02'].state).toBe('stale');
    expect(byName['T-03'].state).toBe('no-monitor');
    expect(byName['T-04'].state).toBe('quarantining');
    expect(byName['T-05'].state).toBe('no-patient');
    expect(res.body.counts).toEqual({ sending: 1, stale: 1, 'no-monitor': 1, quarantining: 1, 'no-patient': 1 });
    // The latest window, and its most severe flag (critical over warning over info) in words.
    expect(byName['T-01'].latest).toMatchObject({
      assessmentId: latestId,
      verdict: 'questionable',
      ppv: 12.5,
      flagCount: 3,
      mainFlag: { code: 'irregular-rhythm', reason: 'Beat intervals vary too much' },
    });
    expect(byName['T-01'].latest.ageSeconds).toBeGreaterThanOrEqual(9);
    expect(byName['T-01']).toMatchObject({ patientRef: 'Patient/p1', patientName: 'Maren Quillfeather', patientMrn: 'HGH-400117' });
    // Found by patient name too.
    const found = await reviewer.get('/api/v1/board?q=quillfeather').expect(200);
    expect(found.body.items.map((t: { bedName: string }) => t.bedName)).toEqual(['T-01']);
    expect(byName['T-01'].monitor.identifier).toBe(m1.identifier);
    // Last hour in 5-minute buckets: both windows fall in the newest bucket(s), not-valid excluded from the mean.
    const trendValues = byName['T-01'].trend.filter((p: { ppv: number | null }) => p.ppv !== null).map((p: { ppv: number }) => p.ppv);
    expect(trendValues.length).toBeGreaterThanOrEqual(1);
    expect(byName['T-03'].latest).toBeNull();

    const theatre = await reviewer.get('/api/v1/board?unit=Test%20theatre').expect(200);
    expect(theatre.body.items.map((t: { bedName: string }) => t.bedName).sort()).toEqual(['T-03', 'T-04', 'T-05']);
    const staleOnly = await reviewer.get('/api/v1/board?state=stale').expect(200);
    expect(staleOnly.body.items.map((t: { bedName: string }) => t.bedName)).toEqual(['T-02']);
    expect(staleOnly.body.counts.sending).toBe(1);
    const page2 = await reviewer.get('/api/v1/board?pageSize=2&page=2').expect(200);
    expect(page2.body.total).toBe(5);
    expect(page2.body.items).toHaveLength(2);
    await reviewer.get('/api/v1/board?state=bogus').expect(400);
    expect(res.body.units).toEqual(['Test ICU', 'Test theatre']);
    void empty;
  });

  it("reads a bed's patient and no-patient state from its newest window whose patient lookup has run, not one just stored", async () => {
    const now = Date.now();
    await q(`INSERT IGNORE INTO destination (id, name, kind, updated_at) VALUES ('ehr', 'EHR', 'fhir', NOW(3))`);
    const delivery = (assessmentId: string, status: string, patient?: { ref: string; name: string; mrn: string }) =>
      q(
        `INSERT INTO delivery (assessment_id, destination_id, index_name, kind, status, identifier, patient_ref, patient_name, patient_mrn, next_attempt_at, created_at, updated_at)
         VALUES (?, 'ehr', 'ppv', 'create', ?, ?, ?, ?, ?, NOW(3), NOW(3), NOW(3))`,
        [assessmentId, status, randomUUID(), patient?.ref ?? null, patient?.name ?? null, patient?.mrn ?? null],
      );
    // Bed with a patient: the older window's delivery found the patient (the EHR then refused the
    // send, so the assessment itself is not filed yet); the newest window is not looked up yet.
    const named = await bed('S-01', 'Settle unit');
    const m1 = await monitor(named, 2_000);
    const older = await assessment(named, new Date(now - 20_000), { monitorId: m1.id, ppv: 11 });
    await delivery(older, 'pending', { ref: 'Patient/p-settle', name: 'Tobin Wrenhaven', mrn: 'HGH-400900' });
    const newest = await assessment(named, new Date(now - 10_000), { monitorId: m1.id, ppv: 14 });
    await delivery(newest, 'pending');
    // Empty bed: the older window waits because the EHR names nobody; the newest is not looked up yet.
    const empty = await bed('S-02', 'Settle unit');
    const m2 = await monitor(empty, 2_000);
    await delivery(await assessment(empty, new Date(now - 20_000), { monitorId: m2.id, ppv: 9 }), 'waiting-context');
    await delivery(await assessment(empty, new Date(now - 10_000), { monitorId: m2.id, ppv: 10 }), 'pending');
    // No destination at all: nothing will look the patient up, so the newest window stands as it is.
    const undelivered = await bed('S-03', 'Settle unit');
    const m3 = await monitor(undelivered, 2_000);
    await assessment(undelivered, new Date(now - 20_000), { monitorId: m3.id, ppv: 9, patient: 'Patient/p-old', name: 'Old Name', mrn: 'HGH-1' });
    await assessment(undelivered, new Date(now - 10_000), { monitorId: m3.id, ppv: 10 });

    const reviewer = await gw.signIn('reviewer');
    const res = await reviewer.get('/api/v1/board?unit=Settle%20unit').expect(200);
    const byName = Object.fromEntries(res.body.items.map((t: { bedName: string }) => [t.bedName, t]));
    expect(byName['S-01']).toMatchObject({ state: 'sending', patientRef: 'Patient/p-settle', patientName: 'Tobin Wrenhaven', patientMrn: 'HGH-400900' });
    expect(byName['S-01'].latest).toMatchObject({ assessmentId: newest, ppv: 14 });
    expect(byName['S-02']).toMatchObject({ state: 'no-patient', patientRef: null });
    expect(byName['S-02'].latest.ppv).toBe(10);
    expect(byName['S-03']).toMatchObject({ state: 'sending', patientRef: null, patientName: null });
  });
});

describe('bed trend', () => {
  it('returns a short span window by window, with transfers as events and the grey zone with its source', async () => {
    const b = await bed('TR-01', 'Trend unit');
    const ma = await monitor(b, 1000);
    const mb = await monitor(null, 1000);
    const base = Date.now() - 30 * 60_000;
    for (let i = 0; i < 20; i++)
      await assessment(b, new Date(base + i * 10_000), { monitorId: i < 10 ? ma.id : mb.id, ppv: 10 + i, verdict: i === 3 ? 'not-valid' : 'valid' });
    const reviewer = await gw.signIn('reviewer');
    const res = await reviewer.get(`/api/v1/board/beds/${b}/trend?hours=1`).expect(200);
    expect(res.body.downsampled).toBe(false);
    expect(res.body.points).toHaveLength(20);
    expect(res.body.points[3].verdict).toBe('not-valid');
    expect(res.body.events.filter((e: { kind: string }) => e.kind === 'bed-transfer')).toHaveLength(1);
    // The default PPV grey zone: 9–13 % (Cannesson et al., Anesthesiology 2011; figures from memory), with that source named.
    expect(res.body.greyZone).toMatchObject({ lower: 9, upper: 13 });
    expect(res.body.greyZone.source).toContain('Cannesson');
    await reviewer.get(`/api/v1/board/beds/${randomUUID()}/trend`).expect(404);
    await reviewer.get(`/api/v1/board/beds/${b}/trend?hours=49`).expect(400);
  });

  it('reduces 48 h of 10-s windows to min/max per bucket without losing the extremes, and exports what it shows as CSV', async () => {
    const b = await bed('TR-48', 'Trend unit');
    const m = await monitor(b, 1000);
    const end = Date.now();
    const n = 48 * 360; // 10-s windows in 48 h
    // Seeded series (a slow sine plus a deterministic jitter); the truth is computed here, from the series.
    const values: { end: Date; ppv: number; verdict: string; hr: number }[] = [];
    let seed = 7;
    const rand = () => (seed = (seed * 1103515245 + 12345) % 2 ** 31) / 2 ** 31;
    for (let i = 0; i < n; i++)
      values.push({
        end: new Date(end - (n - i) * 10_000 + 10_500),
        ppv: Math.round((12 + 6 * Math.sin(i / 500) + rand() * 2) * 100) / 100,
        verdict: i === 9000 ? 'not-valid' : 'valid',
        hr: 70 + (i % 30),
      });
    values[12345]!.ppv = 41.5; // a single peak
    for (let i = 0; i < n; i += 500) {
      const chunk = values.slice(i, i + 500);
      await q(
        `INSERT INTO assessment (id, monitor_id, bed_id, window_start, window_end, engine_version, verdict, ppv, spv, heart_rate, respiratory_rate, flags, result, created_at) VALUES ${chunk.map(() => "(?, ?, ?, ?, ?, 'test', ?, ?, NULL, ?, 14, '[]', '{}', NOW(3))").join(',')}`,
        chunk.flatMap((v) => [randomUUID(), m.id, b, new Date(v.end.getTime() - 10_000), v.end, v.verdict, v.ppv, v.hr]),
      );
    }
    const reviewer = await gw.signIn('reviewer');
    const res = await reviewer.get(`/api/v1/board/beds/${b}/trend?hours=48&maxPoints=1000&to=${new Date(end).toISOString()}`).expect(200);
    expect(res.body.windows).toBe(n);
    expect(res.body.downsampled).toBe(true);
    expect(res.body.points.length).toBeLessThanOrEqual(1000);
    const ppvs = res.body.points.map((p: { ppv: number }) => p.ppv);
    expect(Math.max(...ppvs)).toBe(41.5);
    expect(Math.min(...ppvs)).toBe(Math.min(...values.map((v) => v.ppv)));
    expect(Math.max(...res.body.points.map((p: { heartRate: number }) => p.heartRate))).toBe(99);
    // The not-valid window's bucket carries the worst verdict.
    expect(res.body.points.some((p: { verdict: string }) => p.verdict === 'not-valid')).toBe(true);
    expect(res.body.points.reduce((a: number, p: { windows: number }) => a + p.windows, 0)).toBe(n);

    const csv = await reviewer.get(`/api/v1/board/beds/${b}/trend.csv?hours=48&maxPoints=1000&to=${new Date(end).toISOString()}`).expect(200);
    expect(csv.headers['content-type']).toMatch(/text\/csv/);
    const lines = csv.text.trim().split('\r\n');
    expect(lines[0]).toBe('t,assessmentId,verdict,ppv,spv,deltaPop,heartRate,respiratoryRate,windows');
    expect(lines).toHaveLength(res.body.points.length + 1);
    expect(lines[1]!.split(',')[3]).toBe(String(res.body.points[0].ppv));
  }, 60_000);
});

describe('line checks and context on the trend', () => {
  it('gives the latest flush test of a monitor with its Gardner region in words, and marks it and context changes on the trend', async () => {
    const b = await bed('LC-01', 'Line unit');
    const m = await monitor(b, 1000);
    const t0 = Date.now() - 20 * 60_000;
    const flush = {
      releaseTime: 4.2,
      naturalFrequencyHz: 18.5,
      dampingRatio: 0.42,
      amplitudeRatio: 0.23,
      oscillations: 3,
      region: 'optimal',
      regionText: 'optimal: natural frequency and damping ratio in the optimal region of the Gardner chart',
    };
    const older = { ...flush, naturalFrequencyHz: 9.1, dampingRatio: 0.2, region: 'under-damped', regionText: 'under-damped' };
    for (const [i, f] of [older, flush].entries()) {
      await q(
        `INSERT INTO assessment (id, monitor_id, bed_id, window_start, window_end, engine_version, verdict, flags, result, created_at) VALUES (?, ?, ?, ?, ?, 'test', 'questionable', '["arterial-flush"]', ?, NOW(3))`,
        [
          randomUUID(),
          m.id,
          b,
          new Date(t0 + i * 60_000),
          new Date(t0 + i * 60_000 + 10_000),
          JSON.stringify({ flags: [], arterialLine: { flushTests: [f], dampingEstimate: 'adequate' } }),
        ],
      );
    }
    // Context as the monitor sent it: tidal volume 6 → 8 mL/kg for a minute and back (a challenge), then a vasopressor.
    const ctxAt = [
      [0, { tidalVolumeMl: 420 }],
      [60, { tidalVolumeMl: 560 }],
      [120, { tidalVolumeMl: 420 }],
      [180, { tidalVolumeMl: 420, vasopressorRunning: false }],
      [240, { tidalVolumeMl: 420, vasopressorRunning: true }],
    ] as const;
    for (const [s, c] of ctxAt) {
      await q(
        `INSERT INTO inbound_message (received_at, transport, outcome, monitor_id, size_bytes, raw, batch_start, context) VALUES (NOW(3), 'http', 'accepted', ?, 2, 'x', ?, ?)`,
        [m.id, new Date(t0 + s * 1000), JSON.stringify(c)],
      );
    }
    // The engine's judgement of the challenge, as the analysis worker stores it on the completing window.
    const judged = randomUUID();
    await q(
      `INSERT INTO assessment (id, monitor_id, bed_id, window_start, window_end, engine_version, verdict, flags, result, challenge_verdict, challenge_delta_ppv, created_at) VALUES (?, ?, ?, ?, ?, 'test', 'valid', '[]', '{}', 'positive', 4.4, NOW(3))`,
      [judged, m.id, b, new Date(t0 + 150_000), new Date(t0 + 160_000)],
    );
    const reviewer = await gw.signIn('reviewer');
    const res = await reviewer.get(`/api/v1/board/monitors/${m.identifier}/flush-test`).expect(200);
    expect(res.body.latest.flushTest).toMatchObject({ naturalFrequencyHz: 18.5, dampingRatio: 0.42, region: 'optimal' });
    const none = await reviewer.get(`/api/v1/board/monitors/${randomUUID()}/flush-test`).expect(200);
    expect(none.body.latest).toBeNull();

    const trend = await reviewer.get(`/api/v1/board/beds/${b}/trend?hours=1`).expect(200);
    const kinds = trend.body.events.map((e: { kind: string; label: string }) => `${e.kind}: ${e.label}`);
    expect(kinds).toEqual(
      expect.arrayContaining([
        'tidal-volume: Tidal volume 420 → 560 mL',
        'tidal-volume: Tidal volume 560 → 420 mL',
        'tidal-volume-challenge: Tidal volume raised 420 → 560 mL for 60 s',
        'vasopressor: Vasopressor started',
        'tidal-volume-challenge: Tidal volume challenge judged: positive, ΔPPV +4.4 points',
      ]),
    );
    expect(trend.body.events.find((e: { label: string }) => e.label.includes('judged'))!.assessmentId).toBe(judged);
    expect(kinds.filter((k: string) => k.startsWith('flush-test'))).toHaveLength(2);
    expect(kinds.some((k: string) => k.includes('fn 18.5 Hz, ζ 0.42'))).toBe(true);
  });
});
