import { layerIndices } from '../render/layers.js';
import type { PreparedPanel } from './prepare.js';

/**
 * Rows of one panel's raster as palette indices of its layer, produced a strip at a time so no
 * whole panel is ever held: at magnification k each cell becomes a k × k block (nearest neighbour, no
 * smoothing); reduced by r, each r × r block of cells becomes one pixel holding its most frequent
 * index, ties to the index rarer in the whole plane (the deep-zoom pyramid's rule, renderer/src/render/reduce.ts).
 */
export class PanelRaster {
  readonly width: number;
  readonly height: number;
  private cells = new Uint8Array(0);
  private counts = new Uint32Array(256);

  constructor(private readonly panel: PreparedPanel) {
    this.width = panel.layout.image.width;
    this.height = panel.layout.image.height;
  }

  /** Fill `out` (rows × width) with image rows [from, from + rows). */
  rows(from: number, rows: number, out: Uint8Array): Uint8Array {
    const { window: win, cellPx: k, reduction: r } = this.panel.layout;
    const W = this.width;
    if (k > 0) {
      const c0 = Math.floor(from / k);
      const c1 = Math.floor((from + rows - 1) / k);
      const cells = this.read(win.x, win.y + c0, win.width, c1 - c0 + 1);
      let last = -1;
      for (let i = 0; i < rows; i++) {
        const cr = Math.floor((from + i) / k) - c0;
        const dst = i * W;
        if (cr === last) {
          out.copyWithin(dst, dst - W, dst);
          continue;
        }
        last = cr;
        const src = cr * win.width;
        if (k === 1) out.set(cells.subarray(src, src + win.width), dst);
        else for (let x = 0; x < win.width; x++) out.fill(cells[src + x], dst + x * k, dst + x * k + k);
      }
      return out;
    }
    for (let i = 0; i < rows; i++) {
      const y0 = (from + i) * r;
      const bh = Math.min(r, win.height - y0);
      const cells = this.read(win.x, win.y + y0, win.width, bh);
      this.reduceRow(cells, win.width, bh, r, out, i * W);
    }
    return out;
  }

  private read(x: number, y: number, width: number, height: number): Uint8Array {
    const n = width * height;
    if (this.cells.length < n) this.cells = new Uint8Array(n);
    return layerIndices(this.panel.plane, this.panel.scale, { x, y, width, height }, this.cells.subarray(0, n));
  }

  private reduceRow(cells: Uint8Array, width: number, bh: number, r: number, out: Uint8Array, dst: number): void {
    const { counts } = this;
    const { priority } = this.panel;
    for (let bx = 0, x0 = 0; x0 < width; bx++, x0 += r) {
      const x1 = Math.min(width, x0 + r);
      let best = cells[x0];
      let bestN = 0;
      for (let y = 0; y < bh; y++) {
        const row = y * width;
        for (let x = x0; x < x1; x++) {
          const v = cells[row + x];
          const n = ++counts[v];
          if (n > bestN || (n === bestN && priority[v] > priority[best])) (best = v), (bestN = n);
        }
      }
      out[dst + bx] = best;
      for (let y = 0; y < bh; y++) for (let x = x0; x < x1; x++) counts[cells[y * width + x]] = 0;
    }
  }
}
