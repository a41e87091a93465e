import {
  differenceIndex,
  differenceScale,
  indexCount,
  MAX_RENDERED_HEIGHT,
  odometerIndex,
  type Layer,
  type LayerStats,
} from '../../../shared/palettes.js';
import { RenderInputError } from './errors.js';
import type { CellWindow, Plane } from './plane.js';

/** Everything a layer needs to turn cells into palette indices, fixed once per run. */
export interface LayerScale {
  layer: Layer;
  /** number of palette entries used (indices 0..count-1) */
  count: number;
  diffM: number;
  diffLevels: number;
  maxOdometer: number;
}

export function layerScale(layer: Layer, stats: LayerStats): LayerScale {
  if (layer === 'difference' && stats.minDifference === undefined) {
    throw new RenderInputError('the difference layer needs the background of the run');
  }
  const { m, levels } = differenceScale(stats);
  return { layer, count: indexCount(layer, stats), diffM: m, diffLevels: levels, maxOdometer: stats.maxOdometer };
}

/** Fill `out` with the background heights of a window of the plane. */
export function backgroundWindow(plane: Plane, w: CellWindow, out: Int32Array): Int32Array {
  const bg = plane.background;
  if (!bg) throw new RenderInputError('the difference layer needs the background of the run');
  if (typeof bg === 'function') {
    bg(w, out);
    return out;
  }
  for (let r = 0; r < w.height; r++) {
    const src = plane.offset + (w.y + r) * plane.rowStride + w.x;
    out.set(bg.subarray(src, src + w.width), r * w.width);
  }
  return out;
}

/**
 * Palette indices (see shared/palettes.ts for the layout) of a window of cells, row-major.
 * Reads only that window of the arrays, so a tile never needs the whole image.
 * @throws RenderInputError when the window leaves the plane
 */
export function layerIndices(plane: Plane, scale: LayerScale, w: CellWindow, out?: Uint8Array): Uint8Array {
  if (w.x < 0 || w.y < 0 || w.width < 1 || w.height < 1 || w.x + w.width > plane.width || w.y + w.height > plane.height) {
    throw new RenderInputError(`window ${w.x},${w.y},${w.width},${w.height} is outside the ${plane.width}×${plane.height} plane`);
  }
  const n = w.width * w.height;
  const res = out ?? new Uint8Array(n);
  const { heights, toppled, odometer } = plane.input;
  const bg = scale.layer === 'difference' ? backgroundWindow(plane, w, new Int32Array(n)) : null;
  const logMax = scale.maxOdometer > 0 ? Math.log1p(scale.maxOdometer) : 1;
  for (let r = 0; r < w.height; r++) {
    const src = plane.offset + (w.y + r) * plane.rowStride + w.x;
    const dst = r * w.width;
    switch (scale.layer) {
      case 'heights':
        for (let i = 0; i < w.width; i++) res[dst + i] = 1 + Math.min(heights[src + i], MAX_RENDERED_HEIGHT);
        break;
      case 'toppled':
        for (let i = 0; i < w.width; i++) res[dst + i] = toppled[src + i] !== 0 ? 1 + Math.min(heights[src + i], MAX_RENDERED_HEIGHT) : 0;
        break;
      case 'difference':
        for (let i = 0; i < w.width; i++) res[dst + i] = differenceIndex(heights[src + i] - bg![dst + i], scale.diffM, scale.diffLevels);
        break;
      case 'odometer':
        // inlined odometerIndex(u, max): 1 + round(254 · log1p(u) / log1p(max)), 0 when u = 0
        for (let i = 0; i < w.width; i++) {
          const u = odometer[src + i];
          res[dst + i] = u > 0 ? 1 + Math.round(254 * (Math.log1p(u) / logMax)) : 0;
        }
        break;
    }
  }
  return res;
}

/** Re-exported so callers can check a single value against the inlined loop. */
export { odometerIndex };

/** Rows per band when a whole plane is scanned: bounded scratch memory on any run size. */
const BAND_CELLS = 1 << 20;

/** Visit the plane in horizontal bands of whole rows; `cellsOnly` visits each distinct row of cells once (a 1-D run's band is one). */
export function forEachBand(plane: Plane, visit: (w: CellWindow) => void, cellsOnly = false): void {
  const rows = Math.max(1, Math.floor(BAND_CELLS / plane.width));
  const height = cellsOnly ? plane.cellRows : plane.height;
  for (let y = 0; y < height; y += rows) visit({ x: 0, y, width: plane.width, height: Math.min(rows, height - y) });
}

/** How many cells of the plane get each palette index (drives the tie rule of the reduction; a band's cells once each, the same order). */
export function indexHistogram(plane: Plane, scale: LayerScale): Float64Array {
  const counts = new Float64Array(256);
  let buf = new Uint8Array(0);
  forEachBand(plane, (w) => {
    const n = w.width * w.height;
    if (buf.length < n) buf = new Uint8Array(n);
    const idx = layerIndices(plane, scale, w, buf.subarray(0, n));
    for (let i = 0; i < n; i++) counts[idx[i]]++;
  }, true);
  return counts;
}
