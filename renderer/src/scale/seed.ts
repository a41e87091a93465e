import type { LatticeGraph } from '../engine/lattice.js';
import type { Box, ScaleGrid } from './grid.js';
import { classAt, type LatticeKernel } from './kernel.js';

/**
 * A finished level kept for seeding the next: its odometer u on its grid and, when the level was
 * itself seeded, its seed error E = u - P (P = the plain scaled seed it started from), both scaled
 * up for the next level.
 */
export interface CoarseLevel {
  chips: number;
  W: number;
  H: number;
  ox: number;
  oy: number;
  u: Float64Array;
  err: Float32Array | null;
  /** measured growth of the bulk error from the level below to this one, over the value scaling */
  gain: number | null;
  /** lattice-coordinate box of the toppled sites */
  toppled: Box;
}

export interface SeedOptions {
  /** weight of the previous level's error in the extrapolation (measured: about 0.9 on Z^2) */
  alpha: number;
  /**
   * extra growth of the error away from the source per level: measured on Z^2 (n = 2.5·10^4 to 10^5)
   * the bulk error grows about 8x per 4x grains, twice the value scaling, while the error at the
   * source grows 4x
   */
  bulkGain: number;
  /** use bulkGain as given instead of the gain measured between the last two levels (tuning) */
  fixedGain?: boolean;
  /** override of NEAR_SAFETY (tuning) */
  nearSafety?: number;
  /** the offset grows like this times √n when that is larger (tuning; see scaled.ts) */
  offsetPerRootN?: number;
  /** flat amount subtracted from every seed so it stays below the true odometer */
  offset: number;
}

/**
 * The odometer's logarithmic peak at the source, u ≈ -n·G(x) + smooth, with G the Green's function
 * of the lattice's continuum limit tr(M ∇²), M = ½ Σ_e e eᵀ averaged over classes:
 * G(x) = log|M^{-1/2} x| / (2π √det M) (common practice: the lattice Laplacian's second-order
 * Taylor expansion). Interpolating across the peak overshoots badly, so the seed interpolates only
 * u + n·G and adds the peak back exactly at the fine site.
 */
export interface Peak {
  /** inverse of M as [a, b, c] for the quadratic form a x² + 2 b x y + c y² */
  inv: [number, number, number];
  scale: number;
}

export function peakOf(g: LatticeGraph): Peak {
  let a = 0, b = 0, c = 0;
  for (const cls of g.classes) for (const o of cls) ((a += o[0] * o[0]), (b += o[0] * o[1]), (c += o[1] * o[1]));
  const m = 2 * g.classes.length;
  (a /= m), (b /= m), (c /= m);
  const det = a * c - b * b;
  return { inv: [c / det, -b / det, a / det], scale: 1 / (2 * Math.PI * Math.sqrt(det)) };
}

/** n·G at lattice point (x, y) (not necessarily integer), with the log clamped at radius 1/2. */
export function peakAt(p: Peak, n: number, x: number, y: number): number {
  const q = p.inv[0] * x * x + 2 * p.inv[1] * x * y + p.inv[2] * y * y;
  return n * p.scale * 0.5 * Math.log(Math.max(q, 0.25));
}

/**
 * Extra safety next to the source, NEAR_SAFETY·n·e^{-r/8}: the lattice-scale structure there is
 * extrapolated worst (overshoot up to 0.8 % of n within r < 4 and 0.4 % at r = 8 on Z^2 at n = 10^5,
 * more on honeycomb and Manhattan lattices, measured), and an overshoot costs a peeling round per unit
 * while this deficit covers a small area only (0.03 beat 0.009 and 0.06 at n = 10^5 on Z^2 overall).
 */
export const NEAR_SAFETY = 0.03;

/** Radius around the source inside which the seed error is carried over unscaled (lattice-scale structure). */
export const NEAR_ORIGIN = 6;

const sample = (c: CoarseLevel, f: Float64Array | Float32Array, x: number, y: number) => {
  const cx = x + c.ox, cy = y + c.oy;
  return cx >= 0 && cx < c.W && cy >= 0 && cy < c.H ? f[cy * c.W + cx]! : 0;
};

/** Bilinear value of a coarse field at fine site (X, Y), i.e. coarse coordinates (X/2, Y/2). */
function bilinear(c: CoarseLevel, f: Float64Array | Float32Array, X: number, Y: number): number {
  const ax = X >> 1, ay = Y >> 1;
  const bx = ax + (X & 1), by = ay + (Y & 1);
  return 0.25 * (sample(c, f, ax, ay) + sample(c, f, bx, ay) + sample(c, f, ax, by) + sample(c, f, bx, by));
}

/**
 * The plain scaled seed P(X, Y) = (chips / coarse chips) · u_coarse(X/2, Y/2). Where all four coarse
 * corners toppled, u + n·G is interpolated and the peak added back exactly; at the pile's edge
 * (where the peak is flat anyway) plain bilinear values are used.
 */
export function plainSeedAt(c: CoarseLevel, chips: number, X: number, Y: number, p: Peak): number {
  const f = chips / c.chips;
  const ax = X >> 1, ay = Y >> 1;
  const bx = ax + (X & 1), by = ay + (Y & 1);
  const a = sample(c, c.u, ax, ay), b = sample(c, c.u, bx, ay), d = sample(c, c.u, ax, by), e = sample(c, c.u, bx, by);
  if (a <= 0 || b <= 0 || d <= 0 || e <= 0) return f * 0.25 * (a + b + d + e);
  const n = c.chips;
  const lifted = a + b + d + e + peakAt(p, n, ax, ay) + peakAt(p, n, bx, ay) + peakAt(p, n, ax, by) + peakAt(p, n, bx, by);
  return f * (0.25 * lifted - peakAt(p, n, X / 2, Y / 2));
}

