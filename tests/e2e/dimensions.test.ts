import sharp from 'sharp';
import { describe, expect, test } from 'vitest';
import type { Page } from 'playwright-core';
import { DEMO_SIGN_INS } from '../../api/src/seed/demo.js';
import { apiCall, newPage, screenshot, signIn } from './browser.js';
import { useFarmInBrowser } from './farm-in-browser.js';

const author = DEMO_SIGN_INS.find((d) => d.role === 'author')!;

async function activeLab(page: Page): Promise<string> {
  return (await apiCall<{ activeLabId: string }>(page, 'GET', '/api/me')).body.activeLabId;
}

async function finished(page: Page, id: string): Promise<void> {
  await expect
    .poll(async () => (await apiCall<{ run: { status: string } }>(page, 'GET', `/api/runs/${id}`)).body.run.status, { timeout: 120_000, interval: 500 })
    .toBe('finished');
}

/** Rows of the pane, at its middle column, that are not the viewer's dark ground: how tall the pile is drawn on screen. */
async function drawnRows(page: Page): Promise<number> {
  const png = await page.getByTestId('viewer-pane').first().screenshot();
  const { data, info } = await sharp(png).raw().toBuffer({ resolveWithObject: true });
  const x = Math.floor(info.width / 2);
  const ground = [...data.subarray(0, info.channels).slice(0, 3)];
  let rows = 0;
  for (let y = 0; y < info.height; y++) {
    const o = (y * info.width + x) * info.channels;
    if (Math.abs(data[o]! - ground[0]!) + Math.abs(data[o + 1]! - ground[1]!) + Math.abs(data[o + 2]! - ground[2]!) > 30) rows++;
  }
  return rows;
}

/** Piles of dimension 1 and 3 read as what they are: a line drawn as a band, a cube shown by a named slice and rescaled by ∛n. */
describe('lattices of dimension 1 and 3', () => {
  const farm = useFarmInBrowser({ demo: true });

  test('the line is a band, the cubic pile names its slice in the viewer, the series, the composer and the proof', { timeout: 240_000 }, async () => {
    const page = await newPage(farm.browser, farm.stack.url);
    await signIn(page, author.email, author.password);
    const labId = await activeLab(page);
    const line = (await apiCall<{ run: { id: string } }>(page, 'POST', '/api/runs', { labId, title: 'Dimensions: a thousand grains on the line', spec: { lattice: { preset: 'line' }, chips: 1000 } })).body.run.id;
    const series = await apiCall<{ series: { id: string; runs: { id: string }[] } }>(page, 'POST', '/api/series', {
      labId,
      title: 'Dimensions: cubic piles',
      spec: { lattice: { preset: 'cubic' } },
      chips: [300, 1000, 3000],
    });
    expect(series.status).toBe(201);
    await finished(page, line);
    for (const r of series.body.series.runs) await finished(page, r.id);
    const cube = series.body.series.runs.at(-1)!.id;

    // the line: drawn one pixel high it would cover a row or two of the pane; as a band, a good part of it
    await page.goto(`/runs/${line}/view`);
    await page.getByTestId('viewer-pane').first().locator('canvas').first().waitFor();
    await page.waitForTimeout(1500);
    expect(await drawnRows(page)).toBeGreaterThan(40);
    await screenshot(page, 'dim-line-viewer');
    await page.goto(`/runs/${line}`);
    await page.getByTestId('plot-radial').waitFor();
    await screenshot(page, 'dim-line-run');

    // the cube: the view says which slice it is
    await page.goto(`/runs/${cube}/view`);
    await expect.poll(async () => page.getByTestId('viewer-slice').first().textContent(), { timeout: 30_000 }).toContain('slice z = 0 of a 3-D pile');
    await page.waitForTimeout(1000);
    await screenshot(page, 'dim-cube-viewer');

    // the series: rescaled and fitted by ∛n, never √n
    await page.goto(`/series/${series.body.series.id}`);
    await page.getByTestId('plot-series-radius').waitFor();
    const seriesText = (await page.locator('main').textContent()) ?? '';
    expect(seriesText).toContain('rescaled by ∛n');
    expect(seriesText).toContain('slice z = 0 of a 3-D pile');
    expect(seriesText).not.toContain('√n');
    await screenshot(page, 'dim-cube-series');

    // the composer: the rescaled unit is x/∛n and the proof's caption names the slice
    await page.goto(`/figures/new?run=${cube}`);
    await page.getByTestId('proof').waitFor();
    expect(await page.locator('option[value="rescaled"]').allTextContents()).toEqual(['the same rescaled unit x/∛n', 'in rescaled units x/∛n']);
    await expect.poll(async () => (await page.getByTestId('proof').textContent()) ?? '', { timeout: 20_000 }).toContain('Slice z = 0 of a 3-D pile.');
    // the proof's picture is the stored full-size image (a small pile's whole image is its largest advertised size)
    await expect.poll(async () => page.getByTestId('proof').locator('image').first().evaluate((el) => fetch((el as SVGImageElement).href.baseVal).then((r) => r.status)), { timeout: 20_000 }).toBe(200);
    await screenshot(page, 'dim-cube-compose');

    // the line's proof: a band; its region is given along the line only
    await page.goto(`/figures/new?run=${line}`);
    await page.getByTestId('proof').waitFor();
    await expect.poll(async () => page.getByTestId('proof').locator('image').first().evaluate((el) => fetch((el as SVGImageElement).href.baseVal).then((r) => r.status)), { timeout: 20_000 }).toBe(200);
    const composer = await page.locator('main').textContent();
    expect(composer).toContain('x −500..500');
    expect(composer).not.toContain('y 0..0');
    await screenshot(page, 'dim-line-compose');
  });
});
