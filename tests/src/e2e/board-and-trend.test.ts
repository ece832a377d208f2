/**
 * Beds board and bed trend end to end, in Chromium against a running gateway: two beds fed by
 * adapter batches (synthetic generator), the board as a reviewer's first screen, a bed going
 * stale when its monitor stops sending, a tidal volume challenge (6 → 8 mL/kg PBW for a minute,
 * ENGINE's synthetic challenge generator) marked on the trend, a 48-h series of 10-s windows on
 * the trend, keyboard use, axe-core (WCAG 2.1 AA) on each screen, and a screenshot of each.
 */
import { randomBytes, randomUUID } from 'node:crypto';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { generateChallenge, generateWindow, SYNTHETIC_CHANNEL_CODES, toIngestBatch, type SyntheticWindow } from '@ebbgate/shared/synthetic';
import type { AnalysisContext } from '@ebbgate/shared';
import { openBrowser, screenshot, signIn, type Browser } from './browser';
import { apiSignIn, eventually, type ApiSession } from './api';
import { axeViolations } from './axe';
import { startStack, type E2eStack } from '../support/stack';

let stack: E2eStack;
let browser: Browser;
let integrator: ApiSession;
const suffix = randomBytes(2).toString('hex').toUpperCase();
const beds: Record<'a' | 'b', { id: string; name: string; identifier: string; apiKey: string }> = {} as never;
const CONTEXT: AnalysisContext = { ventilationMode: 'controlled', setRespiratoryRate: 16, tidalVolumeMl: 560, patientHeightCm: 175, patientSex: 'male' };

async function send(which: 'a' | 'b', window: SyntheticWindow, startTime: Date, context: AnalysisContext = CONTEXT) {
  const b = beds[which];
  const batch = toIngestBatch(window, { monitorId: b.identifier, batchId: randomUUID(), startTime: startTime.toISOString(), context });
  const res = await fetch(`${stack.gatewayUrl}/api/v1/ingest/batches`, {
    method: 'POST',
    headers: { authorization: `Bearer ${b.apiKey}`, 'content-type': 'application/json' },
    body: JSON.stringify(batch),
  });
  expect(res.status).toBe(202);
}
const challenge = generateChallenge({ seed: 5, kind: 'responder', patientHeightCm: 175, patientSex: 'male' });
const steady = (seed: number, seconds = 30) =>
  generateWindow({ seed, durationSeconds: seconds, heartRate: 80, respiratoryRate: 16, ppv: 14, channels: ['abp', 'pleth', 'paw'] });

beforeAll(async () => {
  stack = await startStack();
  browser = await openBrowser();
  integrator = await apiSignIn(stack.gatewayUrl, 'integrator');
  const profile = await integrator.call<{ id: string }>('POST', '/profiles', {
    name: `E2E board monitor ${suffix}`,
    manufacturer: 'Tidewell Instruments (invented)',
    model: 'Gullwing (invented)',
    transports: ['http'],
    channels: (['abp', 'pleth', 'paw'] as const).map((role) => ({
      code: SYNTHETIC_CHANNEL_CODES[role],
      label: role,
      role,
      unit: role === 'abp' ? 'mmHg' : role === 'paw' ? 'cmH2O' : '1',
      gain: 1,
      offset: 0,
      sampleRate: 125,
    })),
    defaultProbeSite: null,
    plethScaling: 'raw',
    notes: null,
  });
  expect(profile.status).toBe(201);
  for (const [k, n] of [
    ['a', 1],
    ['b', 2],
  ] as const) {
    const name = `E2E bed ${suffix}-${n}`;
    const bed = await integrator.call<{ id: string }>('POST', '/beds', { name, unit: 'E2E unit', locationIdentifier: `E2E-${suffix}-${n}` });
    expect(bed.status).toBe(201);
    // Locally administered EUI-64 (first octet 02, U/L bit set).
    const identifier = `02E2E0${suffix}${randomBytes(3).toString('hex').toUpperCase()}`;
    const monitor = await integrator.call<{ id: string }>('POST', '/monitors', { identifier, profileId: profile.body.id, bedId: bed.body.id, enabled: true });
    expect(monitor.status).toBe(201);
    const key = await integrator.call<{ apiKey: string }>('POST', `/monitors/${monitor.body.id}/api-key`);
    beds[k] = { id: bed.body.id, name, identifier, apiKey: key.body.apiKey };
  }
  const t0 = new Date(Date.now() - 65_000);
  for (const k of ['a', 'b'] as const) await send(k, steady(k === 'a' ? 11 : 12, 60), t0);
  const reviewer = await apiSignIn(stack.gatewayUrl, 'reviewer');
  await eventually(
    async () => {
      const board = await reviewer.call<{ items: { bedId: string; latest: unknown }[] }>('GET', '/board?unit=E2E%20unit');
      return board.body.items.length === 2 && board.body.items.every((t) => t.latest) ? true : undefined;
    },
    'a window on both beds',
    90,
  );
}, 180_000);
afterAll(async () => {
  await browser?.close();
  await stack?.stop();
});

