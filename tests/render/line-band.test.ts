import { readFile, rm } from 'node:fs/promises';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { resolveProblem, stabilize } from '../../renderer/src/engine/index.js';
import { backgroundFromLattice, computeStats, createFolderSink, decodePngRgba, planeOf, renderPreview, renderPyramid, type RenderInput } from '../../renderer/src/render/index.js';
import { drawnPlaneSize, LINE_BAND_ASPECT, LINE_BAND_MAX_ROWS, lineBandRows } from '../../shared/drawn-plane.js';
import { pyramidSeconds } from '../../shared/estimate.js';
import { colourTable, paletteById } from '../../shared/palettes.js';
import { runSpecSchema } from '../../shared/run-spec.js';
import { sameColour, tempDir } from './helpers.js';

let dir: string;
let run: RenderInput;
const N = 1000;
beforeAll(async () => {
  dir = await tempDir('line-band');
  run = await stabilize(resolveProblem(runSpecSchema.parse({ lattice: { preset: 'line' }, chips: N })));
});
afterAll(async () => {
  await rm(dir, { recursive: true, force: true });
});

/** Index of the palette colour of every pixel (colours of the table are distinct). */
function indicesOf(data: Buffer, pixels: number, table: readonly (readonly number[])[]): number[] {
  return Array.from({ length: pixels }, (_, p) => table.findIndex((c) => sameColour(data, p, c as never)));
}

/**
 * A line pile is drawn as a band, every cell a column many pixels tall: drawn as its one row it was
 * a line one pixel high in the viewer, the thumbnails and the prints.
 */
describe('a 1-D run is drawn as a band', () => {
  it('the engine gives the known line pile', () => {
    // 2m grains at one site of Z^1 end as ones on −m..m with a hole at the origin (common practice, from
    // memory; the even case of the all-ones rule for 2m + 1 grains, Anderson et al., Amer. Math. Monthly 96 (1989))
    const o = run.origin[0]!;
    const m = N / 2;
    Array.from(run.heights).forEach((h, i) => expect(h).toBe(i - o === 0 || Math.abs(i - o) > m ? 0 : 1));
  });

  it('band rows: 1/8 of the length, at least 1, at most LINE_BAND_MAX_ROWS, growing with the length', () => {
    expect(lineBandRows(1)).toBe(1);
    expect(lineBandRows(1001)).toBe(Math.ceil(1001 / LINE_BAND_ASPECT));
    expect(lineBandRows(10 ** 7)).toBe(LINE_BAND_MAX_ROWS);
    for (let w = 1; w < 40_000; w += 97) expect(lineBandRows(w + 97)).toBeGreaterThanOrEqual(lineBandRows(w));
    expect(drawnPlaneSize([5, 7])).toEqual({ width: 7, height: 5 });
    expect(drawnPlaneSize([3, 5, 7])).toEqual({ width: 7, height: 5 });
    // the estimate draws the same band it prices
    expect(pyramidSeconds([8000])).toBeGreaterThan(pyramidSeconds([8000, 1]));
  });

  it('the plane is a band of identical rows; the statistics count each cell once', () => {
    const plane = planeOf(run);
    const W = run.shape[0]!;
    expect([plane.width, plane.height, plane.cellRows, plane.rowStride]).toEqual([W, lineBandRows(W), 1, 0]);
    const stats = computeStats(plane);
    expect(stats.cells).toBe(W);
    expect(stats.heightCounts).toEqual([W - N, N]);
  });

  it('the pyramid and its thumbnail show every cell as a full-height column, exact at full zoom', async () => {
    const res = await renderPyramid(run, createFolderSink(dir), { runId: 'line', style: { layer: 'heights', palette: 'tidewater' } });
    const W = run.shape[0]!;
    const k = res.plan.pixelsPerCell;
    expect(res.info.width).toBe(W * k);
    expect(res.info.height).toBe(lineBandRows(W) * k);
    const table = colourTable(paletteById('tidewater'), 'heights', res.stats, 'neutral');
    // the thumbnail (the largest level within 1024 px) is a band, not a line: at least 1024/8 px tall
    expect(res.preview.height).toBeGreaterThanOrEqual(Math.floor(res.preview.width / LINE_BAND_ASPECT));
    // full resolution, tile by tile along the band's first tile row: column x·k…x·k+k−1 has the colour of cell x in every row
    const o = run.origin[0]!;
    for (let tx = 0; tx * 256 < res.info.width; tx++) {
      const w = Math.min(256, res.info.width - tx * 256);
      const h = Math.min(256, res.info.height);
      const region = w === res.info.width && h === res.info.height ? 'full' : `${tx * 256},0,${w},${h}`;
      const size = w === res.info.width && h === res.info.height ? 'max' : `${w},${h}`;
      const png = await decodePngRgba(await readFile(join(dir, res.prefix, `iiif/${region}/${size}/0/default.png`)));
      const idx = indicesOf(png.data, w * h, table);
      for (let y = 0; y < h; y++)
        for (let x = 0; x < w; x++) {
          const cell = Math.floor((tx * 256 + x) / k);
          if (idx[y * w + x] !== 1 + run.heights[cell]!) throw new Error(`pixel ${tx * 256 + x},${y} (cell ${cell - o}) has index ${idx[y * w + x]}`);
        }
    }
  });

  it('renderPreview gives a band too, and a background reader is read at y = 0 on every row', async () => {
    const preview = await renderPreview(run, { style: { layer: 'difference', palette: 'tidewater' }, background: backgroundFromLattice((x, y) => (y === 0 ? 0 : 1), run), maxSide: 256 });
    expect(preview.height).toBeGreaterThan(16);
    // a background that were read at y ≠ 0 would give a difference of −1 somewhere
    expect(preview.stats.minDifference).toBe(0);
    expect(preview.stats.maxDifference).toBe(1);
  });
});
