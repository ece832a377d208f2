/**
 * axe-core (Deque, the reference rules engine for WCAG checks) injected into the page through
 * playwright-core, run with the WCAG 2.0/2.1 level A and AA rules. Returns the violations in a
 * short readable form so a failing assertion names the rule, its help and the offending nodes.
 */
import { createRequire } from 'node:module';
import { readFileSync } from 'node:fs';
import type { Page } from 'playwright-core';

const require = createRequire(import.meta.url);
const AXE_SOURCE = readFileSync(require.resolve('axe-core/axe.min.js'), 'utf8');
export const WCAG_21_AA = ['wcag2a', 'wcag2aa', 'wcag21a', 'wcag21aa'];

export interface AxeViolation {
  id: string;
  impact: string | null;
  help: string;
  nodes: string[];
}

export async function axeViolations(page: Page): Promise<AxeViolation[]> {
  // Evaluated through the DevTools protocol, so the console's CSP (script-src 'self') stays as it is.
  // The tests workspace has no DOM types: the page-side code is given as text.
  if (!(await page.evaluate("'axe' in window"))) await page.evaluate(AXE_SOURCE);
  const result = (await page.evaluate(
    `window.axe.run(document, { runOnly: { type: 'tag', values: ${JSON.stringify(WCAG_21_AA)} }, resultTypes: ['violations'] })`,
  )) as { violations: { id: string; impact: string | null; help: string; nodes: { target: string[]; failureSummary?: string }[] }[] };
  return result.violations.map((v) => ({
    id: v.id,
    impact: v.impact,
    help: v.help,
    nodes: v.nodes.slice(0, 5).map((n) => `${n.target.join(' ')}${n.failureSummary ? ` — ${n.failureSummary.split('\n').slice(1, 2).join(' ').trim()}` : ''}`),
  }));
}
