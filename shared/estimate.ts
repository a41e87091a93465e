import { renderViews, type LatticeChoice, type LatticePreset, type RunSpec } from './run-spec.js';
import { backgroundMean, latticeShape, mayNotStabilizeWarning, type ArrayBackgroundInfo } from './stability.js';
import { drawnPlaneSize } from './drawn-plane.js';

// the lattice and background facts live in stability.ts (the run-spec schema needs them too); re-exported for existing callers
export { backgroundMean, EstimateError, latticeShape, type ArrayBackgroundInfo, type LatticeShape } from './stability.js';

/**
 * Predicted size, memory, time and cost of a run, before it is submitted. Pure: the run form calls it
 * as the author types and the API answers POST /api/estimates with it, so both always agree.
 *
 * Model (single source of n grains, or several whose counts add up):
 * - Domain. The pile of n grains on a d-dimensional lattice has radius of order n^(1/d). Counting
 *   mass, a toppled region of volume V gains on average g grains per site over the background, so
 *   V ≈ n / g. We take g = (2/3)(deg − 1 − h̄), with deg the lattice degree and h̄ the mean background
 *   height: on Z^2 with h̄ = 0 this gives g = 2 and the radius sqrt(n / (2π)), the published outer
 *   bound for the square lattice (arXiv:0704.0688). The array is the bounding box of that ball (or
 *   segment), stretched per axis by the lattice's shape factors (`DOMAIN_SHAPE_FACTORS`: piles of
 *   other presets are wider or narrower than the square lattice's in lattice coordinates), plus a
 *   margin of one cell, widened to cover every source and an uploaded background.
 * - Memory. About 16 bytes per cell: int32 heights, float64 odometer and the engine's bookkeeping.
 * - Work. Total topplings T ∝ n^(1 + 2/d) (the odometer solves a Poisson problem on a domain of
 *   radius n^(1/d)). Z^1 with no background is exact: m(m+1)(2m+1)/6 with m = ⌊n/2⌋. Z^2 uses a power
 *   law fitted to runs of the square lattice; other 2-D lattices scale it by 4/deg and by the
 *   domain's gain 2/g. Z^3 has a coefficient of its own, measured with the engine, scaled the same way.
 * - Time. T divided by the plain engine's rate for the dimension, measured on the development
 *   machine (the seeded fast path has measured curves of its own), plus drawing: every pyramid
 *   the spec asks for (layers × palettes, `renderViews`) costs its pixels at the deepest level
 *   (cells of the drawn plane × k², k as in renderer/src/render/plan.ts `defaultPixelsPerCell`)
 *   at the measured render rate (which includes the coarser levels), plus a fixed part per pyramid.
 * - Credits. See `creditsFor`.
 */

/**
 * Square lattice, single source, empty background: T(n) = TOPPLING_FIT.c · n^TOPPLING_FIT.alpha,
 * a least-squares fit of log T on log n through regression values computed here independently
 * (n = 10^4: 1,830,917; 10^5: 178,641,503; 10^6: 17,448,261,875 topplings; measured here, not published).
 * The fit reproduces each of them within 0.04 %.
 */
export const TOPPLING_FIT = { c: 0.02015698687728256, alpha: 1.9895417568465261 } as const;

/** Topplings per second of the exact engine on the 2-core development machine (measured here). */
export const TOPPLINGS_PER_SECOND = 1.5e8;

/**
 * The plain engine's rate by dimension (2-core development machine, two threads, load under 1.5,
 * 2026-12-05; line runs now take the line path, priced by LINE_PATH_SECONDS: the 1-D rate is kept
 * for runs forced onto the plain engine): a line pile of 3,000 grains is one tile, so one thread, 1,126,125,250 topplings in
 * 17.2 s; the cubic lattice reaches 27 and 43 million per second at 10^6 and 3·10^6 grains (more
 * neighbours and a third axis per toppling). Z^2 keeps TOPPLINGS_PER_SECOND.
 */
export const PLAIN_TOPPLINGS_PER_SECOND: Readonly<Record<1 | 2 | 3, number>> = { 1: 6.5e7, 2: TOPPLINGS_PER_SECOND, 3: 4.3e7 };

/**
 * The line's closed-form path (renderer/src/engine/line-path.ts), which takes every line run: one
 * nearest-zero look-up per grain, O(log L), then passes over the array (odometer, statistics,
 * certificate). Seconds = grains · LINE_PATH_SECONDS.perGrain + cells · LINE_PATH_SECONDS.perCell,
 * read off `npm run bench:line -- --plain-max 1e3` on the 2-core development machine (2026-12-05,
 * load average 4.5, shared): 10^6 grains 0.48 s, 10^7 grains 3.04 s (the pile covers n cells).
 */
