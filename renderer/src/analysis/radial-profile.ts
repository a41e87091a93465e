/**
 * Mean final height against the rescaled distance |x|/√n from the origin: the picture that shows
 * larger piles looking like finer versions of smaller ones. Pure: arrays in, numbers out.
 */
export interface RadialProfile {
  /** width of each bin in units of |x|/√n */
  binWidth: number;
  /** mean height of the sites in each bin (null where a bin holds no site) */
  meanHeight: (number | null)[];
  /** sites in each bin */
  sites: number[];
}

export interface ProfileInput {
  shape: readonly number[];
  origin: readonly number[];
  heights: Int32Array;
  toppled: Uint8Array;
}

/** Bins of 0.01·√n are fine enough to resolve the pile's rings at every n we plot. */
export const DEFAULT_BIN_WIDTH = 0.01;

/**
 * Only toppled sites count, so the profile ends where the pile does instead of being diluted by the
 * untouched background around it. The array's own row (x fastest) and slab order is kept.
 */
export function radialProfile(input: ProfileInput, grains: number, binWidth = DEFAULT_BIN_WIDTH): RadialProfile {
  const { shape, origin, heights, toppled } = input;
  const scale = grains > 0 ? 1 / (Math.sqrt(grains) * binWidth) : 0;
  const w = shape[shape.length - 1]!;
  const h = shape.length >= 2 ? shape[shape.length - 2]! : 1;
  const d = shape.length === 3 ? shape[0]! : 1;
  const [oz, oy, ox] = shape.length === 3 ? origin : shape.length === 2 ? [0, ...origin] : [0, 0, origin[0]!];
  const sums: number[] = [];
  const counts: number[] = [];
  let k = 0;
  for (let z = 0; z < d; z++) {
    for (let y = 0; y < h; y++) {
      for (let x = 0; x < w; x++, k++) {
        if (!toppled[k]) continue;
        const r = Math.hypot(x - ox!, y - oy!, z - oz!);
        const bin = Math.floor(r * scale);
        sums[bin] = (sums[bin] ?? 0) + heights[k]!;
        counts[bin] = (counts[bin] ?? 0) + 1;
      }
    }
  }
  const bins = counts.length;
  const sites = Array.from({ length: bins }, (_, i) => counts[i] ?? 0);
  const meanHeight = sites.map((c, i) => (c > 0 ? sums[i]! / c : null));
  return { binWidth, meanHeight, sites };
}