async function expectNoAxeViolations(what: string) {
  const violations = await axeViolations(browser.page);
  expect(violations, `${what}: ${JSON.stringify(violations, null, 1)}`).toEqual([]);
}

describe('beds board', () => {
  it('is the reviewer’s first screen, shows each bed with its data state, works from the keyboard, and a bed goes stale when its monitor stops', async () => {
    const { page, context } = browser;
    await context.clearCookies();
    await signIn(page, stack.gatewayUrl, 'reviewer');
    await page.goto(`${stack.gatewayUrl}/`);
    await page.getByRole('heading', { level: 1, name: 'Beds board' }).waitFor();
    expect(new URL(page.url()).pathname).toBe('/board');
    const tileA = page.getByRole('article', { name: new RegExp(beds.a.name) });
    const tileB = page.getByRole('article', { name: new RegExp(beds.b.name) });
    await tileA.waitFor();
    // The mock EHR has no encounter at these new locations: data arrive, results wait for a patient.
    expect(await tileA.getAttribute('data-state')).toBe('no-patient');
    expect(await tileB.getAttribute('data-state')).toBe('no-patient');
    expect(await tileA.getByText(/The EHR names no patient in this bed/).count()).toBe(1);
    expect(await tileA.getByText(beds.a.identifier).count()).toBe(1);
    await expectNoAxeViolations('board');
    await screenshot(page, 'board-sending');

    // Keyboard only: the unit filter, then a bed's trend link.
    await page.getByLabel('Unit', { exact: true }).focus();
    await page.keyboard.press('End');
    await page.waitForURL(/unit=/);
    await page.getByLabel('Unit', { exact: true }).selectOption('E2E unit');
    await page.waitForURL(/unit=E2E/);
    const trendLink = tileA.getByRole('link', { name: `Trend of ${beds.a.name}` });
    await trendLink.focus();
    await page.keyboard.press('Enter');
    await page.getByRole('heading', { level: 1, name: `Trend · ${beds.a.name}` }).waitFor();
    await page.goBack();

    // Bed A keeps sending (then goes through a tidal volume challenge); bed B's monitor stops.
    let t = Date.now() - 5_000;
    for (const seg of challenge.segments) {
      await send('a', { channels: seg.channels, truth: seg.truth }, new Date(t), { ...CONTEXT, ...seg.context });
      t += seg.durationSeconds * 1000;
    }
    // Back to the low volume, as the protocol ends.
    await send('a', steady(13, 30), new Date(t), { ...CONTEXT, ...challenge.segments[0]!.context });
    t += 30_000;
    let seed = 100;
    await eventually(
      async () => {
        // Bed A's monitor goes on sending, 5 s at a time, contiguous with what it sent before.
        await send('a', steady(seed++, 5), new Date(t), { ...CONTEXT, ...challenge.segments[0]!.context });
        t += 5_000;
        await page.reload();
        await tileB.waitFor();
        return (await tileB.getAttribute('data-state')) === 'stale' ? true : undefined;
      },
      'bed B stale',
      40,
      3000,
    );
    // Bed A's newest window may not have been through its context lookup yet (it reads `sending`
    // until its delivery waits for a patient): wait, bounded, for the lookup to settle.
    await eventually(
      async () => {
        await page.reload();
        await tileA.waitFor();
        return (await tileA.getAttribute('data-state')) === 'no-patient' ? true : undefined;
      },
      'bed A waiting for a patient',
      10,
      1000,
    );
    expect(await tileB.getAttribute('data-state')).toBe('stale');
    expect(await tileB.getByText(/Nothing received for \d+ s/).count()).toBe(1);
    await page.getByLabel('Data state', { exact: true }).selectOption('stale');
    await page.waitForURL(/state=stale/);
    // The previous page stays shown until the filtered answer arrives.
    await page.getByRole('article').nth(1).waitFor({ state: 'detached' });
    expect(await page.getByRole('article').count()).toBe(1);
    expect(await page.getByRole('article').getAttribute('data-bed')).toBe(beds.b.name);
    await expectNoAxeViolations('board, stale filter');
    await screenshot(page, 'board-stale');
  }, 240_000);

  it('marks the tidal volume challenge on the bed trend, keeps a table of the same values, and a point opens its assessment', async () => {
    const { page } = browser;
    const reviewer = await apiSignIn(stack.gatewayUrl, 'reviewer');
    await eventually(
      async () => {
        const tr = await reviewer.call<{ events: { kind: string; label: string }[] }>('GET', `/board/beds/${beds.a.id}/trend?hours=1`);
        return tr.body.events.some((e) => e.kind === 'tidal-volume-challenge' && e.label.includes('judged')) ? true : undefined;
      },
      'the challenge on the trend',
      60,
      2000,
    );
    await page.goto(`${stack.gatewayUrl}/board/beds/${beds.a.id}?hours=1`);
    await page.getByRole('heading', { level: 1, name: `Trend · ${beds.a.name}` }).waitFor();
    const challenges = page.getByRole('list', { name: 'Tidal volume challenges in the span' });
    await challenges.waitFor();
    // The engine judged the streamed challenge; the generator's truth for a responder is a positive test.
    expect(challenge.truth.expected).toBe('positive');
    expect(await challenges.textContent()).toMatch(/Tidal volume challenge judged: positive, ΔPPV \+\d+\.\d points/);
    const panel = page.getByRole('region', { name: 'Tidal volume challenge', exact: true });
    expect(await panel.getByTestId('challenge-verdict').textContent()).toBe('PPV rose by the threshold or more');
    expect(await panel.textContent()).toContain('Myatra');
    expect(await page.getByTestId('grey-zone').textContent()).toContain('Source:');
    const rows = page.getByRole('region', { name: 'Trend values as a table' }).getByRole('row');
    expect(await rows.count()).toBeGreaterThan(2);
    await expectNoAxeViolations('trend');
    await screenshot(page, 'trend-challenge');

    // Keyboard: the span radios.
    await page.getByRole('radio', { name: '1 h' }).focus();
    await page.keyboard.press('ArrowRight');
    await page.waitForURL(/hours=3/);
    // A point on the chart opens its assessment.
    const chart = page.getByTestId('trend-chart');
    const over = chart.locator('.u-over');
    // The chart is drawn again when the 3-h answer arrives; aim at the newest points, at the right edge.
    for (let attempt = 0, dx = 2; attempt < 60 && !/\/assessments\//.test(page.url()); attempt++) {
      const box = await over.boundingBox();
      if (!box) {
        await page.waitForTimeout(250);
        continue;
      }
      await page.mouse.move(box.x + box.width - dx, box.y + box.height / 2);
      await page.mouse.click(box.x + box.width - dx, box.y + box.height / 2);
      await page.waitForTimeout(100);
      dx = (dx + 3) % 60;
    }
    await page.waitForURL(/\/assessments\//);
    await page.getByRole('heading', { level: 1, name: /Assessment of/ }).waitFor();
    await expectNoAxeViolations('assessment detail');
    await screenshot(page, 'assessment-from-trend');
  }, 120_000);

  it('draws 48 h of 10-s windows, reduced on the server, and prints how long the trend took to show', async () => {
    const { page } = browser;
    const ds = stack.stack.gateway.ctx.ds;
    const [bed] = (await ds.query('SELECT id, name FROM bed WHERE id = ?', [beds.b.id])) as { id: string; name: string }[];
    const [monitor] = (await ds.query('SELECT id FROM monitor WHERE identifier = ?', [beds.b.identifier])) as { id: string }[];
    const end = Date.now() - 10 * 60_000;
    const n = 48 * 360;
    const rows: unknown[][] = [];
    for (let i = 0; i < n; i++) {
      const ws = new Date(end - (n - i) * 10_000);
      const ppv = 12 + 5 * Math.sin(i / 400);
      rows.push([
        randomUUID(),
        monitor!.id,
        bed!.id,
        ws,
        new Date(ws.getTime() + 10_000),
        'seed-48h',
        i % 97 === 0 ? 'not-valid' : i % 13 === 0 ? 'questionable' : 'valid',
        ppv,
        ppv * 0.6,
        ppv * 1.1,
        70 + (i % 20),
        16,
      ]);
    }
    for (let i = 0; i < rows.length; i += 1000) {
      const chunk = rows.slice(i, i + 1000);
      await ds.query(
        `INSERT INTO assessment (id, monitor_id, bed_id, window_start, window_end, engine_version, verdict, ppv, spv, delta_pop, heart_rate, respiratory_rate, flags, result, created_at) VALUES ${chunk.map(() => "(?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, '[]', '{}', NOW(3))").join(',')}`,
        chunk.flat(),
      );
    }
    const apiStarted = Date.now();
    const api = await (
      await apiSignIn(stack.gatewayUrl, 'reviewer')
    ).call<{ points: unknown[]; downsampled: boolean }>('GET', `/board/beds/${beds.b.id}/trend?hours=48`);
    const apiMs = Date.now() - apiStarted;
    expect(api.body.downsampled).toBe(true);
    const started = Date.now();
    await page.goto(`${stack.gatewayUrl}/board/beds/${beds.b.id}?hours=48`);
    await page.getByTestId('trend-chart').locator('canvas').waitFor();
    await page.getByRole('region', { name: 'Trend values as a table' }).getByRole('row').nth(1).waitFor();
    const ms = Date.now() - started;
    console.log(
      `e2e: 48-h trend (${n} windows → ${api.body.points.length} points): API ${apiMs} ms, shown in Chromium in ${ms} ms (figures, not bounds; see npm run bench:trend)`,
    );
    expect(await page.getByText(/shown as minimum and maximum per \d+ min/).count()).toBe(1);
    await expectNoAxeViolations('48-h trend');
    await screenshot(page, 'trend-48h');
  }, 180_000);

  it('reanalyses one window from its assessment and shows the earlier and the new result side by side', async () => {
    const { page, context } = browser;
    const ds = stack.stack.gateway.ctx.ds;
    // Arrange: the earliest window of bed A stands as if an older engine had analysed it.
    const [win] = (await ds.query(
      `SELECT w.id, w.assessment_id FROM analysis_window w JOIN monitor m ON m.id = w.monitor_id WHERE m.identifier = ? AND w.status = 'done' ORDER BY w.window_start LIMIT 1`,
      [beds.a.identifier],
    )) as { id: number; assessment_id: string }[];
    expect(win).toBeDefined();
    await ds.query("UPDATE analysis_window SET engine_version = '0.9.0-e2e' WHERE id = ?", [win!.id]);
    await ds.query("UPDATE assessment SET engine_version = '0.9.0-e2e' WHERE id = ?", [win!.assessment_id]);
    await context.clearCookies();
    await signIn(page, stack.gatewayUrl, 'integrator');
    await page.goto(`${stack.gatewayUrl}/assessments/${win!.assessment_id}`);
    await page.getByRole('link', { name: 'Reanalyse this window…' }).click();
    await page.getByRole('heading', { level: 1, name: 'Reanalyse' }).waitFor();
    await expectNoAxeViolations('reanalyse');
    await page.getByRole('button', { name: 'Queue reanalysis' }).click();
    await page
      .getByRole('status')
      .filter({ hasText: /1 window queued for engine/ })
      .waitFor();
    const table = page.getByRole('region', { name: 'Results side by side' });
    await table.getByRole('link', { name: /Assessment by engine 0\.9\.0-e2e/ }).waitFor();
    // The running engine's result arrives as the worker reaches the queued window.
    await table.getByRole('link', { name: /Assessment by engine (?!0\.9\.0-e2e)/ }).waitFor({ timeout: 60_000 });
    expect(await table.getByText(/same verdict|verdict .* → /).count()).toBe(1);
    await expectNoAxeViolations('reanalyse, side by side');
    await screenshot(page, 'reanalyse-side-by-side');
  }, 120_000);
});