export const LINE_PATH_SECONDS = { perGrain: 2.5e-7, perCell: 0.6e-7 } as const;

/**
 * Z^3, single source, empty background: T(n) = CUBIC_TOPPLING_C · n^(5/3) · (4/6)(2/g₀), g₀ = 10/3 the
 * domain gain at h̄ = 0, anchored at 175,308,296 topplings for n = 10^6 (measured here with the engine,
 * not published; 10^5: 3,758,041, 3·10^5: 23,575,907, 3·10^6: 1,088,716,882 follow n^(5/3) within 1 %).
 */
export const CUBIC_TOPPLING_C = 175_308_296 / (1e10 * (4 / 6) * (2 / (10 / 3)));

/**
 * Wall seconds of the seeded fast path (renderer/src/scale/) on square-lattice single-source runs on
 * a constant background, which it relaxes on an eighth of the plane (mirror symmetry) on two threads,
 * measured on the 2-core development machine (`npm run bench:scale`, 2026-12-05; README.md, Speed):
 * its cost follows the seed's error, not the toppling count, so it gets a curve of its own.
 */
export const FAST_PATH_MEASURED: readonly (readonly [n: number, seconds: number])[] = [
  [1e5, 0.19],
  [1e6, 0.62],
  [1e7, 10.81],
  [1e8, 383.8],
];

/**
 * The same path on the whole plane (lattices and backgrounds without that symmetry), square lattice,
 * two threads, `npm run bench:scale` (10^6 at 09:30 UTC and 10^7 earlier on 2026-12-05, 10^5 in an
 * earlier bench); other lattices are priced as a factor of it.
 */
export const FAST_PATH_WHOLE_PLANE_MEASURED: readonly (readonly [n: number, seconds: number])[] = [
  [1e5, 0.45],
  [1e6, 2.02],
  [1e7, 78.47],
];

/**
 * Fast-path time of other lattices and of an i.i.d. random background relative to the whole-plane
 * square lattice at n = 10^6 (same bench; the triangular lattice folds onto a quarter of the plane,
 * the honeycomb onto a half).
 */
export const FAST_PATH_LATTICE_FACTOR: Readonly<Record<string, number>> = { square: 1, triangular: 1.49, honeycomb: 3.7, manhattan: 6.04 };
export const FAST_PATH_RANDOM_FACTOR = 3.36;
/** Lattices not in that bench (f-lattice, uploaded periodic graphs): the slowest measured factor, so an estimate errs on the long side. */
export const FAST_PATH_UNKNOWN_FACTOR = 6.04;


/** Smallest single source the engine sends to the fast path (renderer/src/engine/stabilize.ts SCALED_MIN_CHIPS). */
export const FAST_PATH_MIN_CHIPS = 2 ** 16;

/**
 * Seconds at n read off a measured curve: straight lines between the points on log-log axes, the
 * end segments extended beyond them. The curve bends upwards (the seed's error grows faster than
 * n), so one power law through all points would be wrong at both ends; the steepest, last segment
 * keeps predictions beyond the measurements on the long side.
 */
export function logLogInterpolate(points: readonly (readonly [number, number])[], n: number): number {
  let j = 1;
  while (j < points.length - 1 && points[j]![0] < n) j++;
  const [n0, t0] = points[j - 1]!;
  const [n1, t1] = points[j]!;
  return t0 * (n / n0) ** (Math.log(t1 / t0) / Math.log(n1 / n0));
}

/** Fixed start-up cost of a run on the farm: queueing, worker start, array upload (measured here, rounded). */
export const RUN_OVERHEAD_SECONDS = 2;

/**
 * Deepest-level pixels per second one render worker draws and uploads to the object store, the
 * coarser levels' time included (measured here: `npx tsx tests/bench/render.ts --sizes 2048,4096
 * --no-baseline` gave 1.16·10^6 and 1.25·10^6 with the S3 sink the farm uses, 1.5–2·10^6 to a
 * folder, on the 2 shared cores; rounded). The bench prints this prediction's error.
 */
export const RENDER_PIXELS_PER_SECOND = 1.2e6;

/** Fixed cost of one pyramid: statistics pass, preview, legend and info.json uploads (measured here, rounded). */
export const RENDER_OVERHEAD_SECONDS = 0.5;

/** Bytes of working memory per cell of the domain (int32 height + float64 odometer + bookkeeping). */
export const BYTES_PER_CELL = 16;

/** Floor of the mean gain per toppled site, so near-critical backgrounds give a large domain, not ∞. */
export const MIN_GAIN = 0.25;

