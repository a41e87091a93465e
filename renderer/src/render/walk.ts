import { layerIndices, type LayerScale } from './layers.js';
import type { Plane } from './plane.js';
import type { PyramidPlan } from './plan.js';
import { reduce2x2Into } from './reduce.js';

/** Called once per tile, finest tiles first within each subtree; may apply back-pressure by returning a promise. */
export type TileVisitor = (level: number, column: number, row: number, indices: Uint8Array, width: number, height: number) => void | Promise<void>;

/**
 * Produce every tile of the pyramid as palette indices, depth first: a tile at level l is reduced
 * (reduce.ts) from its four children at level l − 1 as soon as they exist, and level-0 tiles are read
 * straight from the arrays (layers.ts). Memory is one 256×256 buffer per level plus one window of
 * cells; the full-resolution image never exists.
 */
export async function walkPyramid(plane: Plane, plan: PyramidPlan, scale: LayerScale, priority: Uint8Array, visit: TileVisitor, signal?: AbortSignal): Promise<void> {
  const t = plan.tileSize;
  const k = plan.pixelsPerCell;
  let cells = new Uint8Array(0);

  const leaf = (column: number, row: number, width: number, height: number): Uint8Array => {
    const px = column * t;
    const py = row * t;
    if (k === 1) return layerIndices(plane, scale, { x: px, y: py, width, height });
    // cells as k×k blocks: nearest neighbour, no smoothing
    const cx = Math.floor(px / k);
    const cy = Math.floor(py / k);
    const cw = Math.floor((px + width - 1) / k) - cx + 1;
    const ch = Math.floor((py + height - 1) / k) - cy + 1;
    if (cells.length < cw * ch) cells = new Uint8Array(cw * ch);
    const win = layerIndices(plane, scale, { x: cx, y: cy, width: cw, height: ch }, cells.subarray(0, cw * ch));
    const out = new Uint8Array(width * height);
    for (let y = 0; y < height; y++) {
      const srcRow = (Math.floor((py + y) / k) - cy) * cw;
      const dst = y * width;
      for (let x = 0; x < width; x++) out[dst + x] = win[srcRow + Math.floor((px + x) / k) - cx];
    }
    return out;
  };

  const build = async (level: number, column: number, row: number): Promise<Uint8Array> => {
    signal?.throwIfAborted();
    const l = plan.levels[level];
    const width = Math.min(t, l.width - column * t);
    const height = Math.min(t, l.height - row * t);
    let data: Uint8Array;
    if (level === 0) {
      data = leaf(column, row, width, height);
    } else {
      data = new Uint8Array(width * height);
      const child = plan.levels[level - 1];
      for (let j = 0; j < 2; j++) {
        for (let i = 0; i < 2; i++) {
          const c = 2 * column + i;
          const r = 2 * row + j;
          if (c >= child.columns || r >= child.rows) continue;
          const cw = Math.min(t, child.width - c * t);
          const ch = Math.min(t, child.height - r * t);
          const sub = await build(level - 1, c, r);
          reduce2x2Into(sub, cw, ch, priority, data, width, i * (t >> 1), j * (t >> 1));
        }
      }
    }
    await visit(level, column, row, data, width, height);
    return data;
  };

  await build(plan.levels.length - 1, 0, 0);
}
