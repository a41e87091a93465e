import { RenderInputError } from './errors.js';

/**
 * The IIIF Image API 3.0, compliance level 0, layout of a pyramid (https://iiif.io/api/image/3.0/).
 *
 * Level l (0 = full resolution) has scale factor 2^l and size ceil(W / 2^l) × ceil(H / 2^l); it is cut
 * into 256-pixel tiles from the top left, the last row and column smaller. Levels go on until one tile
 * holds the whole image. A tile is stored under its canonical 3.0 request path
 * `{region}/{size}/0/default.png`:
 * - region: `x,y,w,h` in full-resolution pixels, or `full` when the tile covers the whole image;
 * - size: `w,h` of the tile in pixels, or `max` when that is the full-resolution size.
 * These are the canonical forms of the 3.0 change log (§1.1.3: "w,h unless the maximum size is
 * requested, in which case … max") and exactly the requests OpenSeadragon's IIIF 3 tile source makes.
 * libvips writes `full/{w},{h}/0/` for an image that fits one tile, so that one tile is also stored under
 * that alias (tileAliases).
 */

export const TILE_SIZE = 256;
export const MAX_PIXELS_PER_CELL = 256;

export interface PyramidLevel {
  /** 0 = full resolution */
  level: number;
  scaleFactor: number;
  width: number;
  height: number;
  columns: number;
  rows: number;
}

export interface PyramidPlan {
  cellsWide: number;
  cellsHigh: number;
  /** side of the square block of full-resolution pixels drawn for one cell (a power of two) */
  pixelsPerCell: number;
  /** full-resolution size in pixels */
  width: number;
  height: number;
  tileSize: number;
  /** levels[l] is level l, finest first */
  levels: PyramidLevel[];
}

/** A tile's IIIF request and where its pixels come from. */
export interface TileRequest {
  level: number;
  column: number;
  row: number;
  /** region in full-resolution pixels */
  x: number;
  y: number;
  w: number;
  h: number;
  /** tile size in pixels */
  width: number;
  height: number;
  /** `{region}/{size}/0/default.png` */
  path: string;
}

const isPowerOfTwo = (n: number) => Number.isInteger(n) && n >= 1 && (n & (n - 1)) === 0;

/**
 * Cells are drawn as k×k blocks, k the smallest power of two that makes the longer side at least
 * `minSide` pixels (1024 by default, so a small pile still fills a page), capped at 64.
 */
export function defaultPixelsPerCell(cellsWide: number, cellsHigh: number, minSide = 1024): number {
  let k = 1;
  while (k < 64 && Math.max(cellsWide, cellsHigh) * k < minSide) k *= 2;
  return k;
}

export function planPyramid(opts: { cellsWide: number; cellsHigh: number; pixelsPerCell?: number; tileSize?: number }): PyramidPlan {
  const { cellsWide, cellsHigh } = opts;
  const tileSize = opts.tileSize ?? TILE_SIZE;
  if (!Number.isInteger(cellsWide) || !Number.isInteger(cellsHigh) || cellsWide < 1 || cellsHigh < 1) {
    throw new RenderInputError(`the plane must be at least 1×1 cells, received ${cellsWide}×${cellsHigh}`);
  }
  const k = opts.pixelsPerCell ?? defaultPixelsPerCell(cellsWide, cellsHigh);
  if (!isPowerOfTwo(k) || k > MAX_PIXELS_PER_CELL) {
    throw new RenderInputError(`pixelsPerCell must be a power of two from 1 to ${MAX_PIXELS_PER_CELL}, received ${k}`);
  }
  if (!isPowerOfTwo(tileSize) || tileSize < 16) throw new RenderInputError(`tileSize must be a power of two ≥ 16, received ${tileSize}`);
  const width = cellsWide * k;
  const height = cellsHigh * k;
  const levels: PyramidLevel[] = [];
  for (let l = 0; ; l++) {
    const s = 2 ** l;
    const w = Math.ceil(width / s);
    const h = Math.ceil(height / s);
    levels.push({ level: l, scaleFactor: s, width: w, height: h, columns: Math.ceil(w / tileSize), rows: Math.ceil(h / tileSize) });
    if (w <= tileSize && h <= tileSize) break;
  }
  return { cellsWide, cellsHigh, pixelsPerCell: k, width, height, tileSize, levels };
}

