import { rm } from 'node:fs/promises';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { computeStats, indexHistogram, layerScale, planeOf, tiePriority, type RenderInput } from '../../renderer/src/render/index.js';
import { renderPrint } from '../../renderer/src/print/index.js';
import { colourTable, paletteById, type Layer, type Rgba } from '../../shared/palettes.js';
import { decodeRgb, squarePile, tempDir } from './helpers.js';

let dir: string;
beforeAll(async () => {
  dir = await tempDir('cells');
});
afterAll(async () => {
  await rm(dir, { recursive: true, force: true });
});

const at = (img: { data: Buffer; width: number }, x: number, y: number) => {
  const o = 3 * (y * img.width + x);
  return [img.data[o], img.data[o + 1], img.data[o + 2]];
};

describe('panel pixels against the run arrays', () => {
  it('uses a real pile: 1,000 grains at the origin of Z² topple 421 sites', () => {
    // facts: n = 1000 on Z² → 421 toppled sites, 18,226 topplings (independent numpy simulation)
    const pile = squarePile(1000);
    expect(pile.toppled.reduce((a, b) => a + b, 0)).toBe(421);
    expect(Array.from(pile.odometer).reduce((a, b) => a + b, 0)).toBe(18226);
  });

  for (const [layer, k, untoppled] of [
    ['heights', 3, 'neutral'],
    ['toppled', 2, 'transparent'],
    ['odometer', 1, 'neutral'],
  ] as [Layer, number, 'neutral' | 'transparent'][]) {
    it(`draws every ${layer} cell as a ${k} × ${k} block of its colour`, async () => {
      const pile = squarePile(1000);
      const path = join(dir, `${layer}.png`);
      const region = { xMin: -11, xMax: 9, yMin: -8, yMax: 12 };
      const res = await renderPrint(
        { size: { kind: 'paper', paper: 'A6' }, dpi: 300, labels: 'none', legend: false, scaleBar: { unit: 'lattice', length: 5 }, panels: [{ runId: 'p', layer, palette: 'lichen', untoppled, region, magnification: k }] },
        [{ runId: 'p', input: pile, chips: 1000 }],
        { png: path },
      );
      const p = res.layout.panels[0];
      const img = await decodeRgb(path);
      const stats = computeStats(planeOf(pile));
      const table = colourTable(paletteById('lichen'), layer, stats, untoppled);
      const [W] = [pile.shape[1]];
      const [oy, ox] = pile.origin;
      let checked = 0;
      for (let y = region.yMin; y <= region.yMax; y++) {
        for (let x = region.xMin; x <= region.xMax; x++) {
          const i = (y + oy) * W + (x + ox);
          const h = pile.heights[i];
          // the palette index rule (shared/palettes.ts header) applied to the engine's arrays
          const index =
            layer === 'heights' ? 1 + h : layer === 'toppled' ? (pile.toppled[i] ? 1 + h : 0) : pile.odometer[i] > 0 ? 1 + Math.round((254 * Math.log1p(pile.odometer[i])) / Math.log1p(stats.maxOdometer)) : 0;
          const c: Rgba = table[index];
          const want = c[3] === 0 ? [255, 255, 255] : [c[0], c[1], c[2]];
          const px0 = p.image.x + (x - region.xMin) * k;
          const py0 = p.image.y + (y - region.yMin) * k;
          for (let dy = 0; dy < k; dy++)
            for (let dx = 0; dx < k; dx++) {
              const got = at(img, px0 + dx, py0 + dy);
              if (got.join() !== want.join()) throw new Error(`cell (${x}, ${y}) pixel +${dx},+${dy}: ${got} instead of ${want}`);
              checked++;
            }
        }
      }
      expect(checked).toBe(21 * 21 * k * k);
      // outside the panel: paper, except the scale bar (5 cells × k px) in ink
      expect(at(img, p.image.x - 1, p.image.y)).toEqual([255, 255, 255]);
      expect(at(img, p.image.x + p.image.width, p.image.y + p.image.height - 1)).toEqual([255, 255, 255]);
      const bar = p.scaleBar!.bar;
      expect(bar.width).toBe(5 * k);
      expect(at(img, bar.x, bar.y)).toEqual([0, 0, 0]);
      expect(at(img, bar.x + bar.width - 1, bar.y + bar.height - 1)).toEqual([0, 0, 0]);
      expect(at(img, bar.x + bar.width, bar.y)).toEqual([255, 255, 255]);
    });
  }

  it('reduces r × r blocks to their most frequent height, ties to the rarer height', async () => {
    // seeded i.i.d. heights 0..3 (xorshift32), every cell toppled
    const side = 1200;
    const n = side * side;
    const heights = new Int32Array(n);
    let s = 12345;
    for (let i = 0; i < n; i++) {
      s ^= s << 13;
      s ^= s >>> 17;
      s ^= s << 5;
      heights[i] = (s >>> 0) % 4;
    }
    const input: RenderInput = { shape: [side, side], origin: [600, 600], heights, odometer: new Float64Array(n).fill(1), toppled: new Uint8Array(n).fill(1) };
    const path = join(dir, 'reduced.png');
    const res = await renderPrint(
      { size: { kind: 'column', column: 'single' }, dpi: 150, margins: { top: 0, right: 0, bottom: 0, left: 0 }, labels: 'none', legend: false, panels: [{ runId: 'r', palette: 'tidewater' }] },
      [{ runId: 'r', input, chips: 1 }],
      { png: path },
    );
    const p = res.layout.panels[0];
    // 90 mm at 150 DPI is 531 px for 1200 cells: 3 × 3 blocks, 400 × 400 px
    expect([p.reduction, p.image.width, p.image.height]).toEqual([3, 400, 400]);
    const plane = planeOf(input);
    const stats = computeStats(plane);
    const scale = layerScale('heights', stats);
    const priority = tiePriority(indexHistogram(plane, scale));
    const table = colourTable(paletteById('tidewater'), 'heights', stats, 'neutral');
    const img = await decodeRgb(path);
    for (let by = 0; by < 400; by++) {
      for (let bx = 0; bx < 400; bx++) {
        const count = [0, 0, 0, 0];
        for (let y = 0; y < 3; y++) for (let x = 0; x < 3; x++) count[heights[(by * 3 + y) * side + bx * 3 + x]]++;
        let best = 0;
        for (let h = 1; h < 4; h++) if (count[h] > count[best] || (count[h] === count[best] && priority[1 + h] > priority[1 + best])) best = h;
        const c = table[1 + best];
        const got = at(img, p.image.x + bx, p.image.y + by);
        if (got.join() !== [c[0], c[1], c[2]].join()) throw new Error(`block (${bx}, ${by}): ${got} instead of height ${best}`);
      }
    }
    expect(res.layout.warnings[0].message).toBe('panel 1: cells are smaller than one printed pixel: every 3 × 3 block of cells becomes one pixel (most frequent height)');
  });
});
