import { mkdirSync } from 'node:fs';
import path from 'node:path';
import { chromium, type Browser, type Page } from 'playwright-core';

export const ROOT = path.resolve(import.meta.dirname, '..', '..');
export const SCREENSHOT_DIR = path.join(ROOT, '.local', 'screenshots');

/** Debian's Chromium, headless, with nothing that phones home (the machine has no outside network). */
export function launchBrowser(): Promise<Browser> {
  return chromium.launch({
    executablePath: process.env.CHROMIUM_PATH ?? '/usr/bin/chromium',
    args: [
      '--headless', '--no-sandbox', '--disable-gpu', '--disable-background-networking', '--disable-component-update',
      '--disable-sync', '--no-first-run', '--disable-quic',
    ],
  });
}

/** A fresh browser context (own cookies) at the laptop size the design targets. */
export async function newPage(browser: Browser, baseURL: string): Promise<Page> {
  const context = await browser.newContext({ baseURL, viewport: { width: 1280, height: 800 } });
  const page = await context.newPage();
  // Uncaught errors in the app should fail the test, not pass silently.
  page.on('pageerror', (err) => {
    throw err;
  });
  return page;
}

/** Full-page screenshot into .local/screenshots/ (gitignored) for a person to look at. */
export async function screenshot(page: Page, name: string): Promise<string> {
  mkdirSync(SCREENSHOT_DIR, { recursive: true });
  const file = path.join(SCREENSHOT_DIR, `${name}.png`);
  await page.screenshot({ path: file, fullPage: true });
  return file;
}

/** Fill the real sign-in form and wait until the app has left the sign-in page. */
export async function signIn(page: Page, email: string, password: string, next?: string): Promise<void> {
  await page.goto(next ? `/sign-in?next=${encodeURIComponent(next)}` : '/sign-in');
  await page.getByLabel('E-mail').fill(email);
  await page.getByLabel('Password').fill(password);
  await page.getByRole('button', { name: 'Sign in' }).click();
  await page.waitForURL((u) => u.pathname !== '/sign-in');
}

/** Call the API from the signed-in page, the way the web app does (cookies plus the CSRF header). */
export async function apiCall<T>(page: Page, method: string, path: string, body?: unknown): Promise<{ status: number; body: T }> {
  return page.evaluate(
    async ({ method, path, body }) => {
      const csrf = decodeURIComponent(document.cookie.split('; ').find((c) => c.startsWith('tw_csrf='))?.slice(8) ?? '');
      const res = await fetch(path, { method, headers: { 'Content-Type': 'application/json', 'X-CSRF-Token': csrf }, body: body === undefined ? undefined : JSON.stringify(body) });
      return { status: res.status, body: (await res.json()) as T };
    },
    { method, path, body },
  );
}
