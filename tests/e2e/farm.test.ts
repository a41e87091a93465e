import { describe, expect, test } from 'vitest';
import type { Page } from 'playwright-core';
import sharp from 'sharp';
import { DEMO_SIGN_INS } from '../../api/src/seed/demo.js';
import { readNpy } from '../../renderer/src/npy/read.js';
import { writeNpy } from '../../renderer/src/npy/write.js';
import type { FigureResponse } from '../../shared/api/figures.js';
import { heightColour, hexToRgba, paletteById } from '../../shared/palettes.js';
import { startingComposition } from '../../shared/print-spec.js';
import { apiCall, newPage, screenshot, signIn } from './browser.js';
import { useFarmInBrowser } from './farm-in-browser.js';

const author = DEMO_SIGN_INS.find((d) => d.role === 'author')!;

/** RGB of the pixel at the centre of a PNG, read back with sharp (a general-purpose image library). */
async function centrePixel(png: Buffer): Promise<[number, number, number]> {
  const img = sharp(png);
  const { width, height } = await img.metadata();
  const { data, info } = await img.removeAlpha().raw().toBuffer({ resolveWithObject: true });
  const at = (Math.floor(height! / 2) * info.width + Math.floor(width! / 2)) * info.channels;
  return [data[at]!, data[at + 1]!, data[at + 2]!];
}

/**
 * Cells around the pane's centre, `cellPx` screen pixels each, against the stored heights: the pane
 * centres the origin cell (PileViewer's close-up), screen right is +x and screen down is the next
 * array row (web/src/viewer/cells.ts). Returns the cells whose centre pixel has another colour than
 * the palette gives their height.
 */
async function cellMismatches(png: Buffer, cellPx: number, reach: number, truth: { heights: ArrayLike<number | bigint>; width: number; ox: number; oy: number; maxHeight: number }): Promise<string[]> {
  const { data, info } = await sharp(png).removeAlpha().raw().toBuffer({ resolveWithObject: true });
  const cx = Math.floor(info.width / 2), cy = Math.floor(info.height / 2);
  const palette = paletteById('tidewater');
  const bad: string[] = [];
  for (let dy = -reach; dy <= reach; dy++)
    for (let dx = -reach; dx <= reach; dx++) {
      const h = Number(truth.heights[(truth.oy + dy) * truth.width + truth.ox + dx]!);
      const want = heightColour(palette, h, truth.maxHeight).slice(0, 3).join(',');
      const at = ((cy + dy * cellPx) * info.width + cx + dx * cellPx) * info.channels;
      const got = [data[at], data[at + 1], data[at + 2]].join(',');
      if (got !== want) bad.push(`(${dx}, ${dy}) height ${h}: ${got} instead of ${want}`);
    }
  return bad;
}

async function fetchBytes(page: Page, path: string): Promise<Buffer> {
  const bytes = await page.evaluate(async (p) => Array.from(new Uint8Array(await (await fetch(p)).arrayBuffer())), path);
  return Buffer.from(bytes);
}

/**
 * The render farm end to end: the real API and a real farm worker in this process, sharing one
 * BullMQ prefix; an author submits a run in the browser, watches it finish, and reads single cells
 * in the deep-zoom viewer, checked against the stored arrays.
 */
