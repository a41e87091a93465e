import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import type { Browser } from 'playwright-core';
import type Stripe from 'stripe';
import { DEMO_SIGN_INS, seedDemo } from '../../api/src/seed/demo.js';
import { createStripe } from '../../api/src/billing/stripe-client.js';
import { launchBrowser, newPage, screenshot, signIn } from './browser.js';
import { waitForMail } from './outbox.js';
import { startStack, type Stack } from './stack.js';

/**
 * A lab manager buys a credit pack in headless Chromium: the credits page, the payments fake's
 * hosted checkout (a declined card first, then the paying one), back to the credits page, the
 * webhook crediting the lab, the receipt page and the receipt e-mail.
 */
describe('buying compute credits in the browser', () => {
  let stack: Stack;
  let browser: Browser;
  let stripe: Stripe;
  let endpointId = '';
  const manager = DEMO_SIGN_INS.find((s) => s.role === 'manager')!;

  beforeAll(async () => {
    stack = await startStack();
    await seedDemo(stack.env);
    // The payments fake (started by npm test) delivers events to endpoints registered with it; the
    // endpoint's secret exists only once it is registered with this stack's URL, so hand it to the app then.
    stripe = createStripe(stack.env);
    const endpoint = await stripe.webhookEndpoints.create({ url: `${stack.url}/api/payments/webhook`, enabled_events: ['*'] });
    endpointId = endpoint.id;
    stack.env.STRIPE_WEBHOOK_SECRET = endpoint.secret!;
    browser = await launchBrowser();
  });
  afterAll(async () => {
    if (endpointId) await stripe.webhookEndpoints.del(endpointId).catch(() => {});
    await browser?.close();
    await stack?.close();
  });

  test('a declined card, then the paying one: the lab is credited and the receipt is mailed', async () => {
    const page = await newPage(browser, stack.url);
    await signIn(page, manager.email, manager.password, '/lab/credits');
    await page.waitForURL((u) => u.pathname === '/lab/credits');
    // the demo lab's invented purchase of 5,000 credits (api/src/seed/demo.ts)
    await expect.poll(() => page.getByTestId('credits-available').textContent()).toBe('5,000');
    await screenshot(page, 'credits-before');

    await page.getByRole('button', { name: 'Buy Sheet' }).click();
    await page.waitForURL((u) => u.pathname.startsWith('/checkout/cs_test_'));
    await page.getByText('€20.00').first().waitFor();
    // Stripe's documented test cards (docs.stripe.com/testing): ...0002 is declined, 4242... pays
    await page.getByLabel('Card number').fill('4000 0000 0000 0002');
    await page.getByRole('button', { name: /^Pay/ }).click();
    await page.getByRole('alert').getByText(/declined/i).waitFor();
    await screenshot(page, 'credits-checkout-declined');

    await page.getByLabel('Card number').fill('4242 4242 4242 4242');
    await page.getByRole('button', { name: /^Pay/ }).click();
    await expect.poll(() => { const u = new URL(page.url()); return u.origin === stack.url && u.pathname === '/lab/credits'; }, { timeout: 30_000 }).toBe(true);
    await page.getByText('Credits added').waitFor({ timeout: 15_000 });
    // said on this visit only: the way back's ?paid= is gone from the address, so a reload does not say it again
    expect(new URL(page.url()).searchParams.has('paid')).toBe(false);
    await expect.poll(() => page.getByTestId('credits-available').textContent()).toBe('6,000');
    const purchases = page.getByRole('table', { name: 'purchases' });
    const row = purchases.locator('tbody tr').first();
    await expect.poll(() => row.textContent()).toMatch(/paid/);
    expect(await row.textContent()).toMatch(/1,000/);
    await screenshot(page, 'credits-after');
    await page.reload();
    await page.getByTestId('credits-available').waitFor();
    expect(await page.getByText('Credits added').count()).toBe(0);

    await row.getByRole('link', { name: 'Receipt' }).click();
    await page.waitForURL((u) => u.pathname.startsWith('/lab/credits/receipts/'));
    const heading = page.getByRole('heading', { level: 1, name: /^TW-\d{6}$/ });
    await heading.waitFor();
    const number = (await heading.textContent())!;
    await page.getByText('€20.00').waitFor();
    await screenshot(page, 'credits-receipt');

    const mail = await waitForMail(stack.env.MAIL_OUTBOX_URL!, manager.email, new RegExp(`^Receipt ${number}`));
    expect(mail.text).toContain('1,000 compute credits');
  });

  test('the balance names this lab\'s free allowance: the standard one, or the one a site admin set for the other lab', async () => {
    const month = new Date().toISOString().slice(0, 7);
    const page = await newPage(browser, stack.url);
    await signIn(page, manager.email, manager.password, '/lab/credits');
    await expect.poll(() => page.getByTestId('credits-allowance').textContent()).toBe(`Free allowance for ${month}: 100 credits a month for this lab, the standard allowance of every lab.`);
    const other = DEMO_SIGN_INS.find((d) => d.role === 'other lab')!;
    const otherPage = await newPage(browser, stack.url);
    await signIn(otherPage, other.email, other.password, '/lab/credits');
    // the demo's admin cut the other lab's allowance to 2 for a pilot (api/src/seed/demo.ts)
    await expect.poll(() => otherPage.getByTestId('credits-allowance').textContent()).toBe(`Free allowance for ${month}: 2 credits a month for this lab, set by a site admin (the standard allowance is 100 credits).`);
    await screenshot(otherPage, 'credits-other-lab-allowance');
  });

  test('the run form says before submitting how a run would be paid, and usage shows up in the chart and table', async () => {
    const page = await newPage(browser, stack.url);
    await signIn(page, manager.email, manager.password, '/runs/new');
    await page.waitForURL((u) => u.pathname === '/runs/new');
    await expect.poll(() => page.getByTestId('credit-check').textContent(), { timeout: 15_000 }).toMatch(/free allowance/);
    await screenshot(page, 'credits-run-form');

    // a run submitted as the web app would (session cookie + CSRF header); no worker runs here, so it stays reserved
    // the demo's runs hold credits too (each against its author), so the manager's own row is compared before and after
    const { status, before } = await page.evaluate(async () => {
      const csrf = decodeURIComponent(document.cookie.split('; ').find((c) => c.startsWith('tw_csrf='))!.slice('tw_csrf='.length));
      const me = await (await fetch('/api/me')).json();
      const rows = (await (await fetch(`/api/labs/${me.activeLabId}/credits/usage`)).json()).rows as { memberId: string; runs: number }[];
      const res = await fetch('/api/runs', {
        method: 'POST',
        headers: { 'Content-Type': 'application/json', 'X-CSRF-Token': csrf },
        body: JSON.stringify({ labId: me.activeLabId, title: 'A million grains', spec: { lattice: { preset: 'square' }, chips: 1_000_000 } }),
      });
      return { status: res.status, before: rows.filter((r) => r.memberId === me.user.id).reduce((n, r) => n + r.runs, 0) };
    });
    expect(status).toBe(201);
    await page.goto('/lab/credits');
    const usage = page.getByRole('table', { name: 'usage per month and member' });
    const mine = usage.locator('tbody tr', { hasText: 'Perrin Ashcombe' });
    await mine.waitFor();
    // columns: month, member, runs, charged, of which free, reserved
    expect(Number((await mine.locator('td').nth(2).textContent())!.replaceAll(',', ''))).toBe(before + 1);
    expect(await page.locator('figure[aria-label="credits used per month"] .recharts-bar-rectangle').count()).toBeGreaterThan(0);
    await expect.poll(() => page.getByTestId('credits-reserved').textContent()).not.toBe('0');
    await screenshot(page, 'credits-usage');
  });
});
