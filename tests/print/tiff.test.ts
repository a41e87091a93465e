import { readFile, rm } from 'node:fs/promises';
import { join } from 'node:path';
import sharp from 'sharp';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { renderPrint } from '../../renderer/src/print/index.js';
import { decodeRgb, listFiles, squarePile, tempDir, tiffTags } from './helpers.js';

let dir: string;
beforeAll(async () => {
  dir = await tempDir('tiff');
});
afterAll(async () => {
  await rm(dir, { recursive: true, force: true });
});

describe('figure TIFF', () => {
  it('is LZW-compressed with the resolution in pixels per inch and the same pixels as the PNG', async () => {
    const pile = squarePile(1000);
    const spec = { size: { kind: 'custom', width: 3, height: 2, unit: 'in' }, dpi: 450, margins: { top: 5, right: 5, bottom: 5, left: 5 }, panels: [{ runId: 'p', palette: 'kiln' }], scaleBar: {} };
    const res = await renderPrint(spec, [{ runId: 'p', input: pile, chips: 1000 }], { tiff: join(dir, 'fig.tif'), png: join(dir, 'fig.png') });
    const buf = await readFile(join(dir, 'fig.tif'));
    const tags = tiffTags(buf);
    // TIFF 6.0: ImageWidth 256, ImageLength 257, Compression 259 (5 = LZW), Predictor 317 (2 = horizontal),
    // XResolution 282 / YResolution 283 (RATIONAL), ResolutionUnit 296 (2 = inch)
    expect(tags.get(256)!.values[0]).toBe(1350);
    expect(tags.get(257)!.values[0]).toBe(900);
    expect(tags.get(259)!.values[0]).toBe(5);
    expect(tags.get(317)!.values[0]).toBe(2);
    const [xn, xd] = tags.get(282)!.values;
    const [yn, yd] = tags.get(283)!.values;
    expect(xn / xd).toBeCloseTo(450, 3);
    expect(yn / yd).toBeCloseTo(450, 3);
    expect(tags.get(296)!.values[0]).toBe(2);
    expect((await sharp(buf).metadata()).density).toBeCloseTo(450, 1);
    const [tif, png] = await Promise.all([decodeRgb(join(dir, 'fig.tif')), decodeRgb(join(dir, 'fig.png'))]);
    expect(Buffer.compare(tif.data, png.data)).toBe(0);
    expect(res.files.map((f) => f.format)).toEqual(['png', 'tiff']);
    // the hand-over PNG is gone, no temporary files are left behind
    expect(await listFiles(dir)).toEqual(['fig.png', 'fig.tif']);
  });
});
