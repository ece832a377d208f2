/**
 * Console workflows end to end: an integrator maps a new monitor (profile with channel mapping,
 * bed, monitor, API key shown once) and the key then works for ingest; a capture in the test
 * bench shows its beats and cycles on the plot; a delivery refused by the EHR is replayed by an
 * operator and ends delivered. Screenshots of each step go to artefacts/screenshots.
 */
import { randomBytes } from 'node:crypto';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { generateWindow, toCsvCapture, toIngestBatch } from '@ebbgate/shared/synthetic';
import { openBrowser, screenshot, signIn, type Browser } from './browser';
import { apiSignIn, eventually } from './api';
import { startE2eStack, type Stack } from './running-stack';

let stack: Stack;
let browser: Browser;
const work = mkdtempSync(path.join(tmpdir(), 'ebbgate-e2e-'));
const suffix = randomBytes(3).toString('hex').toUpperCase();
/** A fresh locally administered EUI-64 per run (first octet 02: U/L bit set). */
const monitorIdentifier = `02E0EB${suffix}${randomBytes(2).toString('hex').toUpperCase()}`;
let apiKey = '';

beforeAll(async () => {
  stack = await startE2eStack();
  browser = await openBrowser();
});
afterAll(async () => {
  await browser?.close();
  await stack?.stop();
});

/** 60 s of arterial pressure, pleth and airway pressure with a known PPV (synthetic generator). */
function syntheticWindow(seed: number) {
  return generateWindow({
    seed,
    durationSeconds: 60,
    heartRate: 80,
    respiratoryRate: 14,
    ppv: 15,
    channels: ['abp', 'pleth', 'paw'],
    disturbances: [{ kind: 'ectopic', count: 2 }],
  });
}

async function ingest(batchId: string, startTime: string, seed: number) {
  const batch = toIngestBatch(syntheticWindow(seed), {
    monitorId: monitorIdentifier,
    batchId,
    startTime,
    context: { ventilationMode: 'controlled', tidalVolumeMl: 520, patientHeightCm: 175, patientSex: 'male' },
  });
  return fetch(`${stack.gatewayUrl}/api/v1/ingest/batches`, {
    method: 'POST',
    headers: { authorization: `Bearer ${apiKey}`, 'content-type': 'application/json' },
    body: JSON.stringify(batch),
  });
}

describe('integrator maps a new monitor', () => {
  it('creates a profile with channel mapping, a bed and a monitor, issues its key once, and the key works', async () => {
    const { page, context } = browser;
    await context.clearCookies();
    await signIn(page, stack.gatewayUrl, 'integrator');

    await page.goto(`${stack.gatewayUrl}/profiles/new`);
    await page.getByLabel('Profile name').fill(`E2E bay monitor ${suffix}`);
    await page.getByLabel('Manufacturer').fill('Tidewell Instruments (invented)');
    await page.getByLabel('Model').fill('Gullwing (invented)');
    // Inline validation first: an empty channel code is refused beside the field.
    await page.getByRole('button', { name: 'Create profile' }).click();
    await page.getByLabel('Channel 1 code').and(page.locator('[aria-invalid="true"]')).waitFor();
    await page.getByLabel('Channel 1 code').fill('MDC_PRESS_BLD_ART_ABP');
    await page.getByRole('button', { name: 'Add channel' }).click();
    await page.getByLabel('Channel 2 code').fill('MDC_PULS_OXIM_PLETH');
    await page.getByRole('button', { name: 'Add channel' }).click();
    await page.getByLabel('Channel 3 code').fill('MDC_PRESS_AWAY');
    await page.getByLabel('Channel 3 role').selectOption('paw');
    await page.getByLabel('Channel 3 unit').fill('cmH2O');
    await screenshot(page, 'integrator-profile-form');
    await page.getByRole('button', { name: 'Create profile' }).click();
    await page.getByRole('heading', { level: 1, name: 'Monitor profiles' }).waitFor();
    await page.getByRole('link', { name: `E2E bay monitor ${suffix}` }).waitFor();

    await page.goto(`${stack.gatewayUrl}/beds`);
    await page.getByRole('button', { name: 'Add bed' }).click();
    await page.getByLabel('Bed name').fill(`E2E bed ${suffix}`);
    await page.getByLabel('Unit').fill('ICU');
    // ICU-01 is a Location with an open Encounter in the mock EHR's demo hospital.
    await page.getByLabel('EHR location identifier').fill('ICU-01');
    await page.getByRole('button', { name: 'Add bed', exact: true }).last().click();
    await page.getByRole('cell', { name: `E2E bed ${suffix}` }).waitFor();

    await page.goto(`${stack.gatewayUrl}/monitors`);
    await page.getByRole('button', { name: 'Add monitor' }).click();
    const dialog = page.getByRole('dialog', { name: 'Add monitor' });
    await dialog.getByLabel('Identifier').fill(monitorIdentifier);
    await dialog.getByLabel('Profile').selectOption({ label: `E2E bay monitor ${suffix} — Tidewell Instruments (invented) Gullwing (invented)` });
    await dialog.getByLabel('Bed').selectOption({ label: `E2E bed ${suffix} · ICU` });
    await dialog.getByRole('button', { name: 'Add monitor' }).click();
    const row = page.getByRole('row').filter({ hasText: monitorIdentifier });
    await row.waitFor();
    await row.getByRole('button', { name: 'Issue key' }).click();
    const keyDialog = page.getByRole('dialog', { name: `API key for ${monitorIdentifier}` });
    await keyDialog.getByText('Shown once.').waitFor();
    apiKey = (await keyDialog.getByTestId('api-key').textContent())!.trim();
    expect(apiKey.length).toBeGreaterThan(20);
    await screenshot(page, 'integrator-api-key-shown-once');
    await keyDialog.getByRole('button', { name: 'I have stored the key' }).click();
    await row.getByText('issued').waitFor();
    await screenshot(page, 'integrator-monitors');

    // The key is accepted by ingest: a new batch is taken (202).
    const res = await ingest(`e2e-${suffix}-1`, new Date(Date.now() - 120_000).toISOString(), 11);
    expect(res.status, await res.clone().text()).toBe(202);

    // And the inbound list shows it accepted for this monitor.
    await page.goto(`${stack.gatewayUrl}/inbound?outcome=accepted`);
    await page.getByRole('row').filter({ hasText: monitorIdentifier }).first().waitFor();
    await screenshot(page, 'integrator-inbound-accepted');
  });
});

