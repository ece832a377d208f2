/**
 * Sign in as each role and check what each can see and do; screenshot every screen it can open.
 * Expectations follow the permission table (gateway/src/auth/permissions.ts) as the console shows it.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { collectPageErrors, navLinks, openBrowser, screenshot, signIn, signOut, type Browser } from './browser';
import { startE2eStack, type Stack } from './running-stack';
import { axeViolations } from './axe';

let stack: Stack;
let browser: Browser;
let pageErrors: string[];

beforeAll(async () => {
  stack = await startE2eStack();
  browser = await openBrowser();
  pageErrors = collectPageErrors(browser.page);
});
afterAll(async () => {
  await browser?.close();
  await stack?.stop();
});

const SCREENS: Record<string, { path: string; heading: string }> = {
  'Beds board': { path: '/board', heading: 'Beds board' },
  Overview: { path: '/overview', heading: 'Overview' },
  Reanalyse: { path: '/reanalyse', heading: 'Reanalyse' },
  Assessments: { path: '/assessments', heading: 'Assessments' },
  Monitors: { path: '/monitors', heading: 'Monitors' },
  'Monitor profiles': { path: '/profiles', heading: 'Monitor profiles' },
  Beds: { path: '/beds', heading: 'Beds' },
  'Test bench': { path: '/test-bench', heading: 'Test bench' },
  Deliveries: { path: '/deliveries', heading: 'Deliveries' },
  'Inbound & quarantine': { path: '/inbound', heading: 'Inbound & quarantine' },
  'Users & roles': { path: '/users', heading: 'Users & roles' },
  'Audit log': { path: '/audit', heading: 'Audit log' },
  Settings: { path: '/settings', heading: 'Settings' },
};

const EXPECTED = {
  admin: {
    sees: ['Beds board', 'Overview', 'Assessments', 'Monitors', 'Deliveries', 'Users & roles', 'Audit log', 'Settings'],
    not: ['Test bench', 'Inbound & quarantine'],
  },
  integrator: {
    sees: ['Beds board', 'Overview', 'Assessments', 'Monitors', 'Monitor profiles', 'Beds', 'Test bench', 'Reanalyse', 'Inbound & quarantine', 'Settings'],
    not: ['Users & roles', 'Audit log', 'Deliveries'],
  },
  reviewer: {
    sees: ['Beds board', 'Overview', 'Assessments', 'Deliveries', 'Settings'],
    not: ['Users & roles', 'Test bench', 'Monitors', 'Inbound & quarantine', 'Reanalyse'],
  },
  operator: {
    sees: ['Beds board', 'Overview', 'Assessments', 'Deliveries', 'Inbound & quarantine', 'Settings'],
    not: ['Users & roles', 'Test bench', 'Monitors', 'Audit log', 'Reanalyse'],
  },
} as const;

describe('console by role', () => {
  it('shows the sign-in screen to a visitor and refuses wrong credentials with a clear message', async () => {
    const { page } = browser;
    await page.goto(`${stack.gatewayUrl}/assessments`);
    await page.getByRole('heading', { name: 'Sign in' }).waitFor();
    expect(page.url()).toContain('/sign-in?next=');
    expect(await axeViolations(page), 'sign-in').toEqual([]);
    await screenshot(page, 'sign-in');
    await page.getByLabel('User name').fill('nobody.here');
    await page.getByLabel('Password').fill('not-the-password-1');
    await page.getByRole('button', { name: 'Sign in' }).click();
    await page.getByText('User name or password not recognised.').waitFor();
  });

  for (const role of ['admin', 'integrator', 'reviewer', 'operator'] as const) {
    it(`${role}: navigation, header and every allowed screen`, async () => {
      const { page } = browser;
      // Each role starts signed out, whatever the previous test left behind.
      await browser.context.clearCookies();
      const user = await signIn(page, stack.gatewayUrl, role);
      // The first screen: the beds board for reviewers and operators, the overview for admins and integrators.
      await page.goto(`${stack.gatewayUrl}/`);
      await page.getByRole('heading', { level: 1, name: role === 'reviewer' || role === 'operator' ? 'Beds board' : 'Overview' }).waitFor();
      expect(await page.getByLabel('Roles').textContent()).toContain(role);
      expect(await page.getByTestId('current-user').isVisible()).toBe(true);
      const links = await navLinks(page);
      for (const name of EXPECTED[role].sees) expect(links, `${role} should see ${name}`).toContain(name);
      for (const name of EXPECTED[role].not) expect(links, `${role} should not see ${name}`).not.toContain(name);

      for (const name of links) {
        const screen = SCREENS[name]!;
        await page.goto(stack.gatewayUrl + screen.path);
        await page.getByRole('heading', { level: 1, name: screen.heading }).waitFor();
        // Designed states only: wait until the loading indicator has given way to content.
        await page
          .locator('[role="status"]')
          .filter({ hasText: /^Loading/ })
          .first()
          .waitFor({ state: 'detached', timeout: 15_000 })
          .catch(() => {});
        // WCAG 2.0/2.1 A and AA rules of axe-core on every screen the role can open: none may fail.
        const violations = await axeViolations(page);
        expect(violations, `${role} ${screen.path}: ${JSON.stringify(violations, null, 1)}`).toEqual([]);
        await screenshot(page, `${role}-${screen.path.slice(1)}`);
      }

      // A screen the role may not open says so instead of failing.
      const forbidden = EXPECTED[role].not[0];
      await page.goto(stack.gatewayUrl + SCREENS[forbidden]!.path);
      await page.getByText('Not available for your roles').waitFor();

      // Actions by role.
      if (role === 'admin') {
        await page.goto(`${stack.gatewayUrl}/users`);
        await page.getByRole('cell', { name: user.username, exact: true }).waitFor();
        await page.getByRole('button', { name: 'New user' }).click();
        await page.getByRole('button', { name: 'Create user' }).click();
        expect(await page.getByRole('dialog').getByRole('alert').count()).toBeGreaterThan(0);
        await screenshot(page, 'admin-users-new-invalid');
        await page.keyboard.press('Escape');
      }
      if (role === 'integrator') {
        await page.goto(`${stack.gatewayUrl}/monitors`);
        await page.getByRole('button', { name: 'Add monitor' }).waitFor();
      }
      if (role === 'reviewer' || role === 'operator') {
        await page.goto(`${stack.gatewayUrl}/settings`);
        await page.getByText('Read-only: only administrators change settings.').waitFor();
        expect(await page.getByRole('button', { name: 'Save settings' }).count()).toBe(0);
      }
      if (role === 'operator') {
        await page.goto(`${stack.gatewayUrl}/deliveries`);
        await page.getByRole('button', { name: /Retry selected/ }).waitFor();
      }
      if (role === 'reviewer') {
        await page.goto(`${stack.gatewayUrl}/deliveries`);
        await page.getByRole('heading', { level: 1, name: 'Deliveries' }).waitFor();
        expect(await page.getByRole('button', { name: /Retry selected/ }).count()).toBe(0);
      }
      await signOut(page);
    });
  }

  it('the pages loaded without script errors or CSP violations', () => {
    expect(pageErrors.filter((e) => /Content Security Policy|pageerror/.test(e))).toEqual([]);
  });
});
