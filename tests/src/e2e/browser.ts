/**
 * Console helpers for the end-to-end tests: demo sign-ins read from config/demo/users.json (the
 * one place the credentials live), navigation, full-page screenshots into artefacts/screenshots.
 */
import { mkdirSync, readFileSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import type { BrowserContext, Page } from 'playwright-core';
import { launchBrowser, SCREENSHOT_DIR } from '../support/browser';

export const repoRoot = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../../..');

export type Role = 'admin' | 'integrator' | 'reviewer' | 'operator';
interface DemoUser {
  username: string;
  password: string;
  roles: Role[];
  displayName?: string;
}

/** The demo account that holds exactly this role (the file is the one source of the credentials). */
export function demoUser(role: Role): DemoUser {
  const raw = JSON.parse(readFileSync(path.join(repoRoot, 'config/demo/users.json'), 'utf8')) as DemoUser[] | { users: DemoUser[] };
  const users = Array.isArray(raw) ? raw : raw.users;
  const user = users.find((u) => u.roles.length === 1 && u.roles[0] === role) ?? users.find((u) => u.roles.includes(role));
  if (!user) throw new Error(`config/demo/users.json has no user with role ${role}`);
  return user;
}

export interface Browser {
  context: BrowserContext;
  page: Page;
  close(): Promise<void>;
}

/** A fresh Chromium profile per call (the shared launcher), laptop-sized viewport. */
export async function openBrowser(): Promise<Browser> {
  const { context, close } = await launchBrowser();
  const page = context.pages()[0] ?? (await context.newPage());
  return { context, page, close };
}

/** Errors the page logs (CSP violations, uncaught exceptions), to assert there are none. */
export function collectPageErrors(page: Page): string[] {
  const errors: string[] = [];
  page.on('pageerror', (e) => errors.push(`pageerror: ${e.message}`));
  page.on('console', (m) => {
    if (m.type() === 'error' && !/status of 4\d\d/.test(m.text())) errors.push(`console: ${m.text()}`);
  });
  return errors;
}

export async function signIn(page: Page, baseUrl: string, role: Role): Promise<DemoUser> {
  const user = demoUser(role);
  await page.goto(`${baseUrl}/sign-in`);
  await page.getByLabel('User name').fill(user.username);
  await page.getByLabel('Password').fill(user.password);
  await page.getByRole('button', { name: 'Sign in' }).click();
  await page.getByTestId('current-user').waitFor();
  return user;
}

export async function signOut(page: Page): Promise<void> {
  await page.getByRole('button', { name: 'Sign out' }).click();
  await page.getByRole('heading', { name: 'Sign in' }).waitFor();
}

export async function screenshot(page: Page, name: string): Promise<string> {
  mkdirSync(SCREENSHOT_DIR, { recursive: true });
  const file = path.join(SCREENSHOT_DIR, `${name}.png`);
  await page.screenshot({ path: file, fullPage: true });
  return file;
}

/** Names of the main navigation links, as the signed-in user sees them. */
export async function navLinks(page: Page): Promise<string[]> {
  return page.getByRole('navigation', { name: 'Main' }).getByRole('link').allTextContents();
}
