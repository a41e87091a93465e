import { describe, expect, test } from 'vitest';
import type { Page } from 'playwright-core';
import { and, eq } from 'drizzle-orm';
import { memberships, users } from '../../drizzle/schema.js';
import { DEMO_SIGN_INS } from '../../api/src/seed/demo.js';
import { estimateRun } from '../../shared/estimate.js';
import { newRunSpecSchema } from '../../shared/run-spec.js';
import { apiCall, newPage, screenshot, signIn } from './browser.js';
import { useStackInBrowser } from './farm-in-browser.js';

const author = DEMO_SIGN_INS.find((d) => d.role === 'author')!;
const otherLab = DEMO_SIGN_INS.find((d) => d.role === 'other lab')!;

/** Click "Start run", wait for the API's answer with `status` and for the form to show it. */
async function submitAndSettle(page: Page, status: number): Promise<void> {
  const answered = page.waitForResponse((r) => r.request().method() === 'POST' && new URL(r.url()).pathname === '/api/runs');
  await page.getByRole('button', { name: 'Start run' }).click();
  expect((await answered).status()).toBe(status);
  // the button leaves its busy state in the render that shows the refusal
  await page.getByRole('button', { name: 'Start run' }).waitFor();
}

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
  const e2e = useStackInBrowser({ demo: true });

  test('n = 10^12: the estimate refuses it for its memory, not its cost, and so does the submit', async () => {
    const page = await newPage(e2e.browser, e2e.stack.url);
    await signIn(page, author.email, author.password);
    const refused = refusals(page);
    // the browser logs every 4xx fetch as "Failed to load resource": the estimate's answer must not be one
    const consoleErrors: string[] = [];
    page.on('console', (m) => {
      if (m.type() === 'error') consoleErrors.push(m.text());
    });
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
    // the estimate's answer is no failed request: nothing in the console until the submit is refused
    expect(consoleErrors).toEqual([]);

    await submitAndSettle(page, 400);
    // the estimate box already says why, in the words the submit's refusal has: said once, not twice
    expect(await page.getByRole('alert').filter({ hasText: 'of working memory' }).count()).toBe(1);
    expect(await page.locator('form[aria-label="new run"] aside > [role="alert"]').count()).toBe(0);
    // the click itself is answered by a pointer to that reason, not a second copy of it
    expect(await page.getByTestId('refused-as-above').textContent()).toBe('Not started: the check above says why.');
    expect(new URL(page.url()).pathname).toBe('/runs/new');
    await screenshot(page, 'run-form-huge-n-refused');
    // only the submit is refused: the estimate answered (200) that the farm cannot do it, and no side
    // request (a credit check) failed on the way
    expect([...new Set(refused)].sort()).toEqual(['POST /api/runs 400']);

    // a smaller n then goes through, and the old refusal does not linger
    await page.getByLabel('Grains at the origin (n)').fill('1000');
    await page.getByRole('button', { name: 'Start run' }).click();
    await page.waitForURL((u) => /^\/runs\/[0-9a-f-]{36}$/.test(u.pathname));
  });

  test('n = 1e20: the hint names the largest count accepted and why; a line\'s motif speaks of the line', async () => {
    const page = await newPage(e2e.browser, e2e.stack.url);
    await signIn(page, author.email, author.password);
    await page.goto('/runs/new');
    await page.getByLabel('Title').fill('Too many grains');
    const n = page.getByLabel('Grains at the origin (n)');
    await n.fill('1e20');
    // a number, only too large: not "a whole number of at least 1"
    await page.getByText('must be at most 9,007,199,254,740,991 (2⁵³\u00a0−\u00a01), the largest grain count held exactly').waitFor();
    expect(await page.getByText('a whole number of at least 1', { exact: false }).count()).toBe(0);
    await screenshot(page, 'tour8b-run-form-1e20');
    await n.fill('1000');

    // the motif field's words follow the lattice: the line has no rows
    await page.getByLabel('Lattice').selectOption('line');
    await page.getByLabel('Background').selectOption('motif');
    const motif = page.getByLabel('Motif: heights along the line (x mod their number), separated by spaces');
    await motif.waitFor();
    expect(await page.getByText(/y mod rows/).count()).toBe(0);
    // a motif of two rows: the second is said to be unused
    await motif.fill('1 0\n1 1');
    await page.getByText('the line repeats the first row only; the other row is not used').waitFor();
    await screenshot(page, 'tour8b-run-form-line-motif');
    await motif.fill('1 0');
    await expect.poll(() => page.getByText('the line repeats the first row only', { exact: false }).count()).toBe(0);
    await page.getByLabel('Lattice').selectOption('square');
    await page.getByLabel('Motif: one line per row (y mod rows), heights separated by spaces').waitFor();
  });

  test('n = 0 on the runs page: refused beside the field with the shared schema\'s message, nothing sent', async () => {
    const page = await newPage(e2e.browser, e2e.stack.url);
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

    // a refusal goes as soon as its field is edited, not at the next submit ("title is required" once
    // stayed under a title already typed); the other fields' refusals stay until they are edited
    const title = page.getByLabel('Title');
    await title.fill('');
    await page.getByRole('button', { name: 'Start run' }).click();
    await expect.poll(() => title.getAttribute('aria-invalid')).toBe('true');
    expect(await n.getAttribute('aria-invalid')).toBe('true');
    await title.fill('Some grains after all');
    await expect.poll(() => title.getAttribute('aria-invalid')).toBeNull();
    expect(await page.getByText('title is required').count()).toBe(0);
    expect(await n.getAttribute('aria-invalid')).toBe('true');
    await n.fill('1000');
    await expect.poll(() => n.getAttribute('aria-invalid')).toBeNull();
    await screenshot(page, 'run-form-refusals-fixed');
    expect(posted).toEqual([]);
  });

  test('background heights: errors on the field as typed, and a background that can never stabilize refused there, nothing sent', async () => {
    const page = await newPage(e2e.browser, e2e.stack.url);
    const posted: string[] = [];
    page.on('request', (r) => {
      if (r.method() === 'POST' && new URL(r.url()).pathname === '/api/runs') posted.push(r.url());
    });
    await signIn(page, author.email, author.password);
    await page.goto('/runs/new');
    await page.getByLabel('Title').fill('Background tests');
    await page.getByLabel('Grains at the origin (n)').fill('1000');
    const height = page.getByLabel('Height everywhere');
    const fieldError = async () => page.locator(`[id="${await height.getAttribute('aria-describedby')}"]`).textContent();
    for (const [typed, message, shot] of [['-1', 'must be at least 0', 'neg1'], ['2.5', 'enter a whole number', '2_5'], ['', 'enter a whole number', 'empty']] as const) {
      await height.fill(typed);
      await expect.poll(() => height.getAttribute('aria-invalid')).toBe('true');
      expect(await fieldError()).toBe(message);
      await page.getByTestId('estimate').getByText('Complete the form to see the size, time and cost.').waitFor();
      await screenshot(page, `run-form-bg-${shot}`);
    }

    // constant 3 on Z^2: every site one below its threshold 4, so the first grain never stops toppling
    await height.fill('3');
    await expect.poll(fieldError).toMatch(/^this constant background puts at least 3 grains on every site, and 3 is one below the toppling threshold 4 of every site of this lattice: .*never stops/);
    await page.getByTestId('estimate').getByText('Complete the form to see the size, time and cost.').waitFor();
    expect(await page.getByText('never stabilize').count()).toBe(0);
    await page.getByRole('button', { name: 'Start run' }).click();
    await screenshot(page, 'run-form-bg-3');
    expect(posted).toEqual([]);
    expect(new URL(page.url()).pathname).toBe('/runs/new');

    // a checkerboard of 3 and 2 might stabilize: accepted, with the estimator's soft warning
    await page.getByLabel('Background', { exact: true }).selectOption('checkerboard');
    await page.getByLabel('Height where x + y is even').fill('3');
    await page.getByLabel('Height where x + y is odd').fill('2');
    await page.getByTestId('estimate').getByText(/the mean background height 2\.5 is above 2; the pile may grow much faster than expected or never stabilize/).waitFor();
    expect(await page.getByLabel('Height where x + y is even').getAttribute('aria-invalid')).toBeNull();
    await screenshot(page, 'run-form-bg-checkerboard-3-2');
  });

  test('over the quota and short of credits: each refusal said once, in whole sentences, with the credits page as a link', async () => {
    const page = await newPage(e2e.browser, e2e.stack.url);
    await signIn(page, author.email, author.password);
    // a quota with one credit left this month, and a run that costs more; set before the form opens,
    // whose default of 10^6 grains would otherwise fetch (and cache) the credit check under the old quota
    const spec = newRunSpecSchema.parse({ lattice: { preset: 'square' }, chips: 1_000_000 });
    expect(estimateRun(spec).credits).toBeGreaterThanOrEqual(2);
    const me = await apiCall<{ activeLabId: string; user: { id: string } }>(page, 'GET', '/api/me');
    const summary = await apiCall<{ me: { usedThisMonth: number } }>(page, 'GET', `/api/labs/${me.body.activeLabId}/credits`);
    const [row] = await e2e.stack.deps.db.select({ id: users.id }).from(users).where(eq(users.email, author.email));
    await e2e.stack.deps.db.update(memberships).set({ monthlyQuota: summary.body.me.usedThisMonth + 1 }).where(and(eq(memberships.labId, me.body.activeLabId), eq(memberships.userId, row!.id)));
    await page.goto('/runs/new');

    await page.getByLabel('Title').fill('Over the quota');
    await page.getByLabel('Grains at the origin (n)').fill('10^6');
    const gate = page.getByTestId('credit-check');
    await expect.poll(() => gate.textContent()).toMatch(/^Not accepted now: this job needs \d+ credits but only 1 credit of your monthly quota of [\d,]+ is left \(\d+ over\); ask a lab manager to raise it\. $/);
    await submitAndSettle(page, 402);
    expect(await page.getByText(/only 1 credit of your monthly quota/).count()).toBe(1);
    // the click is answered beside the button, pointing at the reason rather than repeating it
    expect(await page.getByTestId('refused-as-above').textContent()).toBe('Not started: the check above says why.');
    await screenshot(page, 'run-form-over-quota-submit');

    // the other lab has spent its small allowance and its paid credits
    const other = await newPage(e2e.browser, e2e.stack.url);
    await signIn(other, otherLab.email, otherLab.password);
    await other.goto('/runs/new');
    await other.getByLabel('Title').fill('Other lab try');
    await other.getByLabel('Grains at the origin (n)').fill('1000');
    const otherGate = other.getByTestId('credit-check');
    // this demo user manages the other lab, so the gate tells them, not some other manager, to buy
    await expect.poll(() => otherGate.textContent()).toMatch(/credits? (is|are) missing; you can buy more on the lab's credits page\. Buy credits$/);
    expect(await otherGate.textContent()).not.toContain('/lab/credits');
    const otherMe = await apiCall<{ activeLabId: string }>(other, 'GET', '/api/me');
    expect(await otherGate.getByRole('link', { name: 'Buy credits' }).getAttribute('href')).toBe(`/lab/credits?labId=${otherMe.body.activeLabId}`);
    await submitAndSettle(other, 402);
    expect(await other.getByText(/missing; you can buy more/).count()).toBe(1);
    await other.getByTestId('refused-as-above').waitFor();
    await screenshot(other, 'run-form-other-lab-no-credits');
  });
});
