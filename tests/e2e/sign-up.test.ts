import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import type { Browser } from 'playwright-core';
import { launchBrowser, newPage, screenshot } from './browser.js';
import { linkTo, waitForMail } from './outbox.js';
import { startStack, type Stack } from './stack.js';

/** Mailed links end to end: sign-up confirmation from the development outbox, and a password reset. */
describe('mailed links in the browser', () => {
  let stack: Stack;
  let browser: Browser;

  beforeAll(async () => {
    stack = await startStack();
    browser = await launchBrowser();
  });
  afterAll(async () => {
    await browser?.close();
    await stack?.close();
  });

  test('the form checks input with the shared schema, then the mailed link confirms the address', async () => {
    const page = await newPage(browser, stack.url);
    const email = `ada.quill+${Date.now()}@example.org`;
    let signUpRequests = 0;
    page.on('request', (r) => {
      if (r.url().endsWith('/api/auth/sign-up')) signUpRequests++;
    });

    await page.goto('/sign-up');
    await page.getByLabel('Your name').fill('Ada Quill');
    await page.getByLabel('E-mail').fill('not-an-address');
    await page.getByLabel('Password').fill('short');
    await page.getByRole('button', { name: 'Create account' }).click();
    // Messages come from shared/api/auth.ts, the schema the API also enforces.
    await page.getByText('not an e-mail address').waitFor();
    await page.getByText('password must be at least 10 characters').waitFor();
    expect(signUpRequests).toBe(0);
    await screenshot(page, 'sign-up-inline-errors');

    await page.getByLabel('E-mail').fill(email);
    await page.getByLabel('Password').fill('a long enough passphrase');
    await page.getByRole('button', { name: 'Create account' }).click();
    await page.getByRole('heading', { name: 'Check your e-mail' }).waitFor();
    expect(signUpRequests).toBe(1);
    await screenshot(page, 'sign-up-done');

    // The same address twice is refused by the API, and its message is shown.
    const again = await newPage(browser, stack.url);
    await again.goto('/sign-up');
    await again.getByLabel('Your name').fill('Ada Quill');
    await again.getByLabel('E-mail').fill(email);
    await again.getByLabel('Password').fill('a long enough passphrase');
    await again.getByRole('button', { name: 'Create account' }).click();
    await again.getByRole('alert').first().waitFor();
    expect(await again.getByRole('alert').first().textContent()).toMatch(/e-mail|exists|already/i);

    const mail = await waitForMail(stack.env.MAIL_OUTBOX_URL!, email, /confirm|verif/i);
    const link = linkTo(mail, '/verify-email');
    expect(link.startsWith(`${stack.url}/verify-email?token=`)).toBe(true);

    // Follow it the way a developer would: from the outbox page.
    await page.goto('/dev/outbox');
    const card = page.getByTestId('outbox-message').filter({ hasText: email });
    await card.first().waitFor();
    await screenshot(page, 'dev-outbox');
    await card.first().getByRole('link', { name: link }).click();
    await page.getByText('E-mail confirmed').waitFor();
    await screenshot(page, 'verify-email-confirmed');

    // Sign-up signed the person in; the account page now calls the address confirmed.
    await page.goto('/account');
    await page.getByText('confirmed', { exact: true }).waitFor();

    // The token works once: opening the link again reports the API's refusal.
    await page.goto(link);
    await page.getByText('Could not confirm').waitFor();
  });

  test('a forgotten password is reset from the mailed link, and only the new one signs in', async () => {
    const email = `bram.ledger+${Date.now()}@example.org`;
    const created = await fetch(`${stack.url}/api/auth/sign-up`, {
      method: 'POST',
      headers: { 'Content-Type': 'application/json' },
      body: JSON.stringify({ email, password: 'the first passphrase', name: 'Bram Ledger' }),
    });
    expect(created.status).toBe(201);

    const page = await newPage(browser, stack.url);
    await page.goto('/sign-in');
    await page.getByRole('link', { name: 'Forgot your password?' }).click();
    await page.getByLabel('E-mail').fill(email);
    await page.getByRole('button', { name: 'Send reset link' }).click();
    await page.getByText('Mail on its way').waitFor();

    const mail = await waitForMail(stack.env.MAIL_OUTBOX_URL!, email, /password|reset/i);
    await page.goto(linkTo(mail, '/reset-password'));
    await page.getByLabel('New password').fill('the second passphrase');
    await page.getByLabel('Repeat it').fill('the second passphrase!');
    await page.getByRole('button', { name: 'Save password' }).click();
    await page.getByText('the two passwords differ').waitFor();
    await page.getByLabel('Repeat it').fill('the second passphrase');
    await page.getByRole('button', { name: 'Save password' }).click();
    await page.getByText('Password changed').waitFor();
    await screenshot(page, 'reset-password-done');

    await page.goto('/sign-in');
    await page.getByLabel('E-mail').fill(email);
    await page.getByLabel('Password').fill('the first passphrase');
    await page.getByRole('button', { name: 'Sign in' }).click();
    await page.getByText('wrong e-mail or password').waitFor();
    await page.getByLabel('Password').fill('the second passphrase');
    await page.getByRole('button', { name: 'Sign in' }).click();
    await page.waitForURL((u) => u.pathname === '/runs');
  });
});
