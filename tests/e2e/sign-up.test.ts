import { randomBytes } from 'node:crypto';
import { eq } from 'drizzle-orm';
import { describe, expect, test } from 'vitest';
import type { Page } from 'playwright-core';
import { emailTokens } from '../../drizzle/schema.js';
import type { OutboxMessage } from '../../shared/api/dev.js';
import { sha256Hex } from '../../api/src/auth/secrets.js';
import { newPage, screenshot } from './browser.js';
import { linkTo, waitForMail } from './outbox.js';
import { useStackInBrowser } from './farm-in-browser.js';

/** The link to `pathname` of a mail to `to` other than `seen`: a second mail of the same kind. */
async function nextMailLink(outboxUrl: string, to: string, subject: RegExp, pathname: string, seen: string): Promise<string> {
  const deadline = Date.now() + 10_000;
  for (;;) {
    const res = await fetch(`${outboxUrl}/messages?to=${encodeURIComponent(to)}`);
    const { messages } = (await res.json()) as { messages: OutboxMessage[] };
    const link = messages.filter((m) => subject.test(m.subject)).map((m) => linkTo(m, pathname)).find((l) => l !== seen);
    if (link) return link;
    if (Date.now() > deadline) throw new Error(`no second mail to ${to} matching ${subject}`);
    await new Promise((r) => setTimeout(r, 200));
  }
}

