import { describe, expect, test } from 'vitest';
import type { Page } from 'playwright-core';
import sharp from 'sharp';
import { DEMO_SIGN_INS } from '../../api/src/seed/demo.js';
import { readNpy } from '../../renderer/src/npy/read.js';
import { DIFFERENCE_NEEDS_BACKGROUND } from '../../shared/run-spec.js';
import { hexToRgba, paletteById } from '../../shared/palettes.js';
import { newPage, screenshot, signIn } from './browser.js';
import { useFarmInBrowser } from './farm-in-browser.js';

const author = DEMO_SIGN_INS.find((d) => d.role === 'author')!;

async function centrePixel(png: Buffer): Promise<string> {
  const img = sharp(png);
  const { width, height } = await img.metadata();
  const { data, info } = await img.removeAlpha().raw().toBuffer({ resolveWithObject: true });
  const at = (Math.floor(height! / 2) * info.width + Math.floor(width! / 2)) * info.channels;
  return [data[at]!, data[at + 1]!, data[at + 2]!].join(',');
}

async function fetchJson(page: Page, path: string): Promise<{ status: number; body: unknown }> {
  return page.evaluate(async (p) => {
    const res = await fetch(p);
    return { status: res.status, body: await res.json() };
  }, path);
}

/**
 * Choosing what to draw, in the browser: the form's layer and palette choices with their swatches and
 * the schema's message, the estimate counting the views, and the reader page offering only the views
 * that were drawn, each with the legend the renderer wrote.
 */
describe('layers and palettes in the browser', () => {
  const farm = useFarmInBrowser({ demo: true });


  test('an author draws the difference from a checkerboard in kiln and reads it with its legend', { timeout: 120_000 }, async () => {
    const page = await newPage(farm.browser, farm.stack.url);
    await signIn(page, author.email, author.password);
    await page.goto('/runs/new');
    await page.getByLabel('Title').fill('Layers check: difference from a checkerboard');
    await page.getByLabel('Grains at the origin (n)').fill('2000');

    // the difference layer on the empty lattice: the shared schema's message, before submitting
    await page.getByRole('checkbox', { name: 'Difference' }).check();
    await expect.poll(() => page.getByTestId('layers-error').textContent().catch(() => '')).toBe(DIFFERENCE_NEEDS_BACKGROUND);
    await page.getByLabel('Background').selectOption('checkerboard');
    await expect.poll(() => page.getByTestId('layers-error').count()).toBe(0);

    // heights and the difference, in kiln only: two views
    await page.getByRole('checkbox', { name: 'Toppled sites' }).uncheck();
    await page.getByRole('checkbox', { name: 'Odometer (log)' }).uncheck();
    await page.getByRole('checkbox', { name: /^Kiln/ }).check();
    await page.getByRole('checkbox', { name: /^Tidewater/ }).uncheck();
    await page.getByTestId('swatch-kiln').waitFor();
    await expect.poll(() => page.getByTestId('estimate-pyramids').textContent().catch(() => '')).toMatch(/^2 views,/);
    await screenshot(page, 'layers-form');
    await page.getByRole('button', { name: 'Start run' }).click();
    await page.waitForURL((u) => /^\/runs\/[0-9a-f-]{36}$/.test(u.pathname));
    const runId = new URL(page.url()).pathname.split('/')[2]!;
    await page.getByRole('progressbar', { name: 'finished' }).waitFor({ timeout: 100_000 });

    // the reader page lists only what was drawn
    await page.goto(`/runs/${runId}/view?layer=difference`);
    const pane = page.getByTestId('viewer-pane').first();
    await pane.locator('canvas').first().waitFor();
    expect(await page.getByLabel('Layer').locator('option').allTextContents()).toEqual(['Heights', 'Difference']);
    expect(await page.getByLabel('Palette').locator('option').allTextContents()).toEqual(['Kiln']);
    const legend = page.getByLabel('legend').first();
    await legend.getByText('height minus background').waitFor();

    // the origin cell at single-cell zoom has the legend's colour for its height minus the background
    const sidecar = (await fetchJson(page, `/api/runs/${runId}/arrays/run.json`)).body as { heights: { origin: number[] } };
    const heights = readNpy(new Uint8Array(await page.evaluate(async (p) => Array.from(new Uint8Array(await (await fetch(p)).arrayBuffer())), `/api/runs/${runId}/arrays/heights.npy`)));
    const [, w] = heights.shape as [number, number];
    const [oy, ox] = sidecar.heights.origin as [number, number];
    // checkerboard a = 2 where x + y is even (the form's default), so the origin started at 2
    const d = Number(heights.data[oy * w + ox]!) - 2;
    const stored = (await fetchJson(page, `/api/runs/${runId}/legend/difference/kiln`)).body as { legend: { entries: { value: number; colour: string }[] } };
    const colour = stored.legend.entries.find((e) => e.value === d)!.colour;
    await page.getByRole('button', { name: 'Origin, single cells' }).click();
    await expect.poll(async () => centrePixel(await pane.screenshot()), { timeout: 20_000 }).toBe(hexToRgba(colour).slice(0, 3).join(','));
    await screenshot(page, 'layers-viewer-difference');
    // the legend entries are the palette's diverging ramp, ends included
    expect(stored.legend.entries[0]!.colour).toBe(paletteById('kiln').diverging[0]);

    // views that were not asked for are 404s, for tiles and legends alike
    expect((await fetchJson(page, `/api/runs/${runId}/views/odometer/kiln/iiif/info.json`)).status).toBe(404);
    expect((await fetchJson(page, `/api/runs/${runId}/legend/heights/tidewater`)).status).toBe(404);
  });
});
