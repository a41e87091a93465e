import { mkdir, rm } from 'node:fs/promises';
import { join } from 'node:path';
import sharp from 'sharp';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { PAPER, renderPrint } from '../../renderer/src/print/index.js';
import { THUMBNAIL_MAX_SIDE } from '../../shared/api/artifacts.js';
import { decodeRgb, listFiles, squarePile, tempDir } from './helpers.js';

/**
 * The page thumbnail the print engine returns with an order: shrunk from the PNG or TIFF it wrote,
 * and for a PDF-only order from a scratch PNG of the same page, which must give the same JPEG.
 */

let dir: string;
beforeAll(async () => {
  dir = await tempDir('thumbnail');
});
afterAll(async () => {
  await rm(dir, { recursive: true, force: true });
});

const pile = squarePile(3000);
const runs = [{ runId: 'p', input: pile, chips: 3000 }];
// a wide page with a caption, so the thumbnail holds the pile, paper and text
const spec = { size: { kind: 'custom', width: 4, height: 2.5, unit: 'in' }, dpi: 300, panels: [{ runId: 'p', palette: 'kiln' }], scaleBar: {}, caption: { text: 'Three thousand grains at the origin' } };

async function orderIn(name: string, formats: ('png' | 'tiff' | 'pdf')[]) {
  const at = join(dir, name);
  await mkdir(at);
  const paths = Object.fromEntries(formats.map((f) => [f, join(at, `fig.${f}`)]));
  const res = await renderPrint(spec, runs, paths, { thumbnail: THUMBNAIL_MAX_SIDE });
  return { at, res };
}

describe('the page thumbnail of an order', () => {
  it('is the same JPEG for a PDF-only order as for a PNG or TIFF order of the page, and leaves no scratch file', async () => {
    const png = await orderIn('png', ['png']);
    const tiff = await orderIn('tiff', ['tiff']);
    const pdf = await orderIn('pdf', ['pdf']);
    for (const o of [png, tiff, pdf]) expect(o.res.thumbnail, o.at).toBeDefined();
    const fromPng = png.res.thumbnail!;
    // 4 × 2.5 in at 300 DPI: 1200 × 750 px, shrunk to 256 px on its longer side
    expect(png.res.layout.page).toMatchObject({ widthPx: 1200, heightPx: 750 });
    expect([fromPng.width, fromPng.height]).toEqual([256, 160]);
    const meta = await sharp(fromPng.jpeg).metadata();
    expect(meta).toMatchObject({ format: 'jpeg', width: 256, height: 160 });
    // the same pixels through the same shrink: byte for byte the same file
    expect(Buffer.compare(pdf.res.thumbnail!.jpeg, fromPng.jpeg)).toBe(0);
    expect(Buffer.compare(tiff.res.thumbnail!.jpeg, fromPng.jpeg)).toBe(0);
    // the PDF order wrote its PDF and nothing else (the scratch page is deleted)
    expect(await listFiles(pdf.at)).toEqual(['fig.pdf']);
    expect(pdf.res.files.map((f) => f.format)).toEqual(['pdf']);
  });

  it('shows the page: its mean colour is the printed page\'s, with paper at the corners and the pile inside', async () => {
    const { at, res } = await orderIn('page', ['png', 'pdf']);
    const page = await decodeRgb(join(at, 'fig.png'));
    const small = await sharp(res.thumbnail!.jpeg).raw().toBuffer({ resolveWithObject: true });
    const mean = (d: Buffer, c: number) => {
      let s = 0;
      for (let i = c; i < d.length; i += 3) s += d[i]!;
      return s / (d.length / 3);
    };
    for (let c = 0; c < 3; c++) expect(Math.abs(mean(small.data, c) - mean(page.data, c))).toBeLessThan(3);
    // the top-left corner is margin: paper, within JPEG's error
    for (let c = 0; c < 3; c++) expect(Math.abs(small.data[c]! - PAPER[c]!)).toBeLessThan(6);
    // and the picture is not flat: the pile's colours are in it
    const stats = await sharp(res.thumbnail!.jpeg).stats();
    expect(stats.channels[0]!.stdev).toBeGreaterThan(10);
  });

  it('is made only when asked for', async () => {
    const at = join(dir, 'none');
    await mkdir(at);
    const res = await renderPrint(spec, runs, { pdf: join(at, 'fig.pdf') });
    expect(res.thumbnail).toBeUndefined();
    expect(await listFiles(at)).toEqual(['fig.pdf']);
  });
});
