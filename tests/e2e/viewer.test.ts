import { describe, expect, test } from 'vitest';
import type { Page } from 'playwright-core';
import { DEMO_SIGN_INS } from '../../api/src/seed/demo.js';
import { apiCall, newPage, screenshot, signIn } from './browser.js';
import { useFarmInBrowser } from './farm-in-browser.js';

const author = DEMO_SIGN_INS.find((d) => d.role === 'author')!;
const otherLab = DEMO_SIGN_INS.find((d) => d.role === 'other lab')!;

async function submitRun(page: Page, title: string, spec: unknown): Promise<string> {
  const me = await apiCall<{ activeLabId: string }>(page, 'GET', '/api/me');
  const submitted = await apiCall<{ run: { id: string } }>(page, 'POST', '/api/runs', { labId: me.body.activeLabId, title, spec });
  expect(submitted.status).toBe(201);
  return submitted.body.run.id;
}

async function finished(page: Page, id: string): Promise<void> {
  await expect
    .poll(async () => (await apiCall<{ run: { status: string } }>(page, 'GET', `/api/runs/${id}`)).body.run.status, { timeout: 90_000, interval: 500 })
    .toBe('finished');
}

/** The place in the address: centre and cells across. */
const placeOf = (page: Page) => {
  const at = new URL(page.url()).searchParams.get('at');
  if (!at) return null;
  const [cx, cy, across] = at.split(',').map(Number) as [number, number, number];
  return { cx, cy, across };
};

/** The lattice cell under the middle of the first pane, as the readout gives it. */
async function cellAtCentre(page: Page): Promise<string> {
  const box = (await page.getByTestId('viewer-pane').first().boundingBox())!;
  await page.mouse.move(box.x + box.width / 2 - 3, box.y + box.height / 2 - 3);
  await page.mouse.move(box.x + box.width / 2, box.y + box.height / 2);
  return (await page.getByTestId('readout-lattice').textContent()) ?? '';
}

/**
 * The deep-zoom reader from a new reader's side: legends that can be read, a place that survives
 * switching layers and travels in the link, and the same "no run here" as the run page.
 */
