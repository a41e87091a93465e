import { naturalScale } from '../../../shared/natural-scale.js';
import type { RadialProfile } from '../../../shared/radial-profile.js';

/**
 * Mean final height against the rescaled distance |x|/n^(1/d) from the origin, d the array's rank:
 * the picture that shows larger piles looking like finer versions of smaller ones. Pure: arrays in,
 * numbers out; the stored shape is shared/radial-profile.ts.
 */
export type { RadialProfile };

export interface ProfileInput {
  shape: readonly number[];
  origin: readonly number[];
  heights: Int32Array;
  toppled: Uint8Array;
}

/** Bins of 0.01 of the natural length resolve the pile's rings at every n we plot. */
export const DEFAULT_BIN_WIDTH = 0.01;

/**
 * Width of a bin in lattice cells: DEFAULT_BIN_WIDTH · n^(1/d), but never under one cell, where bins
 * would only split the few distances the lattice has (a line pile's sites sit at whole distances).
 */
export function binCells(grains: number, dimension: number): number {
  return Math.max(1, DEFAULT_BIN_WIDTH * naturalScale(grains, dimension));
}

/**
 * Only toppled sites count, so the profile ends where the pile does instead of being diluted by the
 * untouched background around it. The array's own row (x fastest) and slab order is kept.
 */
export function radialProfile(input: ProfileInput, grains: number): RadialProfile {
  const { shape, origin, heights, toppled } = input;
  const rank = shape.length;
  const cellsPerBin = binCells(grains, rank);
  const unit = naturalScale(grains, rank);
  const w = shape[rank - 1]!;
  const h = rank >= 2 ? shape[rank - 2]! : 1;
  const d = rank === 3 ? shape[0]! : 1;
  const [oz, oy, ox] = rank === 3 ? origin : rank === 2 ? [0, ...origin] : [0, 0, origin[0]!];
  const sums: number[] = [];
  const counts: number[] = [];
  let k = 0;
  for (let z = 0; z < d; z++) {
    for (let y = 0; y < h; y++) {
      for (let x = 0; x < w; x++, k++) {
        if (!toppled[k]) continue;
        const r = Math.hypot(x - ox!, y - oy!, z - oz!);
        // divide by the width in cells, which is exactly 1 at its floor: whole distances stay in their own bin
        const bin = Math.floor(r / cellsPerBin);
        sums[bin] = (sums[bin] ?? 0) + heights[k]!;
        counts[bin] = (counts[bin] ?? 0) + 1;
      }
    }
  }
  const bins = counts.length;
  const sites = Array.from({ length: bins }, (_, i) => counts[i] ?? 0);
  const meanHeight = sites.map((c, i) => (c > 0 ? sums[i]! / c : null));
  // with no grains there is no natural length; the width is then given in cells
  return { unit: 'natural', binWidth: unit > 0 ? cellsPerBin / unit : cellsPerBin, meanHeight, sites };
}