describe('test bench', () => {
  it('uploads a capture and shows every beat and cycle of the analysis on the plot, with rejected-beat reasons', async () => {
    const { page } = browser;
    const file = path.join(work, 'capture.csv');
    writeFileSync(file, toCsvCapture(syntheticWindow(5)));
    await page.goto(`${stack.gatewayUrl}/test-bench`);
    await page.getByLabel('Capture file').setInputFiles(file);
    const answer = page.waitForResponse((r) => r.url().endsWith('/api/v1/analysis/preview'));
    await page.getByRole('button', { name: 'Analyse capture' }).click();
    const res = await answer;
    expect(res.status()).toBe(200);
    const preview = (await res.json()) as {
      analysis: { beats: Record<string, { beats: { accepted: boolean; rejectReasons: string[] }[] } | null>; cycles: { usable: boolean }[] };
    };
    await page.getByRole('table', { name: 'Indices' }).waitFor();
    await page.getByRole('button', { name: 'Whole window' }).click();
    const beats = Object.values(preview.analysis.beats).flatMap((s) => s?.beats ?? []);
    expect(beats.length).toBeGreaterThan(0);
    expect(await page.locator('[data-mark="beat-accepted"]').count()).toBe(beats.filter((b) => b.accepted).length);
    expect(await page.locator('[data-mark="beat-rejected"]').count()).toBe(beats.filter((b) => !b.accepted).length);
    expect(await page.locator('[data-mark^="cycle-"]').count()).toBe(preview.analysis.cycles.length);
    expect(await page.locator('[data-mark="cycle-usable"]').count()).toBe(preview.analysis.cycles.filter((c) => c.usable).length);
    expect(await page.getByTestId('cautions').textContent()).toContain('does not order fluid');
    const rejected = page.locator('[data-mark="beat-rejected"]').first();
    if (await rejected.count()) {
      await rejected.hover();
      await page.getByRole('tooltip').waitFor();
    }
    await screenshot(page, 'integrator-test-bench');
    await page.getByText('25 mm/s', { exact: true }).click();
    await screenshot(page, 'integrator-test-bench-25mm');
  });
});

