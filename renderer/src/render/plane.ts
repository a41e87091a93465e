import type { OdometerArray } from '../engine/outcome.js';
import { drawnPlaneSize } from '../../../shared/drawn-plane.js';
import { RenderInputError } from './errors.js';

/**
 * The arrays the renderer reads. Structurally a subset of the engine's Outcome, so an Outcome can be
 * passed as it is: row-major, x the last axis, shape (W), (H, W) or (D, H, W).
 */
export interface RenderInput {
  shape: readonly number[];
  origin: readonly number[];
  heights: Int32Array;
  odometer: OdometerArray;
  toppled: Uint8Array;
}

/** A rectangle of cells in the rendered plane, x to the right and y down (row index). */
export interface CellWindow {
  x: number;
  y: number;
  width: number;
  height: number;
}

/**
 * Initial heights for the difference layer: an array shaped like `heights`, or a function that fills
 * `out` (row-major, window.width × window.height) for a window of the plane, so that huge random
 * backgrounds need not be materialised.
 */
export type BackgroundReader = (window: CellWindow, out: Int32Array) => void;
export type BackgroundSource = Int32Array | BackgroundReader;

/**
 * A 2-D plane of the run (shared/drawn-plane.ts): a 3-D run is cut at depth z, a 1-D run is drawn as a
 * band of `height` rows that all show its one row of cells.
 */
export interface Plane {
  width: number;
  /** rows drawn */
  height: number;
  /** distinct rows of cells: `height`, or 1 for a 1-D run's band */
  cellRows: number;
  /** entries between the cells of drawn row y and row y + 1 in the input arrays: `width`, or 0 for a band */
  rowStride: number;
  /** flat index of cell (0, 0) of the plane in the input arrays */
  offset: number;
  input: RenderInput;
  background?: BackgroundSource;
}

export interface PlaneOptions {
  /** depth index of the slice of a 3-D run; defaults to the source's own slice, origin[0] */
  z?: number;
  background?: BackgroundSource;
}

export function planeOf(input: RenderInput, options: PlaneOptions = {}): Plane {
  const { shape } = input;
  if (shape.length < 1 || shape.length > 3 || !shape.every((n) => Number.isInteger(n) && n >= 1)) {
    throw new RenderInputError(`shape must be 1 to 3 positive integers, received [${shape.join(', ')}]`);
  }
  const cells = shape.reduce((a, b) => a * b, 1);
  for (const name of ['heights', 'odometer', 'toppled'] as const) {
    if (input[name].length !== cells) {
      throw new RenderInputError(`${name} has ${input[name].length} entries but shape [${shape.join(', ')}] has ${cells} cells`);
    }
  }
  const { width, height } = drawnPlaneSize(shape);
  const band = shape.length === 1;
  let offset = 0;
  if (shape.length === 3) {
    const z = options.z ?? input.origin[0] ?? 0;
    if (!Number.isInteger(z) || z < 0 || z >= shape[0]) {
      throw new RenderInputError(`slice z=${z} is outside the run's depth 0..${shape[0] - 1}`);
    }
    offset = z * width * height;
  }
  const bg = options.background;
  if (bg instanceof Int32Array && bg.length !== cells) {
    throw new RenderInputError(`background has ${bg.length} entries but the run has ${cells} cells`);
  }
  return { width, height, cellRows: band ? 1 : height, rowStride: band ? 0 : width, offset, input, background: bg };
}

/**
 * A background window reader from a lattice-coordinate height function (the engine's
 * `problem.background.heightAt(x, y, z)`), for the plane `planeOf(input, { z })` renders.
 * Lattice coordinates are array indices minus `input.origin`.
 */
export function backgroundFromLattice(heightAt: (x: number, y: number, z: number) => number, input: RenderInput, z?: number): BackgroundReader {
  const d = input.shape.length;
  const ox = input.origin[d - 1] ?? 0;
  const oy = d >= 2 ? input.origin[d - 2] : 0;
  const Z = d === 3 ? (z ?? input.origin[0]) - input.origin[0] : 0;
  return (w, out) => {
    for (let r = 0; r < w.height; r++) {
      // every row of a 1-D run's band is the line itself, y = 0
      const Y = d === 1 ? 0 : w.y + r - oy;
      for (let c = 0; c < w.width; c++) out[r * w.width + c] = heightAt(w.x + c - ox, Y, Z);
    }
  };
}
