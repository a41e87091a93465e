import { MAX_RENDERED_HEIGHT, type LayerStats } from '../../../shared/palettes.js';
import { RenderInputError } from './errors.js';
import { backgroundWindow, forEachBand } from './layers.js';
import type { Plane } from './plane.js';

/**
 * One pass over the plane's cells (a 1-D run's band counts its row once) for the numbers that fix every colour scale and legend.
 * @throws RenderInputError on negative heights or heights a palette PNG cannot hold
 */
export function computeStats(plane: Plane): LayerStats {
  const { heights, toppled, odometer } = plane.input;
  const counts: number[] = [];
  let minH = Infinity;
  let maxH = -Infinity;
  let toppledCells = 0;
  let maxOdo = 0;
  let minD = Infinity;
  let maxD = -Infinity;
  let bg = new Int32Array(0);
  forEachBand(plane, (w) => {
    const n = w.width * w.height;
    if (plane.background) {
      if (bg.length < n) bg = new Int32Array(n);
      backgroundWindow(plane, w, bg.subarray(0, n));
    }
    const start = plane.offset + w.y * plane.rowStride;
    for (let i = 0; i < n; i++) {
      const h = heights[start + i];
      if (h < minH) minH = h;
      if (h > maxH) maxH = h;
      if (h >= 0 && h <= MAX_RENDERED_HEIGHT) counts[h] = (counts[h] ?? 0) + 1;
      if (toppled[start + i] !== 0) toppledCells++;
      const u = odometer[start + i];
      if (u > maxOdo) maxOdo = u;
      if (plane.background) {
        const d = h - bg[i];
        if (d < minD) minD = d;
        if (d > maxD) maxD = d;
      }
    }
  }, true);
  if (minH < 0) throw new RenderInputError(`heights must be non-negative, found ${minH}`);
  if (maxH > MAX_RENDERED_HEIGHT) throw new RenderInputError(`heights above ${MAX_RENDERED_HEIGHT} cannot be drawn, found ${maxH}`);
  const heightCounts = Array.from({ length: maxH + 1 }, (_, h) => counts[h] ?? 0);
  return {
    cells: plane.width * plane.cellRows,
    minHeight: minH,
    maxHeight: maxH,
    heightCounts,
    toppledCells,
    maxOdometer: maxOdo,
    ...(plane.background ? { minDifference: minD, maxDifference: maxD } : {}),
  };
}