/**
 * Half-width and half-height [x, y] of a planar preset's array relative to the square lattice's, in
 * units of the mass radius above. Measured here with the engine (`npx tsx tests/bench/domain-shape.ts`,
 * 2026-12-05): single sources of 10^4, 3·10^4, 10^5, 3·10^5 and 10^6 grains on background 0; each
 * axis's half-extent over the mass radius, divided by the square lattice's at the same n; the largest
 * over those n, rounded up to two decimals. So every preset keeps the square lattice's margin over
 * its real pile (about 10 %, the gap between the published bound and real piles). The honeycomb
 * preset is a brick wall: on the hexagonal lattice with unit edges, neighbours along a row are √3/2
 * apart and rows 3/2 apart, so a round pile spans √3 times as many columns as rows (measured W/H
 * 1.70–1.73). Lattices without an entry (uploaded periodic graphs, the line, the cubic lattice) keep
 * the round ball.
 */
export const DOMAIN_SHAPE_FACTORS: Readonly<Partial<Record<LatticePreset, readonly [x: number, y: number]>>> = {
  square: [1, 1],
  triangular: [1.18, 1.18],
  honeycomb: [1.3, 0.75],
  'f-lattice': [1.06, 1.06],
  manhattan: [1.04, 1.04],
};

/** The shape factor of each array axis in lattice order (x, y, z). */
export function domainShapeFactors(lattice: LatticeChoice, dimension: 1 | 2 | 3): number[] {
  const planar = 'preset' in lattice ? DOMAIN_SHAPE_FACTORS[lattice.preset as LatticePreset] : undefined;
  return planar && dimension === 2 ? [...planar] : Array<number>(dimension).fill(1);
}

export interface RunEstimate {
  /** cells of the final array (the bounding box of the predicted pile plus a margin) */
  cells: number;
  /** predicted array shape, array axis order: (W), (H, W) or (D, H, W) */
  shape: number[];
  /** radius of a round pile of the predicted area, in lattice cells (the box stretches it by DOMAIN_SHAPE_FACTORS) */
  radius: number;
  /** working memory of the engine */
  bytes: number;
  topplings: number;
  /** the part of `seconds` spent stabilizing: the fast path's measured curve where it applies, else topplings over the measured rate */
  computeSeconds: number;
  /** deep-zoom pyramids the run asks for (layers × palettes) */
  pyramids: number;
  /** the part of `seconds` spent drawing and uploading those pyramids */
  renderSeconds: number;
  /** wall-clock seconds on one farm worker: computing plus drawing */
  seconds: number;
  credits: number;
  /** conditions under which the prediction is unreliable or the run may never finish */
  warnings: string[];
}

/** Z^1, no background: the origin fires T(m) times and site x fires T(m − |x|) (OEIS A000217), total A000330(m). */
export function lineTopplings(n: number): number {
  const m = Math.floor(n / 2);
  return (m * (m + 1) * (2 * m + 1)) / 6;
}

/** Fitted total topplings of a single source of n grains on Z^2 with no background. */
export function squareTopplings(n: number): number {
  return n <= 0 ? 0 : TOPPLING_FIT.c * n ** TOPPLING_FIT.alpha;
}

/**
 * Credits of a run: one per started minute of predicted farm time plus one per started GiB of
 * working memory, at least one. Deliberately simple so an author can predict it by hand; the
 * billing rules may weigh the two parts differently later.
 */
export function creditsFor(seconds: number, bytes: number): number {
  return Math.max(1, Math.ceil(seconds / 60) + Math.ceil(bytes / 2 ** 30));
}

/**
 * Predict a run. `upload` describes an uploaded background (kind "array"); without it the upload is
 * taken to be empty inside its shape.
 * @example estimateRun({ lattice: { preset: 'square' }, chips: 1e6, sources: [], background: { kind: 'constant', height: 0 } })
 * @throws EstimateError for an unknown lattice preset or degenerate background weights
 */