describe('render farm in the browser', () => {
  const farm = useFarmInBrowser({ demo: true });
  /** the run the first test computes, printed and published as a figure by the second */
  let finishedRunId = '';


  test('an author runs 10^6 grains on the square lattice, watches the progress bar, and zooms to single cells that match the arrays', { timeout: 240_000 }, async () => {
    const page = await newPage(farm.browser, farm.stack.url);
    await signIn(page, author.email, author.password);

    // the form: the estimate appears before anything is submitted
    await page.goto('/runs/new');
    await page.getByLabel('Title').fill('Farm check: 10^6 grains on the square lattice');
    await page.getByLabel('Grains at the origin (n)').fill('10^6');
    // the shown estimate is the one for the n just typed (the debounced request has come back)
    await expect.poll(() => page.getByTestId('estimate-for').textContent().catch(() => '')).toMatch(/^n = 1,000,000/);
    const credits = Number(await page.getByTestId('estimate-credits').textContent());
    expect(credits).toBeGreaterThanOrEqual(1);
    await screenshot(page, 'farm-form-estimate');
    const streams: string[] = [];
    page.on('request', (r) => {
      if (r.url().endsWith('/events')) streams.push(r.url());
    });
    await page.getByRole('button', { name: 'Start run' }).click();
    await page.waitForURL((u) => /^\/runs\/[0-9a-f-]{36}$/.test(u.pathname));
    const runId = new URL(page.url()).pathname.split('/')[2]!;
    finishedRunId = runId;

    // live progress: watch the bar (stage and percentage) until it says finished, 100 %
    const seen: string[] = [];
    const anyBar = page.getByRole('progressbar').first();
    const until = Date.now() + 180_000;
    for (;;) {
      const label = await anyBar.getAttribute('aria-label', { timeout: 5_000 }).catch(() => null);
      const value = await anyBar.getAttribute('aria-valuenow', { timeout: 5_000 }).catch(() => null);
      if (label !== null && seen.at(-1) !== `${label} ${value}`) seen.push(`${label} ${value}`);
      if (label === 'finished') break;
      if (Date.now() > until) throw new Error(`the run did not finish; the bar showed: ${seen.join(' | ')}`);
      if (seen.length === 2) await screenshot(page, 'farm-run-progress');
      await page.waitForTimeout(150);
    }
    // the bar moved through the farm's stages before it said finished (updated without reloading)
    expect(seen.filter((s) => !s.startsWith('finished')).length, seen.join(' | ')).toBeGreaterThan(0);
    console.info(`the progress bar showed: ${seen.join(' | ')}`);
    const bar = page.getByRole('progressbar', { name: 'finished' });
    expect(await bar.getAttribute('aria-valuenow')).toBe('100');
    await page.getByTestId('plot-heights').locator('.recharts-bar-rectangle').first().waitFor();
    await page.getByTestId('plot-radial').locator('.recharts-line-curve').waitFor();
    await page.waitForTimeout(900); // the bar's width transition
    await screenshot(page, 'farm-run-finished');
    // progress came by server-sent events (GET /api/runs/:id/events), not only by polling
    expect(streams.some((u) => u.includes(`/api/runs/${runId}/events`))).toBe(true);

    // duplicate with edits: the form opens holding this run's specification
    await page.getByRole('link', { name: 'Duplicate' }).click();
    await page.waitForURL((u) => u.pathname === '/runs/new' && u.searchParams.get('from') === runId);
    expect(await page.getByLabel('Title').inputValue()).toBe('Farm check: 10^6 grains on the square lattice (copy)');
    expect(await page.getByLabel('Grains at the origin (n)').inputValue()).toBe('1000000');
    await page.goBack();
    await bar.waitFor();

    // the truth the pixels must match: the stored arrays and run.json
    const sidecar = JSON.parse((await fetchBytes(page, `/api/runs/${runId}/arrays/run.json`)).toString('utf8')) as {
      heights: { origin: number[]; shape: number[] };
      stats: { originOdometer: string; heightCounts: number[] };
    };
    const heights = readNpy(new Uint8Array(await fetchBytes(page, `/api/runs/${runId}/arrays/heights.npy`)));
    const [, w] = heights.shape as [number, number];
    const [oy, ox] = sidecar.heights.origin as [number, number];
    const originHeight = Number(heights.data[oy * w + ox]!);
    let maxHeight = 0;
    for (let i = 0; i < heights.data.length; i++) maxHeight = Math.max(maxHeight, Number(heights.data[i]!));

    await page.getByRole('link', { name: 'Deep zoom' }).click();
    await page.waitForURL((u) => u.pathname === `/runs/${runId}/view`);
    const pane = page.getByTestId('viewer-pane').first();
    await pane.locator('canvas').first().waitFor();
    const night = hexToRgba('#15171a').slice(0, 3);
    // whole pile: wait until tiles are drawn at the centre (no longer the dark ground)
    await expect.poll(async () => (await centrePixel(await pane.screenshot())).join(','), { timeout: 20_000 }).not.toBe(night.join(','));
    await page.getByLabel('legend').first().waitFor();
    await screenshot(page, 'farm-viewer-whole');
    await pane.screenshot({ path: `${process.cwd()}/.local/screenshots/farm-viewer-whole-pane.png` });

    // single cells: the origin fills the middle of the pane at 40 screen pixels per cell
    await page.getByRole('button', { name: 'Origin, single cells' }).click();
    const expected = heightColour(paletteById('tidewater'), originHeight, maxHeight).slice(0, 3);
    await expect.poll(async () => (await centrePixel(await pane.screenshot())).join(','), { timeout: 20_000 }).toBe(expected.join(','));
    const closeUp = await pane.screenshot({ path: `${process.cwd()}/.local/screenshots/farm-viewer-cells-pane.png` });
    expect((await centrePixel(closeUp)).join(',')).toBe(expected.join(','));
    // zoom level 1, 40 screen pixels per cell: the 7 × 7 cells around the origin have their heights' colours
    const truth = { heights: heights.data as ArrayLike<number | bigint>, width: w, ox, oy, maxHeight };
    expect(await cellMismatches(closeUp, 40, 3, truth)).toEqual([]);
    // zoom level 2, three times out (5 pixels per cell, still the deepest level): 21 × 21 cells
    for (let i = 0; i < 3; i++) await page.getByRole('button', { name: 'zoom out' }).click();
    await page.mouse.move(2, 2); // no cell outline under the cursor
    await expect.poll(async () => (await cellMismatches(await pane.screenshot(), 5, 10, truth)).length, { timeout: 20_000 }).toBe(0);
    await pane.screenshot({ path: `${process.cwd()}/.local/screenshots/farm-viewer-cells-5px-pane.png` });
    await page.getByRole('button', { name: 'Origin, single cells' }).click();

    // the readout under the cursor at the centre names the origin and its values from the arrays
    const box = (await pane.boundingBox())!;
    await page.mouse.move(box.x + box.width / 2, box.y + box.height / 2);
    await expect.poll(() => page.getByTestId('readout-lattice').first().textContent()).toBe('(0, 0)');
    await expect.poll(() => page.getByTestId('readout-height').first().textContent()).toBe(`${originHeight} grain${originHeight === 1 ? '' : 's'}`);
    await expect.poll(() => page.getByTestId('readout-odometer').first().textContent()).toBe(`${BigInt(sidecar.stats.originOdometer).toLocaleString('en-US')} topplings`);
    await screenshot(page, 'farm-viewer-cells');

    // heights beside the odometer, locked: both panes centre on the origin
    await page.getByLabel('Beside it').selectOption('layer:odometer');
    await expect.poll(() => page.getByTestId('viewer-pane').count()).toBe(2);
    await page.getByRole('button', { name: 'Origin, single cells' }).click();
    const right = page.getByTestId('viewer-pane').nth(1);
    await expect.poll(async () => (await centrePixel(await right.screenshot())).join(','), { timeout: 20_000 }).not.toBe(night.join(','));
    await page.getByTestId('viewer-pane').first().hover();
    await page.mouse.wheel(0, -300);
    await page.waitForTimeout(800);
    await screenshot(page, 'farm-viewer-side-by-side');
    const bib = await page.getByTestId('run-bibtex').textContent();
    expect(bib).toMatch(/heights sha256 [0-9a-f]{64}/);
  });

  test('its author prints and publishes a figure of that run, and a reader without an account deep-zooms into it', { timeout: 120_000 }, async () => {
    expect(finishedRunId).not.toBe('');
    // through the routes the figure pages use: compose, order the print, wait until the farm has printed it, publish
    const slug = 'farm-check-square-1e6';
    const desk = await newPage(farm.browser, farm.stack.url);
    await signIn(desk, author.email, author.password);
    const me = await apiCall<{ activeLabId: string }>(desk, 'GET', '/api/me');
    const composed = await apiCall<FigureResponse>(desk, 'POST', '/api/figures', {
      labId: me.body.activeLabId,
      slug,
      title: 'A million grains, computed on the farm',
      caption: 'Final heights of 10^6 grains toppled from the origin of the square lattice.',
      spec: startingComposition(finishedRunId),
    });
    expect(composed.status, JSON.stringify(composed.body)).toBe(201);
    expect((await apiCall(desk, 'POST', `/api/figures/${slug}/versions`, {})).status).toBe(202);
    const newest = async () => {
      const r = (await apiCall<FigureResponse>(desk, 'GET', `/api/figures/${slug}`)).body;
      return r.withdrawn ? 'withdrawn' : (r.figure.versions[0]?.status ?? 'none');
    };
    await expect.poll(newest, { timeout: 90_000, interval: 500 }).toBe('ready');
    const published = await apiCall<{ error?: string }>(desk, 'POST', `/api/figures/${slug}/publish`);
    expect(published.status, published.body.error).toBe(200);
    await desk.context().close();

    const page = await newPage(farm.browser, farm.stack.url);
    await page.goto(`/f/${slug}`);
    const zoom = page.getByTestId('figure-zoom');
    const pane = zoom.getByTestId('viewer-pane').first();
    await pane.locator('canvas').first().waitFor();
    await page.getByRole('button', { name: 'Origin, single cells' }).click();
    const box = (await pane.boundingBox())!;
    await page.mouse.move(box.x + box.width / 2, box.y + box.height / 2);
    await expect.poll(() => pane.getByTestId('readout-lattice').textContent()).toBe('(0, 0)');
    await expect.poll(() => pane.getByTestId('readout-height').textContent()).toMatch(/^(1 grain|\d+ grains)$/);
    await expect.poll(() => page.getByText(/heights sha256 [0-9a-f]{64}/).count()).toBe(1);
    await screenshot(page, 'farm-figure-reader');
  });

  test('a series on a drawn unit cell over an uploaded background: the form checks the cell, previews the upload, and the series page lines the piles up by √n', { timeout: 120_000 }, async () => {
    const page = await newPage(farm.browser, farm.stack.url);
    await signIn(page, author.email, author.password);
    await page.goto('/runs/new');
    await page.getByLabel('Title').fill('Series check');
    await page.getByLabel('How many runs').selectOption('series');
    await page.getByLabel('Grain counts n of the series').fill('1000, 4000, 16000');

    // the unit cell editor: Z² as one class; dropping the edge to the left makes it directed
    await page.getByLabel('Lattice').selectOption('@cell');
    const check = page.getByTestId('cell-check');
    await expect.poll(() => check.textContent()).toMatch(/^Symmetric/);
    await page.getByRole('button', { name: 'offset (-1, 0)' }).click();
    await expect.poll(() => check.textContent()).toMatch(/^Directed/);
    await screenshot(page, 'farm-form-unit-cell');
    await page.getByRole('button', { name: 'offset (-1, 0)' }).click();
    await expect.poll(() => check.textContent()).toMatch(/^Symmetric/);

    // an uploaded 9×9 background of height 1 (written as a NumPy .npy file), previewed before use
    await page.getByLabel('Background').selectOption('array');
    const npy = Buffer.from(writeNpy([9, 9], new Int32Array(81).fill(1)));
    await page.getByLabel('background file').setInputFiles({ name: 'ones.npy', mimeType: 'application/octet-stream', buffer: npy });
    const upload = page.getByTestId('background-upload');
    await upload.getByText('9 × 9 cells · heights 1 to 1').waitFor();
    await upload.locator('canvas').waitFor();
    await expect.poll(() => page.getByTestId('estimate-for').textContent().catch(() => '')).toMatch(/16,000/);
    await screenshot(page, 'farm-form-upload-series');

    await page.getByRole('button', { name: 'Start series' }).click();
    await page.waitForURL((u) => /^\/series\/[0-9a-f-]{36}$/.test(u.pathname));
    const strip = page.getByTestId('series-strip');
    await expect.poll(() => strip.locator('img').count(), { timeout: 100_000 }).toBe(3);
    await page.getByTestId('plot-series-radius').locator('.recharts-symbols').first().waitFor();
    // each pile is drawn at the same size per √n: displayed widths grow like the arrays' widths over √n
    const widths = await strip.locator('img').evaluateAll((els) => els.map((e) => (e as HTMLImageElement).getBoundingClientRect().width));
    expect(Math.max(...widths) / Math.min(...widths)).toBeLessThan(1.6);
    await page.waitForTimeout(500);
    await screenshot(page, 'farm-series');
  });
});