/** Mailed links end to end: sign-up confirmation from the development outbox, and a password reset. */
describe('mailed links in the browser', () => {
  const e2e = useStackInBrowser({ demo: false });

  test('the form checks input with the shared schema, then the mailed link confirms the address', async () => {
    const page = await newPage(e2e.browser, e2e.stack.url);
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
    const again = await newPage(e2e.browser, e2e.stack.url);
    await again.goto('/sign-up');
    await again.getByLabel('Your name').fill('Ada Quill');
    await again.getByLabel('E-mail').fill(email);
    await again.getByLabel('Password').fill('a long enough passphrase');
    await again.getByRole('button', { name: 'Create account' }).click();
    await again.getByRole('alert').first().waitFor();
    expect(await again.getByRole('alert').first().textContent()).toMatch(/e-mail|exists|already/i);

    const mail = await waitForMail(e2e.stack.env.MAIL_OUTBOX_URL!, email, /confirm|verif/i);
    const link = linkTo(mail, '/verify-email');
    expect(link.startsWith(`${e2e.stack.url}/verify-email?token=`)).toBe(true);

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

    // The token works once: opened again by the confirmed person, the page says there is nothing left to do.
    await page.goto(link);
    await page.getByText('Already confirmed').waitFor();
  });

  test('a confirmation link that no longer works says so on arrival and offers a new one', async () => {
    const email = `dora.grain+${Date.now()}@example.org`;
    const page = await newPage(e2e.browser, e2e.stack.url);
    await page.goto('/sign-up');
    await page.getByLabel('Your name').fill('Dora Grain');
    await page.getByLabel('E-mail').fill(email);
    await page.getByLabel('Password').fill('a long enough passphrase');
    await page.getByRole('button', { name: 'Create account' }).click();
    await page.getByRole('heading', { name: 'Check your e-mail' }).waitFor();
    const first = linkTo(await waitForMail(e2e.stack.env.MAIL_OUTBOX_URL!, email, /confirm|verif/i), '/verify-email');

    // well formed, never mailed: a reader who is not signed in is sent to sign in first
    const dead = `/verify-email?token=${randomBytes(32).toString('base64url')}`;
    const stranger = await newPage(e2e.browser, e2e.stack.url);
    await stranger.goto(dead);
    await stranger.getByText('This confirmation link no longer works').waitFor();
    await stranger.getByRole('link', { name: 'Sign in to get a new link' }).waitFor();

    // signed in and not confirmed yet: the new link is one click away
    await page.goto(dead);
    await page.getByText('This confirmation link no longer works').waitFor();
    await page.getByRole('button', { name: 'Mail a new link' }).click();
    await page.getByText('Mail on its way').waitFor();
    await screenshot(page, 'verify-email-new-link');
    const second = await nextMailLink(e2e.stack.env.MAIL_OUTBOX_URL!, email, /confirm|verif/i, '/verify-email', first);
    await page.goto(second);
    await page.getByText('E-mail confirmed').waitFor();
  });

  test('a forgotten password is reset from the mailed link, and only the new one signs in', async () => {
    const email = `bram.ledger+${Date.now()}@example.org`;
    const created = await fetch(`${e2e.stack.url}/api/auth/sign-up`, {
      method: 'POST',
      headers: { 'Content-Type': 'application/json' },
      body: JSON.stringify({ email, password: 'the first passphrase', name: 'Bram Ledger' }),
    });
    expect(created.status).toBe(201);

    const page = await newPage(e2e.browser, e2e.stack.url);
    await page.goto('/sign-in');
    await page.getByRole('link', { name: 'Forgot your password?' }).click();
    await page.getByLabel('E-mail').fill(email);
    await page.getByRole('button', { name: 'Send reset link' }).click();
    await page.getByText('Mail on its way').waitFor();

    const mail = await waitForMail(e2e.stack.env.MAIL_OUTBOX_URL!, email, /password|reset/i);
    await page.goto(linkTo(mail, '/reset-password'));
    await page.getByLabel('New password').fill('the second passphrase');
    await page.getByLabel('Repeat it').fill('the second passphrase!');
    await page.getByRole('button', { name: 'Save password' }).click();
    await page.getByText('the two passwords differ').waitFor();
    await page.getByLabel('Repeat it').fill('the second passphrase');
    await page.getByRole('button', { name: 'Save password' }).click();
    await page.getByText('Password changed').waitFor();
    await screenshot(page, 'reset-password-done');
    // opened again, the spent link says so on arrival
    await page.goto(linkTo(mail, '/reset-password'));
    await page.getByText('This reset link was already used').waitFor();
    expect(await page.getByLabel('New password').count()).toBe(0);

    await page.goto('/sign-in');
    await page.getByLabel('E-mail').fill(email);
    await page.getByLabel('Password').fill('the first passphrase');
    await page.getByRole('button', { name: 'Sign in' }).click();
    await page.getByText('wrong e-mail or password').waitFor();
    await page.getByLabel('Password').fill('the second passphrase');
    await page.getByRole('button', { name: 'Sign in' }).click();
    await page.waitForURL((u) => u.pathname === '/runs');
  });

  test('a reset link says on arrival whether it still works, and a dead one offers a new link instead of the form', async () => {
    const email = `cara.sifter+${Date.now()}@example.org`;
    const created = await fetch(`${e2e.stack.url}/api/auth/sign-up`, {
      method: 'POST',
      headers: { 'Content-Type': 'application/json' },
      body: JSON.stringify({ email, password: 'the first passphrase', name: 'Cara Sifter' }),
    });
    expect(created.status).toBe(201);
    const asked = await fetch(`${e2e.stack.url}/api/auth/password-reset`, { method: 'POST', headers: { 'Content-Type': 'application/json' }, body: JSON.stringify({ email }) });
    expect(asked.status).toBe(202);
    const link = linkTo(await waitForMail(e2e.stack.env.MAIL_OUTBOX_URL!, email, /password|reset/i), '/reset-password');
    const token = new URL(link).searchParams.get('token')!;

    const page = await newPage(e2e.browser, e2e.stack.url);
    const sent: string[] = [];
    page.on('request', (r) => {
      if (r.url().includes('/api/auth/password-reset')) sent.push(new URL(r.url()).pathname);
    });
    const noForm = async (p: Page) => expect(await p.getByLabel('New password').count()).toBe(0);

    // cut short on its way from the mail: said at once, without asking the API
    await page.goto(`/reset-password?token=${token.slice(0, 12)}`);
    await page.getByText('This reset link is incomplete').waitFor();
    await noForm(page);
    expect(sent).toEqual([]);
    await screenshot(page, 'reset-link-incomplete');

    // well formed but never mailed
    await page.goto(`/reset-password?token=${randomBytes(32).toString('base64url')}`);
    await page.getByText('This reset link is not valid').waitFor();
    await noForm(page);
    expect(sent).toEqual(['/api/auth/password-reset/check']);
    await screenshot(page, 'reset-link-unknown');

    // the mailed link: the form, and checking it used nothing
    await page.goto(link);
    await page.getByLabel('New password').waitFor();
    await page.getByText('This link works until').waitFor();
    await screenshot(page, 'reset-link-good');

    // the hour runs out while the page is open: saving still says so, with the way to a new link
    await e2e.stack.deps.db.update(emailTokens).set({ expiresAt: new Date(Date.now() - 1000) }).where(eq(emailTokens.tokenHash, sha256Hex(token)));
    await page.getByLabel('New password').fill('the second passphrase');
    await page.getByLabel('Repeat it').fill('the second passphrase');
    await page.getByRole('button', { name: 'Save password' }).click();
    await page.getByText('this password reset link is invalid, used or expired').waitFor();
    await page.getByRole('link', { name: 'Ask for a new link' }).waitFor();

    // arriving again now: expired, no form, and the button leads to asking for another mail
    await page.goto(link);
    await page.getByText('This reset link has expired').waitFor();
    await noForm(page);
    await screenshot(page, 'reset-link-expired');
    // the mail may be opened on a phone: the message and both ways on fit 390 px (web/CONTEXT.md)
    await page.setViewportSize({ width: 390, height: 844 });
    await page.getByRole('link', { name: 'Ask for a new link' }).waitFor();
    expect(await page.evaluate(() => document.documentElement.scrollWidth)).toBeLessThanOrEqual(390);
    const past = await page.evaluate(() => [...document.querySelectorAll('main *')].filter((el) => el.getBoundingClientRect().right > 390.5).map((el) => el.outerHTML.slice(0, 80)));
    expect(past).toEqual([]);
    await screenshot(page, 'reset-link-expired-phone');
    await page.getByRole('link', { name: 'Ask for a new link' }).click();
    await page.getByRole('heading', { name: 'Reset your password' }).waitFor();
  });
});
