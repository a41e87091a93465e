import { describe, expect, test } from 'vitest';
import type { Page } from 'playwright-core';
import { DEMO_SIGN_INS } from '../../api/src/seed/demo.js';
import { newPage, screenshot, signIn } from './browser.js';
import { useStackInBrowser } from './farm-in-browser.js';

const TABLET = { width: 768, height: 1024 };
const LAPTOP = { width: 1280, height: 800 };

interface FrameState {
  overflows: boolean;
  atEnd: boolean;
  cue: boolean;
}

/** Every wide-table frame on the page: whether its table is wider than it, scrolled to its end, and whether its cue is seen. */
function frames(page: Page): Promise<FrameState[]> {
  return page.locator('[data-scroll-frame]').evaluateAll((els) =>
    els.map((el) => {
      const scroller = el.firstElementChild as HTMLElement;
      const cue = el.querySelector('[data-testid="more-to-the-right"]')!;
      const style = getComputedStyle(cue);
      return {
        overflows: scroller.scrollWidth > scroller.clientWidth,
        atEnd: scroller.scrollLeft + scroller.clientWidth >= scroller.scrollWidth - 1,
        cue: style.visibility === 'visible' && Number(style.opacity) > 0.5,
      };
    }),
  );
}

/** The cue is seen on exactly the frames that hide columns to the right (after its 150 ms fade). */
async function expectCuesWhereColumnsHide(page: Page, name: string) {
  await expect.poll(async () => (await frames(page)).every((f) => f.cue === (f.overflows && !f.atEnd)), { message: name, timeout: 5_000 }).toBe(true);
}

/**
 * Wide tables on a tablet scroll inside their own frame; while columns are hidden past its right
 * edge the frame says so with a soft fade there, and only then.
 */
describe('the cue on wide tables', { timeout: 90_000 }, () => {
  const e2e = useStackInBrowser({ demo: true });

  test('at 768 px the runs table shows it until scrolled to its last column; at 1,280 px it never shows', async () => {
    const author = DEMO_SIGN_INS.find((s) => s.role === 'author')!;
    const page = await newPage(e2e.browser, e2e.stack.url);
    await page.setViewportSize(TABLET);
    await signIn(page, author.email, author.password);
    await page.goto('/runs');
    const table = page.getByRole('table', { name: 'runs' });
    await table.locator('tbody tr').first().waitFor();
    const frame = page.locator('[data-scroll-frame]').filter({ has: table });
    const scroller = frame.locator('> div').first();
    const cue = frame.getByTestId('more-to-the-right');

    expect(await scroller.evaluate((el) => el.scrollWidth > el.clientWidth)).toBe(true);
    await expect.poll(() => cue.isVisible()).toBe(true);
    // the cue sits on the frame's right edge and lets clicks through to the table
    const [f, c] = [(await frame.boundingBox())!, (await cue.boundingBox())!];
    expect(Math.abs(c.x + c.width - (f.x + f.width))).toBeLessThanOrEqual(1);
    expect(c.height).toBeGreaterThanOrEqual(f.height - 2);
    expect(await cue.evaluate((el) => getComputedStyle(el).pointerEvents)).toBe('none');
    await screenshot(page, 'table-cue-768-runs');

    // part way along: still more to come
    await scroller.evaluate((el) => el.scrollTo({ left: 20 }));
    await page.waitForTimeout(300);
    expect(await cue.isVisible()).toBe(true);
    // at the last column the cue goes; back to the start it returns
    await scroller.evaluate((el) => el.scrollTo({ left: el.scrollWidth }));
    await expect.poll(() => cue.isVisible()).toBe(false);
    await screenshot(page, 'table-cue-768-runs-scrolled-to-end');
    await scroller.evaluate((el) => el.scrollTo({ left: 0 }));
    await expect.poll(() => cue.isVisible()).toBe(true);

    // a laptop window: the table fits and the cue goes without a scroll, by the frame's size alone
    await page.setViewportSize(LAPTOP);
    await expect.poll(() => cue.isVisible()).toBe(false);
    expect(await scroller.evaluate((el) => el.scrollWidth > el.clientWidth)).toBe(false);
    await page.reload();
    await table.locator('tbody tr').first().waitFor();
    await page.waitForTimeout(300);
    expect(await cue.isVisible()).toBe(false);
    await screenshot(page, 'table-cue-1280-runs');
  });

  test('every wide table of the signed-in pages follows the same rule', async () => {
    const visits: { role: 'author' | 'manager' | 'admin'; path: string; ready: (p: Page) => ReturnType<Page['locator']> }[] = [
      { role: 'author', path: '/lab/figures', ready: (p) => p.locator('[data-scroll-frame] tbody tr') },
      { role: 'manager', path: '/lab', ready: (p) => p.getByRole('table', { name: 'lab members' }).locator('tbody tr') },
      { role: 'manager', path: '/lab/credits', ready: (p) => p.getByRole('table', { name: 'purchases' }).locator('tbody tr') },
      { role: 'admin', path: '/admin?tab=usage', ready: (p) => p.getByRole('table', { name: 'lab usage' }).locator('tbody tr') },
      { role: 'admin', path: '/admin?tab=audit', ready: (p) => p.getByRole('table', { name: 'audit trail' }).locator('tbody tr') },
    ];
    let overflowing = 0;
    for (const role of ['author', 'manager', 'admin'] as const) {
      const who = DEMO_SIGN_INS.find((s) => s.role === role)!;
      const page = await newPage(e2e.browser, e2e.stack.url);
      await page.setViewportSize(TABLET);
      await signIn(page, who.email, who.password);
      for (const v of visits.filter((x) => x.role === role)) {
        await page.goto(v.path);
        await v.ready(page).first().waitFor();
        await expectCuesWhereColumnsHide(page, `${role} ${v.path} at 768 px`);
        overflowing += (await frames(page)).filter((f) => f.overflows).length;
        await page.setViewportSize(LAPTOP);
        await expectCuesWhereColumnsHide(page, `${role} ${v.path} at 1,280 px`);
        expect((await frames(page)).some((f) => f.cue), `${role} ${v.path} at 1,280 px`).toBe(false);
        await page.setViewportSize(TABLET);
      }
      await page.context().close();
    }
    // the rule was put to the test on tables that do overflow at 768 px, not only on ones that fit
    expect(overflowing).toBeGreaterThan(0);
  });
});