describe('operator replays a failed delivery', () => {
  it('a delivery the EHR refused is retried from the console and ends delivered', async () => {
    const { page, context } = browser;
    expect(stack.mockEhrUrl, 'needs the mock EHR admin URL').not.toBe('');
    // The mock EHR refuses every Observation (422 is not retried automatically).
    const faults = await fetch(`${stack.mockEhrUrl}/_admin/faults`, {
      method: 'PUT',
      headers: { 'content-type': 'application/json' },
      body: JSON.stringify({ rules: [{ scope: 'Observation', errorRate: 1, statusCodes: [422] }] }),
    });
    expect(faults.ok).toBe(true);
    try {
      const res = await ingest(`e2e-${suffix}-2`, new Date(Date.now() - 60_000).toISOString(), 12);
      expect([200, 202]).toContain(res.status);
      const operator = await apiSignIn(stack.gatewayUrl, 'operator');
      await eventually(
        async () => {
          const r = await operator.call<{ total: number }>('GET', '/deliveries?status=failed&pageSize=5');
          return r.status === 200 && r.body.total > 0 ? r.body.total : undefined;
        },
        'a failed delivery',
        90,
      );
    } finally {
      await fetch(`${stack.mockEhrUrl}/_admin/faults`, { method: 'DELETE' });
    }

    await context.clearCookies();
    await signIn(page, stack.gatewayUrl, 'operator');
    await page.goto(`${stack.gatewayUrl}/deliveries?status=failed`);
    await page.getByLabel('Select all on this page').check();
    await screenshot(page, 'operator-failed-deliveries');
    await page.getByRole('button', { name: /Retry selected/ }).click();
    await page
      .getByRole('dialog', { name: 'Retry deliveries' })
      .getByRole('button', { name: /^Retry \d+$/ })
      .click();
    const progress = page.getByRole('region', { name: 'Retry' });
    await progress.waitFor();
    // The strict CSP forbids page-side eval, so poll the outcome rows from here.
    await eventually(
      async () => ((await progress.locator('[data-outcome="waiting"], [data-outcome="running"]').count()) === 0 ? true : undefined),
      'every retry to finish',
      60,
      500,
    );
    expect(await progress.locator('[data-outcome="failed"]').count()).toBe(0);
    // Each item reports what the EHR answered once the sender tried it again.
    expect(await progress.locator('[data-outcome="done"]').count()).toBe(await progress.locator('li').count());
    expect(await progress.getByText('delivered', { exact: true }).count()).toBeGreaterThan(0);
    await screenshot(page, 'operator-retry-outcome');

    await page.goto(`${stack.gatewayUrl}/deliveries?status=delivered`);
    await page.getByRole('row').filter({ hasText: 'delivered' }).first().waitFor({ timeout: 60_000 });
    await screenshot(page, 'operator-deliveries-delivered');
  });

  it('the assessment behind a delivery shows the plot, the FHIR resource as sent and its delivery history', async () => {
    const { page } = browser;
    await page.goto(`${stack.gatewayUrl}/deliveries?status=delivered`);
    await page.getByRole('link', { name: 'open' }).first().click();
    await page.getByRole('heading', { name: /^Assessment of / }).waitFor();
    await page.getByRole('heading', { name: 'Sent to the EHR' }).waitFor();
    await page
      .getByLabel(/^FHIR resource for /)
      .first()
      .waitFor();
    expect(await page.locator('[data-mark^="beat-"]').count()).toBeGreaterThan(0);
    expect(await page.getByTestId('cautions').textContent()).toContain('Defer to local protocols');
    await screenshot(page, 'operator-assessment-detail');
  });
});

describe('reviewer and the screens with data', () => {
  it('a reviewer marks an assessment in error with a reason; the detail then says so', async () => {
    const { page, context } = browser;
    await context.clearCookies();
    await signIn(page, stack.gatewayUrl, 'reviewer');
    await page.goto(`${stack.gatewayUrl}/assessments`);
    const first = page.getByRole('table', { name: 'Assessments' }).getByRole('link').first();
    await first.waitFor();
    await screenshot(page, 'reviewer-assessments-with-data');
    await first.click();
    await page.getByRole('button', { name: 'Mark in error…' }).click();
    const dialog = page.getByRole('dialog', { name: 'Mark assessment in error' });
    await dialog.getByRole('button', { name: 'Mark in error' }).click();
    await dialog.getByText('Give a reason (at least 3 characters)').waitFor();
    await dialog.getByLabel(/Reason/).fill('E2E check: wrong bed assignment during the test');
    await screenshot(page, 'reviewer-mark-in-error');
    await dialog.getByRole('button', { name: 'Mark in error' }).click();
    await page.getByText('Entered in error', { exact: true }).waitFor();
    await screenshot(page, 'reviewer-assessment-entered-in-error');
  });

  it('overview, delivery detail and inbound detail show real data', async () => {
    const { page, context } = browser;
    await context.clearCookies();
    await signIn(page, stack.gatewayUrl, 'operator');
    // The operator's first screen is the beds board; the overview has its own address.
    await page.goto(`${stack.gatewayUrl}/overview`);
    await page.getByRole('heading', { level: 1, name: 'Overview' }).waitFor();
    const delivered = page.getByText('delivered', { exact: true }).first();
    await delivered.waitFor();
    await screenshot(page, 'operator-overview-with-data');

    await page.goto(`${stack.gatewayUrl}/deliveries?status=delivered`);
    await page.getByRole('heading', { level: 1, name: 'Deliveries' }).waitFor();
    await screenshot(page, 'operator-deliveries-delivered');
    await page.getByRole('button', { name: 'Details' }).first().click();
    const detail = page.getByRole('dialog', { name: /^Delivery / });
    await detail.getByRole('table', { name: 'Attempts' }).waitFor();
    await screenshot(page, 'operator-delivery-detail');
    await page.keyboard.press('Escape');

    await page.goto(`${stack.gatewayUrl}/inbound?outcome=accepted`);
    await page.getByRole('button', { name: 'Details' }).first().click();
    await page.getByRole('dialog', { name: 'Inbound message' }).getByLabel('Raw message').waitFor();
    await screenshot(page, 'operator-inbound-detail');
  });
});