export function estimateRun(spec: RunSpec, upload?: ArrayBackgroundInfo): RunEstimate {
  const { dimension: d, degree } = latticeShape(spec.lattice);
  const sources = spec.sources ?? [];
  const n = spec.chips + sources.reduce((sum, s) => sum + s.chips, 0);
  const mean = backgroundMean(spec.background, upload);
  const warnings: string[] = [];
  const warning = mayNotStabilizeWarning(mean, degree);
  if (warning) warnings.push(warning);
  const rawGain = (2 / 3) * (degree - 1 - mean);
  const gain = Math.max(MIN_GAIN, rawGain);
  // Z^1 final heights are 0/1, so a toppled site holds 1 − h̄ grains more than its background
  const volumeRadius = d === 1 ? n / (2 * Math.max(MIN_GAIN, 1 - mean)) : (n / ((d === 2 ? Math.PI : (4 / 3) * Math.PI) * gain)) ** (1 / d);
  // every source must sit inside the box, and so must an uploaded background centred on the origin
  const reach = Math.max(0, ...sources.map((s) => Math.max(...s.at.map(Math.abs))));
  const factors = domainShapeFactors(spec.lattice, d);
  const half: number[] = [];
  for (let a = 0; a < d; a++) {
    const uploadHalf = upload && spec.background.kind === 'array' ? Math.ceil((upload.shape[upload.shape.length - 1 - a] ?? 0) / 2) : 0;
    half.push(Math.max(Math.ceil(volumeRadius * factors[a]!) + reach, uploadHalf));
  }
  const shape = half.map((r) => 2 * r + 3).reverse();
  const cells = shape.reduce((a, b) => a * b, 1);
  const bytes = cells * BYTES_PER_CELL;

  let topplings: number;
  if (d === 1) topplings = lineTopplings(n) / Math.max(MIN_GAIN, 1 - mean);
  else if (d === 2) topplings = squareTopplings(n) * (4 / degree) * (2 / gain);
  // T ∝ n · r^2 with r ∝ n^(1/3)
  else topplings = n <= 0 ? 0 : CUBIC_TOPPLING_C * n ** (5 / 3) * (4 / degree) * (2 / gain);
  const pyramids = renderViews(spec).length;
  const renderSeconds = pyramids * pyramidSeconds(shape);
  const fast = fastPathSeconds(spec);
  const computeSeconds = fast ?? (d === 1 ? linePathSeconds(n, spec, upload, cells) : topplings / PLAIN_TOPPLINGS_PER_SECOND[d]);
  const seconds = RUN_OVERHEAD_SECONDS + computeSeconds + renderSeconds;
  return { cells, shape, radius: volumeRadius, bytes, topplings: Math.round(topplings), pyramids, computeSeconds, renderSeconds, seconds, credits: creditsFor(seconds, bytes), warnings };
}

/**
 * Predicted wall seconds of the seeded fast path, or null when the engine would not take it: the
 * same rule as renderer/src/scale scaledPathApplies — a planar lattice, grains only at the origin
 * (at least FAST_PATH_MIN_CHIPS, below 2^30), any background but an uploaded array.
 */
export function fastPathSeconds(spec: RunSpec): number | null {
  const planar = 'preset' in spec.lattice ? !['line', 'cubic'].includes(spec.lattice.preset) : true;
  const single = (spec.sources ?? []).every((s) => s.chips === 0);
  if (!planar || !single || spec.background.kind === 'array' || spec.chips < FAST_PATH_MIN_CHIPS || spec.chips >= 2 ** 30) return null;
  // the square lattice on a constant background folds onto an eighth of the plane (renderer/src/scale/symmetry.ts)
  if ('preset' in spec.lattice && spec.lattice.preset === 'square' && spec.background.kind === 'constant') return logLogInterpolate(FAST_PATH_MEASURED, spec.chips);
  const factor = 'preset' in spec.lattice ? (FAST_PATH_LATTICE_FACTOR[spec.lattice.preset] ?? FAST_PATH_UNKNOWN_FACTOR) : FAST_PATH_UNKNOWN_FACTOR;
  const background = spec.background.kind === 'random' ? FAST_PATH_RANDOM_FACTOR : 1;
  return logLogInterpolate(FAST_PATH_WHOLE_PLANE_MEASURED, spec.chips) * factor * background;
}

/**
 * Predicted seconds of the line path: its grains are the sources' and, on an uploaded array, h − 1 of
 * every height h >= 2 (counted here as the upload's whole mass, which bounds them from above).
 */
export function linePathSeconds(n: number, spec: RunSpec, upload: ArrayBackgroundInfo | undefined, cells: number): number {
  const uploadGrains = upload && spec.background.kind === 'array' ? upload.meanHeight * upload.shape.reduce((a, b) => a * b, 1) : 0;
  return (n + uploadGrains) * LINE_PATH_SECONDS.perGrain + cells * LINE_PATH_SECONDS.perCell;
}

/** Pixels per cell at the deepest level: the renderer's rule (renderer/src/render/plan.ts defaultPixelsPerCell). */
export function drawnPixelsPerCell(cellsWide: number, cellsHigh: number): number {
  let k = 1;
  while (k < 64 && Math.max(cellsWide, cellsHigh) * k < 1024) k *= 2;
  return k;
}

/** Predicted seconds to draw one pyramid of a run whose array has this shape (the drawn plane: a line's band, the array, or one slice). */
export function pyramidSeconds(shape: readonly number[]): number {
  const { width: w, height: h } = drawnPlaneSize(shape);
  const k = drawnPixelsPerCell(w, h);
  return RENDER_OVERHEAD_SECONDS + (w * h * k * k) / RENDER_PIXELS_PER_SECOND;
}

