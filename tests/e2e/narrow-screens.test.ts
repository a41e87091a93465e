import { beforeAll, describe, expect, test } from 'vitest';
import type { Locator, Page } from 'playwright-core';
import { DEMO_FIGURE_SLUG, DEMO_SIGN_INS, type DemoSignIn } from '../../api/src/seed/demo.js';
import { startingComposition } from '../../shared/print-spec.js';
import { apiCall, newPage, screenshot, signIn } from './browser.js';
import { useFarmInBrowser } from './farm-in-browser.js';
import { expectNoSidewaysScroll } from './sideways.js';

/** A tablet held upright, and the narrowest the signed-in pages are laid out for (styles.css: 768 px less a desktop scrollbar). */
const TABLET = { width: 768, height: 1024 };
const NARROWEST = 720;
const FIGURE_SLUG = 'four-thousand-grains-on-a-tablet';

type Visit = { name: string; path: string; ready: (page: Page) => Locator };

/**
 * The signed-in pages on a tablet: each demo role visits every page of its role at 768 px across with
 * the farm's real results on them (finished runs with plots, a series, a printed figure, a receipt),
 * and nothing scrolls the page sideways; wide tables scroll inside their own frame instead.
 */
describe('signed-in pages at 768 px', { timeout: 120_000 }, () => {
  const farm = useFarmInBrowser({ demo: true });
  const author = DEMO_SIGN_INS.find((s) => s.role === 'author')!;
  let runId = '';
  let seriesId = '';
  let labId = '';

  beforeAll(async () => {
    // the demo's own runs stay queued here (this file's worker takes only its own prefix's jobs), so the
    // finished pages come from a small series of the author's, computed and drawn by the farm, and a
    // figure of its larger run, printed
    const page = await newPage(farm.browser, farm.stack.url);
    await signIn(page, author.email, author.password);
    labId = (await apiCall<{ activeLabId: string }>(page, 'GET', '/api/me')).body.activeLabId;
    const series = await apiCall<{ series: { id: string; runs: { id: string }[] } }>(page, 'POST', '/api/series', {
      labId, title: 'Square lattice at one and four thousand grains', spec: { lattice: { preset: 'square' } }, chips: [1000, 4000],
    });
    expect(series.status).toBe(201);
    seriesId = series.body.series.id;
    runId = series.body.series.runs.at(-1)!.id;
    // expect.poll belongs to tests, not hooks: wait here by hand, then say where things stood
    const waitFor = async <T,>(look: () => Promise<T>, done: (t: T) => boolean) => {
      const deadline = Date.now() + 240_000;
      let now = await look();
      while (!done(now) && Date.now() < deadline) {
        await page.waitForTimeout(1000);
        now = await look();
      }
      return now;
    };
    const runStatuses = () => Promise.all(series.body.series.runs.map(async (r) => (await apiCall<{ run: { status: string } }>(page, 'GET', `/api/runs/${r.id}`)).body.run.status));
    expect(await waitFor(runStatuses, (ss) => ss.every((s) => s === 'finished'))).toEqual(['finished', 'finished']);

    const figure = await apiCall<{ figure: { slug: string } }>(page, 'POST', '/api/figures', { labId, title: 'Four thousand grains on a tablet', slug: FIGURE_SLUG, spec: startingComposition(runId) });
    expect(figure.status).toBe(201);
    expect((await apiCall(page, 'POST', `/api/figures/${FIGURE_SLUG}/versions`, {})).status).toBe(202);
    const printStatus = async () => (await apiCall<{ figure: { versions: { status: string }[] } }>(page, 'GET', `/api/figures/${FIGURE_SLUG}`)).body.figure.versions[0]?.status;
    expect(await waitFor(printStatus, (s) => s === 'ready' || s === 'failed')).toBe('ready');
    await page.context().close();
  }, 600_000);

  /** Opens each page at 768 px, waits for its content, and checks that the page itself never scrolls sideways. */
  async function visitAll(role: DemoSignIn['role'], visits: Visit[], page?: Page) {
    const who = DEMO_SIGN_INS.find((s) => s.role === role)!;
    page ??= await newPage(farm.browser, farm.stack.url);
    await page.setViewportSize(TABLET);
    await signIn(page, who.email, who.password);
    for (const v of visits) {
      await page.goto(v.path);
      await v.ready(page).first().waitFor({ timeout: 30_000 });
      // charts and pictures settle their size after the first paint
      await page.waitForTimeout(400);
      await expectNoSidewaysScroll(page, `${role} ${v.name}`, TABLET.width);
      await screenshot(page, `narrow-768-${role.replace(' ', '-')}-${v.name}`);
      // the stated minimum holds too: a 768 px window that spends some of its width on a scrollbar
      await page.setViewportSize({ width: NARROWEST, height: TABLET.height });
      await page.waitForTimeout(200);
      await expectNoSidewaysScroll(page, `${role} ${v.name} at ${NARROWEST} px`, NARROWEST);
      await page.setViewportSize(TABLET);
    }
    return page;
  }

  test('an author: runs, a new run, a finished run and its deep zoom, a series, the lab, figures, the composer, credits, account', async () => {
    const page = await visitAll('author', [
      { name: 'runs', path: '/runs', ready: (p) => p.getByRole('table', { name: 'runs' }).locator('tbody tr') },
      { name: 'new-run', path: '/runs/new', ready: (p) => p.getByTestId('estimate-credits') },
      { name: 'run', path: `/runs/${runId}`, ready: (p) => p.getByTestId('plot-heights').locator('.recharts-bar-rectangle') },
      { name: 'viewer', path: `/runs/${runId}/view`, ready: (p) => p.getByTestId('viewer-pane').locator('canvas') },
      { name: 'viewer-two-panes', path: `/runs/${runId}/view?with=layer:odometer`, ready: (p) => p.getByTestId('viewer-pane').nth(1).locator('canvas') },
      { name: 'series', path: `/series/${seriesId}`, ready: (p) => p.getByTestId('series-strip').locator('img') },
      { name: 'lab', path: '/lab', ready: (p) => p.getByRole('table', { name: 'lab members' }).getByText('Maren Tollis') },
      { name: 'lab-figures', path: '/lab/figures', ready: (p) => p.getByRole('link', { name: 'Four thousand grains on a tablet' }) },
      { name: 'figure', path: `/lab/figures/${FIGURE_SLUG}`, ready: (p) => p.getByTestId('version-1-status').getByText('ready') },
      { name: 'figure-draft', path: `/lab/figures/${DEMO_FIGURE_SLUG}`, ready: (p) => p.getByText('Publishing needs a ready print.') },
      { name: 'composer', path: `/lab/figures/${FIGURE_SLUG}/edit`, ready: (p) => p.getByRole('heading', { name: 'Proof' }) },
      { name: 'new-figure', path: '/figures/new', ready: (p) => p.getByTestId('panel-0') },
      { name: 'credits', path: '/lab/credits', ready: (p) => p.getByRole('table', { name: 'usage per month and member' }).locator('tbody tr') },
      { name: 'account', path: '/account', ready: (p) => p.getByRole('heading', { name: 'Personal API tokens' }) },
    ]);

    // the masthead keeps to one line: the lab switcher stays, narrower; the name waits for a laptop
    await page.goto('/runs');
    await page.getByRole('table', { name: 'runs' }).locator('tbody tr').first().waitFor();
    expect((await page.locator('header').boundingBox())!.height).toBeLessThanOrEqual(65);
    await page.getByLabel('active lab').waitFor();
    expect(await page.getByTestId('signed-in-name').isVisible()).toBe(false);
    // the runs table is wider than the tablet: it scrolls inside its frame, and its last column can be reached there
    const frame = page.getByRole('table', { name: 'runs' }).locator('..');
    expect(await frame.evaluate((el) => el.scrollWidth > el.clientWidth && getComputedStyle(el).overflowX === 'auto')).toBe(true);
    // the form opened from the list fits as well: the estimate falls below the fields rather than beside them
    await page.getByRole('button', { name: 'New run' }).click();
    await page.getByTestId('estimate-credits').waitFor();
    await expectNoSidewaysScroll(page, 'author runs with the new-run form', TABLET.width);
    const form = page.locator('form[aria-label="new run"]');
    const fields = (await form.getByLabel('Title').boundingBox())!;
    const estimate = (await page.getByTestId('estimate').boundingBox())!;
    expect(estimate.y).toBeGreaterThan(fields.y + fields.height);
    await screenshot(page, 'narrow-768-author-runs-new-run-form');

    // a run page's two columns fall to one below a laptop's width, and come back at 1,024 px
    await page.goto(`/runs/${runId}`);
    const specification = page.getByRole('heading', { name: 'Specification' });
    const statistics = page.getByRole('heading', { name: 'Statistics' });
    await statistics.waitFor();
    expect((await statistics.boundingBox())!.y).toBeGreaterThan((await specification.boundingBox())!.y + 100);
    await page.setViewportSize({ width: 1024, height: 800 });
    await expect.poll(async () => (await statistics.boundingBox())!.y).toBe((await specification.boundingBox())!.y);
  });

  test('a lab manager: the lab with its invitations, credits with packs and purchases, a receipt, the runs', async () => {
    const page = await visitAll('manager', [
      { name: 'lab', path: '/lab', ready: (p) => p.getByRole('heading', { name: 'Pending invitations' }) },
      { name: 'credits', path: '/lab/credits', ready: (p) => p.getByRole('table', { name: 'purchases' }).locator('tbody tr') },
      { name: 'runs', path: '/runs', ready: (p) => p.getByRole('table', { name: 'runs' }).locator('tbody tr') },
    ]);
    // the receipt of the demo lab's purchase, reached from the purchases table as a manager would
    await page.goto('/lab/credits');
    await page.getByRole('table', { name: 'purchases' }).getByRole('link', { name: 'Receipt' }).first().click();
    await page.getByRole('heading', { level: 1, name: /^TW-\d{6}$/ }).waitFor();
    await expectNoSidewaysScroll(page, 'manager receipt', TABLET.width);
    await screenshot(page, 'narrow-768-manager-receipt');
  });

  test('a site admin: every tab of the console, and one lab in detail', async () => {
    await visitAll('admin', [
      { name: 'admin-overview', path: '/admin', ready: (p) => p.getByRole('heading', { name: 'Needs attention' }) },
      { name: 'admin-usage', path: '/admin?tab=usage', ready: (p) => p.getByRole('table', { name: 'lab usage' }).locator('tbody tr') },
      { name: 'admin-usage-lab', path: `/admin?tab=usage&lab=${labId}`, ready: (p) => p.getByTestId('lab-detail').getByRole('form', { name: 'grant or revoke credits' }) },
      { name: 'admin-farm', path: '/admin?tab=farm', ready: (p) => p.getByRole('heading', { name: 'Workers' }) },
      { name: 'admin-storage', path: '/admin?tab=storage', ready: (p) => p.getByRole('heading', { name: 'Storage per lab' }) },
      { name: 'admin-audit', path: '/admin?tab=audit', ready: (p) => p.getByRole('table', { name: 'audit trail' }).locator('tbody tr') },
    ]);
  });
});
