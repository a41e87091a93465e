import { beforeAll, describe, expect, test } from 'vitest';
import type { Page } from 'playwright-core';
import { DEMO_SIGN_INS } from '../../api/src/seed/demo.js';
import { apiCall, screenshot, signIn } from './browser.js';
import { useFarmInBrowser } from './farm-in-browser.js';
import { expectNoSidewaysScroll } from './sideways.js';

/** A phone held upright, touch and all (web/CONTEXT.md "screen widths"). */
const PHONE = { width: 390, height: 844 };

/**
 * What a researcher checks from a phone while a long run computes: signing in, the runs, a run's page
 * (waiting, and finished with its certificate) and its deep zoom. At 390 px none of them scrolls the
 * page sideways, and the masthead's menu reaches every section.
 */
describe('the pages a researcher needs on a phone, at 390 px', { timeout: 180_000 }, () => {
  const farm = useFarmInBrowser({ demo: true });
  const author = DEMO_SIGN_INS.find((s) => s.role === 'author')!;
  let finishedId = '';
  let queuedId = '';

  beforeAll(async () => {
    // the demo's runs stay queued here (this file's worker takes only its own prefix's jobs): one of them is
    // the waiting run, and a small run of the author's, computed and drawn by the farm, is the finished one
    const page = await phonePage();
    await signIn(page, author.email, author.password);
    const labId = (await apiCall<{ activeLabId: string }>(page, 'GET', '/api/me')).body.activeLabId;
    const made = await apiCall<{ run: { id: string } }>(page, 'POST', '/api/runs', { labId, title: 'A thousand grains checked from a phone', spec: { lattice: { preset: 'square' }, chips: 1000 } });
    expect(made.status).toBe(201);
    finishedId = made.body.run.id;
    const listed = await apiCall<{ runs: { id: string; status: string }[] }>(page, 'GET', `/api/runs?labId=${labId}&status=queued`);
    queuedId = listed.body.runs.find((r) => r.id !== finishedId)!.id;
    const status = async () => (await apiCall<{ run: { status: string } }>(page, 'GET', `/api/runs/${finishedId}`)).body.run.status;
    const deadline = Date.now() + 240_000;
    let now = await status();
    while (now !== 'finished' && now !== 'failed' && Date.now() < deadline) {
      await page.waitForTimeout(1000);
      now = await status();
    }
    expect(now).toBe('finished');
    await page.context().close();
  }, 300_000);

  /** A fresh phone: its own cookies, a finger rather than a mouse, uncaught errors failing the test. */
  async function phonePage(): Promise<Page> {
    const context = await farm.browser.newContext({ baseURL: farm.stack.url, viewport: PHONE, hasTouch: true, isMobile: true });
    const page = await context.newPage();
    page.on('pageerror', (err) => {
      throw err;
    });
    return page;
  }

  test('signing in, the runs as stacked rows, and the masthead menu reaching each section', async () => {
    const page = await phonePage();
    await page.goto('/sign-in');
    await page.getByLabel('E-mail').waitFor();
    await expectNoSidewaysScroll(page, 'sign-in', PHONE.width);
    await screenshot(page, 'phone-390-sign-in');
    await signIn(page, author.email, author.password, '/runs');

    // one stacked row per run, the waiting run's state among them; the order is a select instead of the table's headings
    const rows = page.getByRole('list', { name: 'runs' }).getByTestId('run-row');
    await rows.first().waitFor();
    expect(await page.getByRole('table', { name: 'runs' }).count()).toBe(0);
    await page.getByTestId('run-row').filter({ hasText: 'A thousand grains checked from a phone' }).getByText('finished').waitFor();
    expect(await rows.filter({ hasText: 'waiting' }).count()).toBeGreaterThan(0);
    await page.waitForTimeout(400);
    await expectNoSidewaysScroll(page, 'runs', PHONE.width);
    await screenshot(page, 'phone-390-runs');
    await page.getByLabel('Order').selectOption({ label: 'title, A to Z' });
    await page.waitForURL((u) => u.searchParams.get('sort') === 'title' && u.searchParams.get('order') === 'asc');
    await expect.poll(() => rows.first().getByRole('link').textContent()).toBe('A thousand grains checked from a phone');

    // the masthead keeps to one line: the row of sections folds into a menu, which reaches each of them
    expect((await page.locator('header').boundingBox())!.height).toBeLessThanOrEqual(65);
    expect(await page.getByRole('link', { name: 'Lab', exact: true }).count()).toBe(0);
    const menu = page.getByRole('button', { name: 'Menu' });
    await menu.tap();
    expect(await menu.getAttribute('aria-expanded')).toBe('true');
    const nav = page.getByRole('navigation', { name: 'main' });
    expect(await nav.getByRole('link').allTextContents()).toEqual(['Runs', 'Figures', 'Lab']);
    await page.getByRole('combobox', { name: 'active lab' }).waitFor();
    await expectNoSidewaysScroll(page, 'runs with the menu open', PHONE.width);
    await screenshot(page, 'phone-390-menu');
    // Escape closes it; a link followed closes it too, on the page it leads to
    await page.keyboard.press('Escape');
    await nav.waitFor({ state: 'detached' });
    await menu.tap();
    await nav.getByRole('link', { name: 'Figures' }).tap();
    await page.waitForURL('**/figures');
    await nav.waitFor({ state: 'detached' });
    await menu.tap();
    await nav.getByRole('link', { name: 'Runs' }).tap();
    await page.waitForURL((u) => u.pathname === '/runs');
    await rows.first().waitFor();
    // the form's columns need a tablet: on a phone "New run" opens its own page
    await page.getByRole('link', { name: 'New run' }).tap();
    await page.waitForURL('**/runs/new');
    await page.getByTestId('estimate-credits').waitFor();
  });

  test('a waiting run and a finished run: status, progress, certificate, facts and actions, then its deep zoom by touch', async () => {
    const page = await phonePage();
    await signIn(page, author.email, author.password, `/runs/${queuedId}`);
    await page.getByRole('heading', { name: 'Waiting for a worker' }).waitFor();
    await page.getByRole('progressbar').waitFor();
    await page.getByText('estimating time left').waitFor();
    await page.getByRole('button', { name: 'Cancel run' }).waitFor();
    await expectNoSidewaysScroll(page, 'waiting run', PHONE.width);
    await screenshot(page, 'phone-390-run-waiting');

    await page.goto(`/runs/${finishedId}`);
    await page.getByTestId('run-certificate').waitFor();
    await page.getByTestId('plot-heights').locator('.recharts-bar-rectangle').first().waitFor();
    await page.getByText(/^finished · 100\s?%$/).waitFor();
    await page.getByRole('heading', { name: 'Specification' }).waitFor();
    await page.waitForTimeout(400);
    await expectNoSidewaysScroll(page, 'finished run', PHONE.width);
    await screenshot(page, 'phone-390-run-finished');
    // the certificate's verdict keeps to one line above its sentence
    const verdict = page.getByTestId('run-certificate').getByText('Certified exact', { exact: true });
    expect((await verdict.boundingBox())!.height).toBeLessThan(30);

    await page.getByRole('link', { name: 'Deep zoom' }).tap();
    const pane = page.getByTestId('viewer-pane');
    await pane.locator('canvas').waitFor();
    await page.waitForTimeout(600);
    await expectNoSidewaysScroll(page, 'deep zoom', PHONE.width);
    // shorter than the screen, so the downloads below can be reached with a finger
    const box = (await pane.boundingBox())!;
    expect(box.width).toBeGreaterThan(PHONE.width - 2);
    expect(box.y + box.height).toBeLessThan(PHONE.height);
    await screenshot(page, 'phone-390-viewer');
    // a finger has no hover: a tap on the pile reads the cell under it
    await page.touchscreen.tap(box.x + box.width / 2, box.y + box.height / 2);
    await expect.poll(() => page.getByTestId('readout-height').textContent(), { timeout: 10_000 }).toMatch(/^\d+ grains?$/);
    expect(await page.getByTestId('readout-lattice').textContent()).toMatch(/-?\d/);

    // two panes stand one above the other, each the screen's width
    await page.goto(`/runs/${finishedId}/view?with=layer:odometer`);
    await pane.nth(1).locator('canvas').waitFor();
    await page.waitForTimeout(600);
    await expectNoSidewaysScroll(page, 'deep zoom with two panes', PHONE.width);
    const [top, bottom] = [(await pane.nth(0).boundingBox())!, (await pane.nth(1).boundingBox())!];
    expect(bottom.y).toBeGreaterThanOrEqual(top.y + top.height);
    expect(bottom.width).toBeGreaterThan(PHONE.width - 2);
    await screenshot(page, 'phone-390-viewer-two-panes');
  });
});
