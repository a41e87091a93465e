import { rm } from 'node:fs/promises';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { resolveProblem, stabilizeReference } from '../../renderer/src/engine/index.js';
import { renderPrint } from '../../renderer/src/print/index.js';
import { computeStats, planeOf } from '../../renderer/src/render/index.js';
import { colourTable, paletteById } from '../../shared/palettes.js';
import { lineBandRows } from '../../shared/drawn-plane.js';
import { figureSpecSchema } from '../../shared/print-spec.js';
import { layoutFigure } from '../../shared/print-layout.js';
import { decodeRgb, tempDir } from './helpers.js';

let dir: string;
beforeAll(async () => {
  dir = await tempDir('dims');
});
afterAll(async () => {
  await rm(dir, { recursive: true, force: true });
});

const pile = (preset: string, chips: number) =>
  stabilizeReference(resolveProblem({ lattice: { preset }, chips, sources: [], background: { kind: 'constant', height: 0 } } as Parameters<typeof resolveProblem>[0]));

describe('runs of other dimensions', () => {
  it('prints the line: 2n + 1 grains end as one grain on each of −n..n', async () => {
    // Anderson, Lovász, Shor, Spencer, Tardos, Winograd, "Disks, balls, and walls", Amer. Math. Monthly 96 (1989)
    const run = pile('line', 21);
    const path = join(dir, 'line.png');
    const res = await renderPrint(
      { size: { kind: 'custom', width: 100, height: 20 }, dpi: 300, margins: { top: 2, right: 2, bottom: 2, left: 2 }, labels: 'none', legend: false, panels: [{ runId: 'l', palette: 'newsprint' }] },
      [{ runId: 'l', input: run, chips: 21 }],
      { png: path },
    );
    const p = res.layout.panels[0];
    const img = await decodeRgb(path);
    const table = colourTable(paletteById('newsprint'), 'heights', computeStats(planeOf(run)), 'neutral');
    const ox = run.origin[0];
    // a band, not a one-cell line: every cell is a column of lineBandRows(W) blocks, each of its colour
    const rowsOfBand = lineBandRows(run.shape[0]);
    expect(p.window.height).toBe(rowsOfBand);
    expect(p.image.height).toBe(rowsOfBand * p.cellPx);
    expect(p.image.height).toBeGreaterThan(1);
    for (let x = -10; x <= 10; x++) {
      for (let row = 0; row < rowsOfBand; row++) {
        const px = p.image.x + (x + ox) * p.cellPx + (p.cellPx >> 1);
        const py = p.image.y + row * p.cellPx + (p.cellPx >> 1);
        const o = 3 * (py * img.width + px);
        expect([img.data[o], img.data[o + 1], img.data[o + 2]]).toEqual(table[1 + 1].slice(0, 3));
      }
    }
  });

  it('lays a line out as a band as tall as 1/8 of its length, and a region of it keeps y = 0', () => {
    const geometry = [{ runId: 'l', shape: [801], origin: [400], chips: 800 }];
    const layout = layoutFigure(figureSpecSchema.parse({ size: { kind: 'column', column: 'single' }, dpi: 300, labels: 'none', legend: false, panels: [{ runId: 'l' }] }), geometry);
    const p = layout.panels[0];
    expect(p.region).toEqual({ xMin: -400, xMax: 400, yMin: 0, yMax: 0 });
    expect(p.window).toEqual({ x: 0, y: 0, width: 801, height: lineBandRows(801) });
    expect(p.image.height * 8).toBeGreaterThanOrEqual(p.image.width - 8);
    const part = layoutFigure(figureSpecSchema.parse({ size: { kind: 'column', column: 'single' }, dpi: 300, labels: 'none', legend: false, panels: [{ runId: 'l', region: { xMin: -80, xMax: 79, yMin: 0, yMax: 0 } }] }), geometry);
    expect(part.panels[0].window).toEqual({ x: 320, y: 0, width: 160, height: lineBandRows(160) });
  });

  it('prints the asked slice of a cubic run', async () => {
    const run = pile('cubic', 300);
    const [D, H, W] = run.shape;
    const path = join(dir, 'cube.png');
    const res = await renderPrint(
      { size: { kind: 'paper', paper: 'A6', orientation: 'landscape' }, dpi: 150, labels: 'none', legend: false, grid: { rows: 1, cols: 2 }, panels: [{ runId: 'c', z: 0, magnification: 4 }, { runId: 'c', z: 1, magnification: 4 }] },
      [{ runId: 'c', input: run, chips: 300 }],
      { png: path },
    );
    const img = await decodeRgb(path);
    for (const [pi, z] of [
      [0, 0],
      [1, 1],
    ]) {
      const p = res.layout.panels[pi];
      const zi = z + run.origin[0];
      expect(p.zIndex).toBe(zi);
      const table = colourTable(paletteById('tidewater'), 'heights', computeStats(planeOf(run, { z: zi })), 'neutral');
      for (let y = 0; y < H; y++)
        for (let x = 0; x < W; x++) {
          const h = run.heights[(zi * H + y) * W + x];
          const o = 3 * ((p.image.y + y * 4 + 1) * img.width + p.image.x + x * 4 + 2);
          const got = [img.data[o], img.data[o + 1], img.data[o + 2]].join();
          if (got !== table[1 + h].slice(0, 3).join()) throw new Error(`slice ${z}, cell ${x},${y}: ${got}`);
        }
    }
    expect(D).toBeGreaterThan(2);
    // the page says which slice each panel shows
    expect(res.layout.caption?.text).toBe('panel 1: slice z = 0 of a 3-D pile; panel 2: slice z = 1 of a 3-D pile.');
  });

  it('names the slice of a 3-D panel in the caption, after the author\'s text', () => {
    const cube = { runId: 'c', shape: [9, 9, 9], origin: [4, 4, 4], chips: 300 };
    const square = { runId: 's', shape: [9, 9], origin: [4, 4], chips: 100 };
    const spec = (panels: object[], caption?: string) => figureSpecSchema.parse({ size: { kind: 'column', column: 'full' }, dpi: 150, legend: false, grid: { rows: 1, cols: panels.length }, panels, ...(caption ? { caption: { text: caption } } : {}) });
    expect(layoutFigure(spec([{ runId: 'c' }]), [cube]).caption?.text).toBe('Slice z = 0 of a 3-D pile.');
    expect(layoutFigure(spec([{ runId: 'c', z: -2 }, { runId: 's' }, { runId: 'c', z: 3 }], 'Three piles.'), [cube, square]).caption?.text).toBe('Three piles.\n(a): slice z = −2 of a 3-D pile; (c): slice z = 3 of a 3-D pile.');
    // planar panels alone: the caption is the author's, or none
    expect(layoutFigure(spec([{ runId: 's' }]), [square]).caption).toBeNull();
  });
});
