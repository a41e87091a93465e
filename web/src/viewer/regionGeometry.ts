import type { Region } from '../../../shared/print-spec.js';
import { planeSize, type RunGeometry } from './cells.js';

/**
 * Between a rectangle on the deep-zoom image and an inclusive region of lattice cells (relative to
 * the run's origin, as the figure spec takes it). The pyramid draws each cell as a k × k block with
 * array row 0 at the top, a line as a band (see cells.ts). Pure, for the region drawer and its tests.
 */

function originXY(g: RunGeometry): { ox: number; oy: number } {
  const d = g.shape.length;
  return { ox: g.origin[d - 1]!, oy: d === 1 ? 0 : d === 2 ? g.origin[0]! : g.origin[1]! };
}

/** A line is drawn as a band of rows that all show y = 0 (shared/drawn-plane.ts): its regions always have y 0..0. */
const isLine = (g: RunGeometry) => g.shape.length === 1;

/** How many cells a region holds, in words: "10 × 10 cells", for a line "2,001 cells". */
export function regionSizeText(r: Region, dims: number): string {
  const w = (r.xMax - r.xMin + 1).toLocaleString('en-US');
  return dims === 1 ? `${w} cells` : `${w} × ${(r.yMax - r.yMin + 1).toLocaleString('en-US')} cells`;
}

/** The whole computed plane as a region. */
export function wholeRegionOf(g: RunGeometry): Region {
  const { width, height } = planeSize(g);
  const { ox, oy } = originXY(g);
  if (isLine(g)) return { xMin: -ox, xMax: width - 1 - ox, yMin: 0, yMax: 0 };
  return { xMin: -ox, xMax: width - 1 - ox, yMin: -oy, yMax: height - 1 - oy };
}

/**
 * Every cell the rectangle between two image points touches, clipped to the plane; null when the
 * rectangle lies wholly outside it.
 */
export function regionOfImagePoints(a: { x: number; y: number }, b: { x: number; y: number }, k: number, g: RunGeometry): Region | null {
  const { width, height } = planeSize(g);
  const { ox, oy } = originXY(g);
  const c0 = Math.floor(Math.min(a.x, b.x) / k);
  const c1 = Math.floor(Math.max(a.x, b.x) / k);
  const r0 = Math.floor(Math.min(a.y, b.y) / k);
  const r1 = Math.floor(Math.max(a.y, b.y) / k);
  if (c1 < 0 || r1 < 0 || c0 >= width || r0 >= height) return null;
  const clamp = (v: number, n: number) => Math.min(n - 1, Math.max(0, v));
  if (isLine(g)) return { xMin: clamp(c0, width) - ox, xMax: clamp(c1, width) - ox, yMin: 0, yMax: 0 };
  return { xMin: clamp(c0, width) - ox, xMax: clamp(c1, width) - ox, yMin: clamp(r0, height) - oy, yMax: clamp(r1, height) - oy };
}

/** The image-pixel rectangle covered by a region's cells (outer edges of its corner cells). */
export function imageRectOfRegion(r: Region, k: number, g: RunGeometry): { x: number; y: number; width: number; height: number } {
  const { ox, oy } = originXY(g);
  // a line's region covers its whole band
  if (isLine(g)) return { x: (r.xMin + ox) * k, y: 0, width: (r.xMax - r.xMin + 1) * k, height: planeSize(g).height * k };
  return { x: (r.xMin + ox) * k, y: (r.yMin + oy) * k, width: (r.xMax - r.xMin + 1) * k, height: (r.yMax - r.yMin + 1) * k };
}
