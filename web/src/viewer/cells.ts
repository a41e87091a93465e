/**
 * From a point of the deep-zoom image to a cell of the run and back. The pyramid draws every cell as a
 * k×k block of pixels (k a power of two, renderer/src/render/plan.ts), with array row 0 at the top; a
 * 1-D run is a band whose every row is the line, and a 3-D run is cut at the origin's depth
 * (shared/drawn-plane.ts).
 * Pure functions, shared by the readout, the locked side-by-side views and the tests.
 */
import { drawnPlaneSize } from '../../../shared/drawn-plane.js';
import { naturalScale } from '../../../shared/natural-scale.js';

export interface RunGeometry {
  /** array shape in array axis order: (W), (H, W) or (D, H, W) */
  shape: readonly number[];
  /** array index of the lattice origin, array axis order */
  origin: readonly number[];
  /** grains added, for the rescaled coordinates x/n^(1/d) (d = the rank of `shape`) */
  grains: number;
}

export interface CellAt {
  /** column and row of the cell in the drawn plane */
  column: number;
  row: number;
  /** index of the cell in the C-order array (x fastest) */
  index: number;
  /** lattice coordinates relative to the origin, in array axis order reversed: [x], [x, y] or [x, y, z] */
  lattice: number[];
  /** lattice coordinates divided by n^(1/d), the pile's natural length (empty when n = 0) */
  rescaled: number[];
}

/** n^(1/d): the unit of the rescaled coordinates of this run. */
export const scaleOf = (g: RunGeometry): number => naturalScale(g.grains, g.shape.length);

/** Columns and rows of the drawn plane (a line's rows are its band). */
export function planeSize(g: RunGeometry): { width: number; height: number } {
  return drawnPlaneSize(g.shape);
}

/** Pixels per cell of a pyramid of `imageWidth` pixels drawn from this run (exact: k·W = image width). */
export function pixelsPerCell(imageWidth: number, g: RunGeometry): number {
  return imageWidth / planeSize(g).width;
}

/** The cell under image pixel (px, py), or null outside the plane. */
export function cellAt(px: number, py: number, k: number, g: RunGeometry): CellAt | null {
  const { width, height } = planeSize(g);
  const column = Math.floor(px / k);
  const row = Math.floor(py / k);
  if (!(column >= 0 && column < width && row >= 0 && row < height)) return null;
  const d = g.shape.length;
  const z = d === 3 ? g.origin[0]! : 0;
  // every row of a line's band is the line itself
  const index = d === 1 ? column : (z * height + row) * width + column;
  const ox = g.origin[d - 1]!;
  const lattice = d === 1 ? [column - ox] : d === 2 ? [column - ox, row - g.origin[0]!] : [column - ox, row - g.origin[1]!, 0];
  const root = scaleOf(g);
  return { column, row, index, lattice, rescaled: root > 0 ? lattice.map((c) => c / root) : [] };
}

/** Band row of a line's y = 0: the middle of its band, so a place on the line is centred in the band. */
const lineRow = (g: RunGeometry): number => (planeSize(g).height - 1) / 2;

/** Image pixel at the centre of the cell with lattice coordinates (x, y) relative to the origin. */
export function pixelOfLattice(x: number, y: number, k: number, g: RunGeometry): { px: number; py: number } {
  const d = g.shape.length;
  const ox = g.origin[d - 1]!;
  const oy = d === 1 ? lineRow(g) : d === 2 ? g.origin[0]! : g.origin[1]!;
  return { px: (x + ox + 0.5) * k, py: (y + oy + 0.5) * k };
}

/**
 * A view described in lattice units, so two viewers of different runs (or pyramids of different
 * pixel density) can show the same place: the centre in lattice coordinates and the cells across.
 * With `rescaled`, both are divided by n^(1/d), which lines up piles of different n (scale invariance).
 */
export interface LatticeView {
  cx: number;
  cy: number;
  /** cells visible across the viewer's width */
  across: number;
}

export function toLatticeView(centrePx: { x: number; y: number }, imageWidthVisible: number, k: number, g: RunGeometry, rescaled: boolean): LatticeView {
  const d = g.shape.length;
  const ox = g.origin[d - 1]!;
  const oy = d === 1 ? lineRow(g) : d === 2 ? g.origin[0]! : g.origin[1]!;
  const s = rescaled && g.grains > 0 ? scaleOf(g) : 1;
  return { cx: (centrePx.x / k - ox - 0.5) / s, cy: (centrePx.y / k - oy - 0.5) / s, across: imageWidthVisible / k / s };
}

export function fromLatticeView(v: LatticeView, k: number, g: RunGeometry, rescaled: boolean): { centrePx: { x: number; y: number }; imageWidthVisible: number } {
  const s = rescaled && g.grains > 0 ? scaleOf(g) : 1;
  const { px, py } = pixelOfLattice(v.cx * s, v.cy * s, k, g);
  return { centrePx: { x: px, y: py }, imageWidthVisible: v.across * s * k };
}