/** The seed error carried to the next level: scaled in space, except near the source (unscaled there). */
function errorAt(c: CoarseLevel, err: Float32Array, X: number, Y: number, bulkGain: number): number {
  if (Math.abs(X) <= NEAR_ORIGIN && Math.abs(Y) <= NEAR_ORIGIN) return sample(c, err, X, Y);
  return bulkGain * bilinear(c, err, X, Y);
}

/** Box of the fine level's seed: the coarse toppled box scaled by 2, plus a margin. */
export function seedBox(c: CoarseLevel, margin: number): Box {
  const t = c.toppled;
  return { x0: 2 * t.x0 - margin, x1: 2 * t.x1 + margin, y0: 2 * t.y0 - margin, y1: 2 * t.y1 + margin };
}

/**
 * Writes the seed into grid.od (non-guard cells) and the heights it leaves into grid.h:
 * h = background + sources - deg * s + (s summed over in-neighbours), computed in doubles so the
 * large terms cancel before anything is stored. Returns false when a height would leave Int32
 * (the caller then starts this level from a zero seed).
 */
export function applySeed(grid: ScaleGrid, k: LatticeKernel, c: CoarseLevel, chips: number, o: SeedOptions, peak: Peak): boolean {
  const { W, H, ox, oy, guard: G, h, od } = grid;
  const f = chips / c.chips;
  for (let y = G; y < H - G; y++) {
    const Y = y - oy;
    const row = y * W;
    for (let x = G; x < W - G; x++) {
      const X = x - ox;
      const p = plainSeedAt(c, chips, X, Y, peak);
      if (p <= 0) continue;
      const e = c.err ? o.alpha * f * errorAt(c, c.err, X, Y, o.fixedGain ? o.bulkGain : c.gain ?? o.bulkGain) : 0;
      const near = Math.abs(X) + Math.abs(Y) < 64 ? (o.nearSafety ?? NEAR_SAFETY) * chips * Math.exp(-Math.hypot(X, Y) / 8) : 0;
      const s = Math.floor(p + e - Math.max(o.offset, (o.offsetPerRootN ?? 0) * Math.sqrt(chips)) - near);
      if (s > 0) od[row + x] = s;
    }
  }
  const { rstart, rdelta, deg } = k;
  for (let y = G; y < H - G; y++) {
    const row = y * W;
    for (let x = G; x < W - G; x++) {
      const i = row + x;
      const c0 = classAt(k, i);
      let v = h[i]! - deg[c0]! * od[i]!;
      for (let e = rstart[c0]!, e1 = rstart[c0 + 1]!; e < e1; e++) v += od[i + rdelta[e]!]!;
      if (v >= 2 ** 30 || v <= -(2 ** 30)) return false;
      h[i] = v;
    }
  }
  // guard cells receive grains from seeded neighbours too (they never hold a seed themselves)
  for (let y = 0; y < H; y++) {
    const row = y * W;
    for (let x = 0; x < W; x++) {
      if (y >= G && y < H - G && x >= G && x < W - G) continue;
      const i = row + x;
      const c0 = classAt(k, i);
      let v = h[i]!;
      for (let e = rstart[c0]!, e1 = rstart[c0 + 1]!; e < e1; e++) {
        const j = i + rdelta[e]!;
        if (j >= 0 && j < od.length) v += od[j]!;
      }
      h[i] = v;
    }
  }
  return true;
}

/** E = u - P over the finished grid, kept in single precision (it only steers the next guess). */
export function seedError(grid: ScaleGrid, c: CoarseLevel, chips: number, peak: Peak): Float32Array {
  const { W, H, ox, oy, od } = grid;
  const err = new Float32Array(W * H);
  for (let y = 0; y < H; y++)
    for (let x = 0; x < W; x++) {
      const u = od[y * W + x]!;
      if (u > 0) err[y * W + x] = u - plainSeedAt(c, chips, x - ox, y - oy, peak);
    }
  return err;
}

/**
 * Least-squares growth of the bulk error between two levels: E_fine ≈ gain · f · E_coarse(x/2).
 * Measured rather than assumed, because it differs by lattice and background.
 */
export function bulkGainOf(grid: ScaleGrid, err: Float32Array, c: CoarseLevel, chips: number): number | null {
  if (!c.err) return null;
  const { W, H, ox, oy } = grid;
  const f = chips / c.chips;
  let num = 0, den = 0;
  for (let y = 0; y < H; y += 2)
    for (let x = 0; x < W; x += 2) {
      const X = x - ox, Y = y - oy;
      if (Math.abs(X) <= 2 * NEAR_ORIGIN && Math.abs(Y) <= 2 * NEAR_ORIGIN) continue;
      const e = err[y * W + x]!;
      if (e === 0) continue;
      const p = f * bilinear(c, c.err, X, Y);
      num += e * p;
      den += p * p;
    }
  if (!(den > 0)) return null;
  return Math.max(0, Math.min(4, num / den));
}