export function tileCount(plan: PyramidPlan): number {
  return plan.levels.reduce((n, l) => n + l.columns * l.rows, 0);
}

/** Canonical IIIF 3.0 path of a full-image request at a level's size. */
export function fullImagePath(plan: PyramidPlan, level: number): string {
  const l = plan.levels[level];
  const size = l.width === plan.width && l.height === plan.height ? 'max' : `${l.width},${l.height}`;
  return `full/${size}/0/default.png`;
}

export function tileRequest(plan: PyramidPlan, level: number, column: number, row: number): TileRequest {
  const l = plan.levels[level];
  if (!l || column < 0 || row < 0 || column >= l.columns || row >= l.rows) {
    throw new RenderInputError(`no tile ${column},${row} at level ${level}`);
  }
  const t = plan.tileSize;
  const s = l.scaleFactor;
  const x = column * t * s;
  const y = row * t * s;
  const w = Math.min(t * s, plan.width - x);
  const h = Math.min(t * s, plan.height - y);
  const width = Math.min(t, l.width - column * t);
  const height = Math.min(t, l.height - row * t);
  const whole = x === 0 && y === 0 && w === plan.width && h === plan.height;
  const region = whole ? 'full' : `${x},${y},${w},${h}`;
  const size = width === plan.width && height === plan.height ? 'max' : `${width},${height}`;
  return { level, column, row, x, y, w, h, width, height, path: `${region}/${size}/0/default.png` };
}

/** Further paths stored with the same bytes as a tile (see the header comment). */
export function tileAliases(plan: PyramidPlan, t: TileRequest): string[] {
  return t.path === 'full/max/0/default.png' ? [`full/${plan.width},${plan.height}/0/default.png`] : [];
}

/** Every tile of the plan, finest level first, row by row. */
export function* allTiles(plan: PyramidPlan): Generator<TileRequest> {
  for (const l of plan.levels) for (let r = 0; r < l.rows; r++) for (let c = 0; c < l.columns; c++) yield tileRequest(plan, l.level, c, r);
}

export interface IiifInfo {
  '@context': 'http://iiif.io/api/image/3/context.json';
  id: string;
  type: 'ImageService3';
  protocol: 'http://iiif.io/api/image';
  profile: 'level0';
  width: number;
  height: number;
  sizes?: { width: number; height: number }[];
  tiles: { width: number; height: number; scaleFactors: number[] }[];
  preferredFormats: string[];
  extraFormats: string[];
}

/**
 * info.json of the pyramid. `sizes` lists the whole-image sizes stored under `full/{w},{h}/0/`
 * (the levels from `fullFromLevel` up), as level 0 requires for any size it advertises.
 */
export function infoJson(plan: PyramidPlan, id: string, fullFromLevel = plan.levels.length - 1): IiifInfo {
  const sizes = plan.levels.slice(fullFromLevel).map((l) => ({ width: l.width, height: l.height })).reverse();
  return {
    '@context': 'http://iiif.io/api/image/3/context.json',
    id,
    type: 'ImageService3',
    protocol: 'http://iiif.io/api/image',
    profile: 'level0',
    width: plan.width,
    height: plan.height,
    sizes,
    tiles: [{ width: plan.tileSize, height: plan.tileSize, scaleFactors: plan.levels.map((l) => l.scaleFactor) }],
    // level 0 only promises jpg; png is what we store, so it is declared as an extra and preferred format
    preferredFormats: ['png'],
    extraFormats: ['png'],
  };
}
