import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import type { Browser } from 'playwright-core';
import { DEMO_FIGURE_SLUG, DEMO_LAB, DEMO_OTHER_LAB, DEMO_SIGN_INS, seedDemo } from '../../api/src/seed/demo.js';
import { launchBrowser, newPage, screenshot, signIn } from './browser.js';
import { linkTo, waitForMail } from './outbox.js';
import { startStack, type Stack } from './stack.js';

function demo(role: 'author' | 'manager' | 'admin') {
  const s = DEMO_SIGN_INS.find((d) => d.role === role);
  if (!s) throw new Error(`no demo sign-in for ${role}`);
  return s;
}

/** Each demo role signs in through the real form and sees the pages of that role; a reader sees only public pages. */
// each test takes 2–6 s alone, but shares two cores with the rest of the suite: one took over 30 s in a full run
describe('demo roles in the browser', { timeout: 90_000 }, () => {
  let stack: Stack;
  let browser: Browser;

  beforeAll(async () => {
    stack = await startStack();
    const seeded = await seedDemo(stack.env);
    expect(seeded?.signIns.length).toBe(DEMO_SIGN_INS.length);
    browser = await launchBrowser();
  });
  afterAll(async () => {
    await browser?.close();
    await stack?.close();
  });

  test('the landing page is set in Work Sans, served from our own origin', async () => {
    const page = await newPage(browser, stack.url);
    const fontRequests: string[] = [];
    page.on('request', (r) => {
      if (r.resourceType() === 'font') fontRequests.push(r.url());
    });
    await page.goto('/');
    await page.getByRole('heading', { level: 1 }).waitFor();
    await page.evaluate(() => document.fonts.ready);
    expect(await page.evaluate(() => document.fonts.check('16px "Work Sans"'))).toBe(true);
    expect(await page.evaluate(() => getComputedStyle(document.body).fontFamily)).toMatch(/^"Work Sans"/);
    expect(fontRequests.length).toBeGreaterThan(0);
    expect(fontRequests.every((u) => u.startsWith(stack.url))).toBe(true);
    await screenshot(page, 'landing');
  });

  test('a reader who opens /admin is sent to sign in, and comes back there after signing in as admin', async () => {
    const page = await newPage(browser, stack.url);
    await page.goto('/admin');
    await page.waitForURL((u) => u.pathname === '/sign-in');
    expect(new URL(page.url()).searchParams.get('next')).toBe('/admin');
    await page.getByRole('heading', { name: 'Sign in' }).waitFor();
    await screenshot(page, 'reader-admin-to-sign-in');

    await page.getByLabel('E-mail').fill(demo('admin').email);
    await page.getByLabel('Password').fill(demo('admin').password);
    await page.getByRole('button', { name: 'Sign in' }).click();
    await page.waitForURL((u) => u.pathname === '/admin');
    const labs = page.getByRole('table', { name: 'labs' });
    await labs.getByText(DEMO_LAB).waitFor();
    await labs.getByText(DEMO_OTHER_LAB).waitFor();
    // the demo lab has the four seeded runs of api/src/seed/demo.ts, and its members list it
    const demoLabRow = labs.locator('tbody tr', { hasText: DEMO_LAB });
    await expect.poll(() => demoLabRow.locator('td').nth(2).textContent()).toBe('4');
    const users = page.getByRole('table', { name: 'users' });
    for (const s of DEMO_SIGN_INS) await users.getByText(s.email).waitFor();
    const authorRow = users.locator('tbody tr', { hasText: demo('author').email });
    expect(await authorRow.locator('td').nth(2).textContent()).toBe(DEMO_LAB);
    // sorting by a header reorders the rows in the browser
    const firstName = () => users.locator('tbody tr').first().locator('td').first().textContent();
    const before = await firstName();
    await users.getByRole('button', { name: 'Name' }).click();
    expect(await firstName()).not.toBe(before);
    await screenshot(page, 'admin');
  });

  test('wrong password shows the API’s message and stays on the form', async () => {
    const page = await newPage(browser, stack.url);
    await page.goto('/sign-in');
    await page.getByLabel('E-mail').fill(demo('author').email);
    await page.getByLabel('Password').fill('not the password');
    await page.getByRole('button', { name: 'Sign in' }).click();
    await page.getByText('wrong e-mail or password').waitFor();
    expect(new URL(page.url()).pathname).toBe('/sign-in');
  });

  test('an author sees the lab’s runs with exact counts, a run page, and is not allowed into admin', async () => {
    const page = await newPage(browser, stack.url);
    await signIn(page, demo('author').email, demo('author').password);
    expect(new URL(page.url()).pathname).toBe('/runs');
    const table = page.getByRole('table', { name: 'runs' });
    await table.getByText('One hundred thousand grains on the square lattice').waitFor();
    // the four seeded runs of the demo lab (this test runs before the one that adds a run)
    expect(await table.locator('tbody tr').count()).toBe(4);
    // runs of another lab never show up
    expect(await page.getByText('A thousand and one grains on the line').count()).toBe(0);
    // n shown exactly, grouped, with the power of ten as a real superscript
    const cell = table.locator('tbody tr', { hasText: 'One hundred thousand grains' }).locator('td').nth(2);
    expect((await cell.textContent())?.replace(/\s+/g, '')).toBe('100,000(105)');
    expect(await cell.locator('sup').textContent()).toBe('5');
    await page.getByTestId('signed-in-name').getByText('Maren Tollis').waitFor();
    await screenshot(page, 'author-runs');

    // filters are applied by the server: only the triangular run is left
    await page.getByLabel('Lattice').selectOption('triangular');
    await page.waitForURL((u) => u.searchParams.get('lattice') === 'triangular');
    await table.locator('tbody tr').first().getByText('Triangular lattice over a constant background of 2').waitFor();
    await expect.poll(() => table.locator('tbody tr').count()).toBe(1);

    await table.getByRole('link', { name: 'Triangular lattice over a constant background of 2' }).click();
    await page.waitForURL((u) => u.pathname.startsWith('/runs/'));
    await page.getByText('constant 2', { exact: true }).waitFor();
    // the status card follows the run's own query (and its live events), which may land after the specification
    await page.getByRole('progressbar').first().waitFor({ timeout: 15_000 });
    await screenshot(page, 'author-run-page');

    await page.goto('/admin');
    await page.getByText('Not allowed').waitFor();
    // the API refuses too, not only the page
    const status = await page.evaluate(async () => (await fetch('/api/admin/users')).status);
    expect(status).toBe(403);
    await screenshot(page, 'author-admin-not-allowed');
  });

  test('a mistyped address of a lab figure, a series or a receipt says there is nothing there and leads back, as a run does', async () => {
    const page = await newPage(browser, stack.url);
    await signIn(page, demo('manager').email, demo('manager').password);
    const cases = [
      // a slug no figure has; a series id that is not an id; a receipt typed in by its number
      { path: '/lab/figures/no-such-figure', title: 'No figure at this address', back: "Your lab's figures", to: '/lab/figures' },
      { path: '/series/not-an-id', title: 'No series at this address', back: 'Back to runs', to: '/runs' },
      { path: '/lab/credits/receipts/TW-000001', title: 'No receipt at this address', back: 'Back to credits', to: '/lab/credits' },
      { path: '/lab/credits/receipts/00000000-0000-4000-8000-000000000000', title: 'No receipt at this address', back: 'Back to credits', to: '/lab/credits' },
    ];
    for (const c of cases) {
      await page.goto(c.path);
      await page.getByText(c.title, { exact: true }).waitFor();
      // the API's own words ("figure not found", "invalid request params: id: …") and request ids are for scripts
      const main = (await page.locator('main').textContent()) ?? '';
      expect(main, c.path).not.toMatch(/not found|invalid request|request [0-9a-f]{8}-/);
      await screenshot(page, `not-here-${c.path.split('/')[2]}`);
      await page.getByRole('link', { name: c.back }).click();
      await page.waitForURL((u) => u.pathname === c.to);
    }
  });

  test('a signed-in page opened by its address keeps the masthead while it loads, and the console stays free of router warnings', async () => {
    const page = await newPage(browser, stack.url);
    const warnings: string[] = [];
    page.on('console', (m) => {
      if (m.type() === 'warning' || m.type() === 'error') warnings.push(m.text());
    });
    await signIn(page, demo('author').email, demo('author').password);
    for (const path of ['/runs', '/lab', '/lab/credits', '/account']) {
      await page.goto(path);
      // the masthead is drawn before the lazily loaded page, not after it
      await page.getByRole('link', { name: 'Runs', exact: true }).waitFor();
      await page.getByRole('heading', { level: 1 }).waitFor();
    }
    expect(warnings.filter((w) => /HydrateFallback/.test(w))).toEqual([]);
  });

  test('an author starts a run from the form: bad input is caught beside the field, a good one is queued', async () => {
    const page = await newPage(browser, stack.url);
    await signIn(page, demo('author').email, demo('author').password);
    await page.getByRole('button', { name: 'New run' }).click();
    await page.getByLabel('Grains at the origin (n)').fill('10^6');
    // the hint restates the typed count exactly: "1,000,000 (10⁶) grains", with a real superscript
    // (anchored: the estimate beside the form names the same n as "n = 1,000,000")
    const hint = page.locator('p', { hasText: /^1,000,000/ });
    await hint.waitFor();
    expect((await hint.textContent())?.replace(/\s+/g, ' ')).toBe('1,000,000 (106) grains');
    expect(await hint.locator('sup').textContent()).toBe('6');
    await page.getByRole('button', { name: 'Start run' }).click();
    await page.getByText('title is required').waitFor();

    await page.getByLabel('Title').fill('A million grains, typed as a power of ten');
    await page.getByRole('button', { name: 'Start run' }).click();
    await page.waitForURL((u) => /^\/runs\/[0-9a-f-]{36}$/.test(u.pathname));
    await page.getByRole('heading', { name: 'A million grains, typed as a power of ten' }).waitFor();
    await page.getByText('Waiting for a worker').waitFor();
    const runId = new URL(page.url()).pathname.split('/')[2]!;
    const saved = await page.evaluate(async (id) => (await (await fetch(`/api/runs/${id}`)).json()) as { run: { spec: { chips: number }; status: string } }, runId);
    expect(saved.run.spec.chips).toBe(1_000_000);
    expect(saved.run.status).toBe('queued');
  });

  test('an author creates a personal API token, sees the secret once, uses it, revokes it, and signs out', async () => {
    const page = await newPage(browser, stack.url);
    await signIn(page, demo('author').email, demo('author').password, '/account');
    await page.getByLabel('New token label').fill('plotting script');
    await page.getByRole('button', { name: 'Create token' }).click();
    const secret = (await page.getByTestId('token-secret').textContent())!.trim();
    expect(secret.startsWith('tw_')).toBe(true);
    await page.getByRole('table', { name: 'API tokens' }).getByText('plotting script').waitFor();
    await screenshot(page, 'author-account-token');

    // the secret really authenticates, without cookies
    const withToken = () => fetch(`${stack.url}/api/me`, { headers: { Authorization: `Bearer ${secret}` } });
    expect((await withToken()).status).toBe(200);
    await page.getByRole('button', { name: 'Done' }).click();
    expect(await page.getByTestId('token-secret').count()).toBe(0);
    await page.getByRole('button', { name: 'Revoke' }).click();
    await page.getByText('No tokens').waitFor();
    expect((await withToken()).status).toBe(401);

    await page.getByRole('button', { name: 'Sign out' }).click();
    // polls the address rather than waiting for a navigation event, so a failure names where the page went
    await expect.poll(() => new URL(page.url()).pathname, { timeout: 60_000 }).toBe('/');
    // and stays there once the page knows nobody is signed in (the account page, still rendering as
    // the person was cleared, used to send most sign-outs on to the sign-in page)
    await page.getByRole('banner').getByRole('link', { name: 'Sign in' }).waitFor();
    await page.getByTestId('signed-in-name').waitFor({ state: 'detached' });
    await page.waitForLoadState('networkidle');
    expect(new URL(page.url()).pathname).toBe('/');
    await page.goto('/runs');
    await page.waitForURL((u) => u.pathname === '/sign-in');
  });

  test('a manager edits a member’s monthly quota on the lab page', async () => {
    const page = await newPage(browser, stack.url);
    await signIn(page, demo('manager').email, demo('manager').password, '/lab');
    expect(new URL(page.url()).pathname).toBe('/lab');
    await page.getByRole('heading', { name: DEMO_LAB }).waitFor();
    const quota = page.getByLabel('monthly quota of Maren Tollis in credits');
    await quota.waitFor();
    expect(await quota.inputValue()).toBe('2,000');
    await page.getByRole('heading', { name: 'Pending invitations' }).waitFor();
    await screenshot(page, 'manager-lab');

    await quota.fill('2,500');
    await page.getByRole('form', { name: 'monthly quota of Maren Tollis' }).getByRole('button', { name: 'Save' }).click();
    await page.getByRole('form', { name: 'monthly quota of Maren Tollis' }).getByRole('button', { name: 'Save' }).waitFor({ state: 'detached' });
    await page.reload();
    await expect.poll(() => page.getByLabel('monthly quota of Maren Tollis in credits').inputValue()).toBe('2,500');

    // Typed without separators, the saved quota comes back grouped and Save goes away: the field used to
    // keep "3000" against the saved "3,000", so the form looked unsaved for ever.
    const form = page.getByRole('form', { name: 'monthly quota of Maren Tollis' });
    await page.getByLabel('monthly quota of Maren Tollis in credits').fill('3000');
    await form.getByRole('button', { name: 'Save' }).click();
    // (the button reads "Saving…" meanwhile, so its leaving alone proves nothing)
    await expect.poll(() => page.getByLabel('monthly quota of Maren Tollis in credits').inputValue()).toBe('3,000');
    await expect.poll(() => form.getByRole('button').count()).toBe(0);

    // Words are refused with words, and the complaint goes once the value changes.
    await page.getByLabel('monthly quota of Maren Tollis in credits').fill('lots');
    await form.getByRole('button', { name: 'Save' }).click();
    expect(await form.getByRole('alert').textContent()).toBe('enter a whole number');
    await page.getByLabel('monthly quota of Maren Tollis in credits').fill('3,00');
    await form.getByRole('alert').waitFor({ state: 'detached' });

    // A negative quota is stopped in the browser by the shared schema, with the message beside the field.
    await page.getByLabel('monthly quota of Maren Tollis in credits').fill('-5');
    await page.getByRole('form', { name: 'monthly quota of Maren Tollis' }).getByRole('button', { name: 'Save' }).click();
    await page.getByRole('form', { name: 'monthly quota of Maren Tollis' }).getByRole('alert').waitFor();
  });

  test('a manager invites a newcomer, who signs up from the mailed link and joins the lab', async () => {
    const newcomer = `orrin.vale+${Date.now()}@example.org`;
    const manager = await newPage(browser, stack.url);
    await signIn(manager, demo('manager').email, demo('manager').password, '/lab');
    await manager.getByLabel('E-mail').fill(newcomer);
    await manager.getByLabel('Role').selectOption('author');
    await manager.getByRole('button', { name: 'Send invitation' }).click();
    await manager.getByText(`Invitation mailed to ${newcomer}.`).waitFor();
    await manager.getByRole('table', { name: 'pending invitations' }).getByText(newcomer).waitFor();

    const mail = await waitForMail(stack.env.MAIL_OUTBOX_URL!, newcomer, /invit|join/i);
    const link = linkTo(mail, '/invitations');

    const page = await newPage(browser, stack.url);
    // the link cut short on its way from the mail says so in words (it showed the API's
    // 'invalid request params: token: not a valid token' in an error box)
    await page.goto(link.slice(0, link.lastIndexOf('/') + 8));
    await page.getByText('This invitation link is incomplete', { exact: true }).waitFor();
    expect(await page.getByText('invalid request params').count()).toBe(0);
    await page.goto(link);
    await page.getByRole('heading', { name: `Join ${DEMO_LAB}` }).waitFor();
    await screenshot(page, 'invitation-signed-out');
    await page.getByRole('link', { name: 'Create account' }).last().click();
    await page.waitForURL((u) => u.pathname === '/sign-up');
    await page.getByLabel('Your name').fill('Orrin Vale');
    // the invited address is filled in already
    expect(await page.getByLabel('E-mail').inputValue()).toBe(newcomer);
    await page.getByLabel('Password').fill('newcomer passphrase');
    await page.getByRole('button', { name: 'Create account' }).click();
    await page.getByRole('heading', { name: 'Check your e-mail' }).waitFor();

    await page.getByRole('link', { name: 'Continue where you were' }).click();
    await page.waitForURL((u) => u.pathname.startsWith('/invitations/'));
    await page.getByRole('button', { name: `Accept and join ${DEMO_LAB}` }).click();
    await page.waitForURL((u) => u.pathname === '/lab');
    await page.getByRole('heading', { name: DEMO_LAB }).waitFor();
    await page.getByRole('table', { name: 'lab members' }).getByText('Orrin Vale').waitFor();
    // an author sees quotas but cannot edit them
    expect(await page.getByLabel('monthly quota of Maren Tollis in credits').count()).toBe(0);
    await screenshot(page, 'newcomer-lab');

    await manager.reload();
    await manager.getByRole('table', { name: 'lab members' }).getByText('Orrin Vale').waitFor();
    await manager.getByText('No open invitations').waitFor();
  });

  test('the demo figure stays private until it is printed: readers do not find it, its author is told what publishing needs', async () => {
    // publishing needs a ready print (the publish route's rule); the demo's figure has none until the farm prints it
    const reader = await newPage(browser, stack.url);
    await reader.goto('/figures');
    await reader.getByText('Nothing published yet').waitFor();
    await reader.goto(`/f/${DEMO_FIGURE_SLUG}`);
    await reader.getByText('No figure at this link').waitFor();
    await reader.goto('/f/no-such-figure');
    await reader.getByText('No figure at this link').waitFor();

    const page = await newPage(browser, stack.url);
    await signIn(page, demo('author').email, demo('author').password);
    await page.goto(`/lab/figures/${DEMO_FIGURE_SLUG}`);
    await page.getByRole('heading', { name: 'One hundred thousand grains, square lattice' }).waitFor();
    await page.getByText('Publishing needs a ready print.').waitFor();
    expect(await page.getByRole('button', { name: 'Publish' }).isDisabled()).toBe(true);
    await screenshot(page, 'demo-figure-draft');
  });
});
