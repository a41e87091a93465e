import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import type { Browser, Page } from 'playwright-core';
import { DEMO_SIGN_INS, seedDemo } from '../../api/src/seed/demo.js';
import { launchBrowser, newPage, screenshot, signIn } from './browser.js';
import { startStack, type Stack } from './stack.js';

const author = DEMO_SIGN_INS.find((d) => d.role === 'author')!;

/** Every API answer of 400 and up the page received, as "METHOD path status". */
function refusals(page: Page): string[] {
  const seen: string[] = [];
  page.on('response', (r) => {
    if (r.status() >= 400 && new URL(r.url()).pathname.startsWith('/api/')) seen.push(`${r.request().method()} ${new URL(r.url()).pathname} ${r.status()}`);
  });
  return seen;
}

/**
 * The new-run form at the edges of the grain count: a run far too large for the machines (the
 * estimate says why, memory needed against available, readable and inside its column; the submit's
 * refusal says the same by the button) and a run of no grains (refused beside the field, nothing sent).
 */
describe('the new-run form with grain counts out of range', () => {
  let stack: Stack;
  let browser: Browser;

  beforeAll(async () => {
    stack = await startStack();
    await seedDemo(stack.env);
    browser = await launchBrowser();
  });
  afterAll(async () => {
    await browser?.close();
    await stack?.close();
  });

  test('n = 10^12: the estimate refuses it for its memory, not its cost, and so does the submit', async () => {
    const page = await newPage(browser, stack.url);
    await signIn(page, author.email, author.password);
    const refused = refusals(page);
    await page.goto('/runs/new');
    await page.getByLabel('Title').fill('A trillion grains');
    await page.getByLabel('Grains at the origin (n)').fill('1000000000000');
    const estimate = page.getByTestId('estimate');
    const why = estimate.getByRole('alert').filter({ hasText: /^this run needs about [\d,.]+ GiB of working memory \(a [\d,]+ × [\d,]+ domain, [\d,]+ cells at 16 bytes each\), more than the [\d,.]+ GiB of the machines that compute it; use fewer grains$/ });
    await why.waitFor();
    // no cost is shown or checked for a run that cannot be computed at all
    expect(await page.getByTestId('credit-check').count()).toBe(0);
    expect(await page.getByTestId('estimate-time').count()).toBe(0);
    expect(await estimate.textContent()).not.toMatch(/credits/);

    // nothing runs past the box, the box stays in its column and the page does not scroll sideways
    const aside = (await page.locator('form[aria-label="new run"] aside').boundingBox())!;
    const box = (await estimate.boundingBox())!;
    expect(box.x + box.width).toBeLessThanOrEqual(aside.x + aside.width + 0.5);
    expect(await estimate.evaluate((el) => el.scrollWidth - el.clientWidth)).toBeLessThanOrEqual(0);
    const spill = await estimate.evaluate((el) => {
      const edge = el.getBoundingClientRect().right;
      return [...el.querySelectorAll('*')].filter((c) => c.getBoundingClientRect().right > edge + 0.5).map((c) => c.textContent);
    });
    expect(spill).toEqual([]);
    expect(await page.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth)).toBeLessThanOrEqual(0);
    await screenshot(page, 'run-form-huge-n');

    await page.getByRole('button', { name: 'Start run' }).click();
    // the submit's refusal sits by the button, outside the estimate box, in the same words
    const alert = page.locator('form[aria-label="new run"] aside > [role="alert"]');
    await alert.waitFor();
    expect(await alert.textContent()).toBe(await why.textContent());
    expect(new URL(page.url()).pathname).toBe('/runs/new');
    await screenshot(page, 'run-form-huge-n-refused');
    // the estimate's refusal and the submit's; no side request (a credit check) failed on the way
    expect([...new Set(refused)].sort()).toEqual(['POST /api/estimates 400', 'POST /api/runs 400']);

    // a smaller n then goes through, and the old refusal does not linger
    await page.getByLabel('Grains at the origin (n)').fill('1000');
    await page.getByRole('button', { name: 'Start run' }).click();
    await page.waitForURL((u) => /^\/runs\/[0-9a-f-]{36}$/.test(u.pathname));
  });

  test('n = 0 on the runs page: refused beside the field with the shared schema\'s message, nothing sent', async () => {
    const page = await newPage(browser, stack.url);
    const posted: string[] = [];
    page.on('request', (r) => {
      if (r.method() === 'POST' && new URL(r.url()).pathname === '/api/runs') posted.push(r.url());
    });
    await signIn(page, author.email, author.password);
    await page.goto('/runs');
    await page.getByRole('button', { name: 'New run' }).click();
    await page.getByLabel('Title').fill('No grains at all');
    const n = page.getByLabel('Grains at the origin (n)');
    await n.fill('0');
    await page.getByText('a whole number of at least 1, e.g. 1000000 or 10^6').waitFor();
    await page.getByTestId('estimate').getByText('Complete the form to see the size, time and cost.').waitFor();
    // the answer for the earlier n (and whether the lab could pay for it) is no longer shown
    await expect.poll(() => page.getByTestId('credit-check').count()).toBe(0);
    expect(await page.getByTestId('estimate-for').count()).toBe(0);
    await page.getByRole('button', { name: 'Start run' }).click();
    await expect.poll(() => n.getAttribute('aria-invalid')).toBe('true');
    const described = (await n.getAttribute('aria-describedby'))!;
    expect(await page.locator(`[id="${described}"]`).textContent()).toBe('must be at least 1');
    await screenshot(page, 'run-form-zero-n');
    expect(posted).toEqual([]);
    expect(new URL(page.url()).pathname).toBe('/runs');
  });
});
