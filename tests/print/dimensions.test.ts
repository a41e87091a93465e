import { rm } from 'node:fs/promises';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { resolveProblem, stabilizeReference } from '../../renderer/src/engine/index.js';
import { renderPrint } from '../../renderer/src/print/index.js';
import { computeStats, planeOf } from '../../renderer/src/render/index.js';
import { colourTable, paletteById } from '../../shared/palettes.js';
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
    for (let x = -10; x <= 10; x++) {
      const px = p.image.x + (x + ox) * p.cellPx + (p.cellPx >> 1);
      const py = p.image.y + (p.cellPx >> 1);
      const o = 3 * (py * img.width + px);
      expect([img.data[o], img.data[o + 1], img.data[o + 2]]).toEqual(table[1 + 1].slice(0, 3));
    }
    expect(p.window.height).toBe(1);
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
  });
});