describe('the deep-zoom viewer', () => {
  const farm = useFarmInBrowser({ demo: true });


  test('odometer ticks stay apart, the place is kept across layers and in the link, other labs see no run', { timeout: 180_000 }, async () => {
    const page = await newPage(farm.browser, farm.stack.url);
    await signIn(page, author.email, author.password);
    // on the line the origin topples T(500) = 125,250 times for n = 1000 (triangular numbers, OEIS A000217):
    // the last power of ten and the maximum sit 2 % of the ramp apart
    const line = await submitRun(page, 'Viewer check: a thousand grains on the line', { lattice: { preset: 'line' }, chips: 1000 });
    const square = await submitRun(page, 'Viewer check: thirty thousand grains', { lattice: { preset: 'square' }, chips: 30_000 });
    await finished(page, line);
    await finished(page, square);

    // 1. legend ticks: no two labels overlap, all under the ramp
    await page.goto(`/runs/${line}/view?layer=odometer`);
    await page.getByTestId('viewer-pane').first().locator('canvas').first().waitFor();
    const ticks = page.getByTestId('legend-ticks').locator('span');
    await ticks.first().waitFor();
    const boxes = await ticks.evaluateAll((els) => els.map((e) => ({ left: e.getBoundingClientRect().left, right: e.getBoundingClientRect().right, text: e.textContent })));
    const ramp = (await page.getByTestId('legend-ticks').boundingBox())!;
    expect(boxes.length).toBeGreaterThanOrEqual(3);
    boxes.forEach((b, i) => {
      expect(b.left).toBeGreaterThanOrEqual(ramp.x - 0.5);
      expect(b.right).toBeLessThanOrEqual(ramp.x + ramp.width + 0.5);
      if (i > 0) expect(b.left, `${boxes[i - 1]!.text} runs into ${b.text}`).toBeGreaterThan(boxes[i - 1]!.right + 1);
    });
    await screenshot(page, 'tour6-viewer-line-odometer');

    // 2. the place: close up at the origin, switch layers, reload, go back
    await page.goto(`/runs/${square}/view`);
    await page.getByTestId('viewer-pane').first().locator('canvas').first().waitFor();
    await page.getByRole('button', { name: 'Origin, single cells' }).click();
    await expect.poll(() => placeOf(page)?.across ?? Infinity).toBeLessThan(60);
    const close = placeOf(page)!;
    expect(Math.abs(close.cx)).toBeLessThan(0.5);
    expect(Math.abs(close.cy)).toBeLessThan(0.5);
    expect(await cellAtCentre(page)).toBe('(0, 0)');
    await screenshot(page, 'tour6-viewer-layerswitch-before');

    // zooming replaces the history entry rather than adding one per step
    const entries = await page.evaluate(() => history.length);
    await page.getByRole('button', { name: 'zoom out' }).click();
    await expect.poll(() => placeOf(page)!.across).toBeGreaterThan(close.across * 1.5);
    await page.getByRole('button', { name: 'zoom in' }).click();
    await expect.poll(() => placeOf(page)!.across).toBeLessThan(close.across * 1.1);
    expect(await page.evaluate(() => history.length)).toBe(entries);

    await page.getByLabel('Layer').selectOption('odometer');
    await page.waitForURL((u) => u.searchParams.get('layer') === 'odometer');
    await page.getByTestId('viewer-pane').first().locator('canvas').first().waitFor();
    await page.waitForTimeout(800);
    const after = placeOf(page)!;
    expect(after.across).toBeCloseTo(close.across, 0);
    expect(Math.abs(after.cx - close.cx)).toBeLessThan(0.5);
    expect(Math.abs(after.cy - close.cy)).toBeLessThan(0.5);
    expect(await cellAtCentre(page)).toBe('(0, 0)');
    await screenshot(page, 'tour6-viewer-layerswitch-after');

    // a copied link opens at the same place
    const link = page.url();
    const reader = await newPage(farm.browser, farm.stack.url);
    await signIn(reader, author.email, author.password);
    await reader.goto(link);
    await reader.getByTestId('viewer-pane').first().locator('canvas').first().waitFor();
    await reader.waitForTimeout(800);
    expect(placeOf(reader)!.across).toBeCloseTo(close.across, 0);
    expect(await cellAtCentre(reader)).toBe('(0, 0)');
    await screenshot(reader, 'tour6-viewer-shared-link');

    // Back undoes the layer choice and stays where the reader was
    await page.goBack();
    await page.waitForURL((u) => u.searchParams.get('layer') === null);
    await page.getByTestId('viewer-pane').first().locator('canvas').first().waitFor();
    await page.waitForTimeout(800);
    expect(await cellAtCentre(page)).toBe('(0, 0)');

    // 3. another lab's reader gets the run page's "no run at this address", not a missing view
    const other = await newPage(farm.browser, farm.stack.url);
    await signIn(other, otherLab.email, otherLab.password);
    await other.goto(`/runs/${square}/view`);
    await other.getByText('No run at this address').waitFor();
    // under the site's masthead, as the other not-found pages
    await other.getByRole('navigation', { name: 'main' }).waitFor();
    expect(await other.getByText('has not been drawn').count()).toBe(0);
    await screenshot(other, 'tour6-viewer-other-lab');

    // 4. a finished run's page and the page of a run out of reach open no event stream: nothing to follow
    // (both used to open one, the second answering 404 into the console)
    const streams: string[] = [];
    for (const p of [page, other]) p.on('request', (r) => void (r.url().endsWith('/events') && streams.push(r.url())));
    await page.goto(`/runs/${square}`);
    await page.getByRole('progressbar', { name: 'finished' }).waitFor();
    await other.goto(`/runs/${square}`);
    await other.getByText('No run at this address').waitFor();
    await page.waitForTimeout(500);
    expect(streams).toEqual([]);
  });
});
