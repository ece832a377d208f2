/**
 * The API reference renders in a real browser (Debian's Chromium) under the gateway's strict
 * Content Security Policy: every route of the OpenAPI document appears, and the browser reports
 * no CSP violation and no script error.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startTestGateway, type TestGateway } from '@ebbgate/gateway/test/support/harness';
import { ROUTES } from '@ebbgate/gateway/http/route';
import { launchBrowser } from '../support/browser';

let gw: TestGateway;
let browser: Awaited<ReturnType<typeof launchBrowser>>;
beforeAll(async () => {
  gw = await startTestGateway();
  browser = await launchBrowser();
});
afterAll(async () => {
  await browser?.close();
  await gw?.stop();
});

describe('API reference page', () => {
  it('renders every operation with no CSP violation or script error', async () => {
    const page = await browser.context.newPage();
    const problems: string[] = [];
    page.on('pageerror', (e) => problems.push(`page error: ${e.message}`));
    page.on('console', (m) => m.type() === 'error' && problems.push(`console: ${m.text()}`));
    await page.addInitScript({
      content: "document.addEventListener('securitypolicyviolation', (e) => console.error('CSP violation: ' + e.violatedDirective + ' ' + e.blockedURI));",
    });
    await page.goto(`${gw.url}/api/docs`);
    await page.waitForSelector('.opblock', { timeout: 30_000 });
    const paths = await page.$$eval('.opblock .opblock-summary-path', (els) => els.map((e) => e.getAttribute('data-path') ?? e.textContent ?? ''));
    const declared = new Set(ROUTES.map((r) => `/api/v1${r.path.replace(/:([A-Za-z0-9_]+)/g, '{$1}')}`));
    expect(paths.length).toBe(ROUTES.length);
    for (const p of paths) expect(declared, p).toContain(p.replace(/\u200b/g, ''));
    expect(problems).toEqual([]);
    // Negative control: the policy is in force and the listener hears it (an inline script is refused).
    await page.addScriptTag({ content: 'window.inlineRan = true;' }).catch(() => undefined);
    await page.waitForTimeout(300);
    expect(problems.some((p) => p.includes('CSP violation: script-src'))).toBe(true);
    expect(await page.evaluate('window.inlineRan === true')).toBe(false);
    await page.close();
  }, 60_000);
});
