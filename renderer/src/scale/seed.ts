import type { LatticeGraph } from '../engine/lattice.js';
import type { OdometerArray } from '../engine/outcome.js';
import { effectiveDiffusion } from './homogenize.js';
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
  u: OdometerArray;
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
 * of the lattice's continuum limit tr(M ∇²), M the effective diffusion matrix (homogenize.ts; ½ Σ_e e eᵀ
 * on one-class lattices): G(x) = log|M^{-1/2} x| / (2π √det M) (common practice: the fundamental
 * solution of a constant-coefficient elliptic operator). Interpolating across the peak overshoots badly, so the seed interpolates only
 * u + n·G and adds the peak back exactly at the fine site.
 */
export interface Peak {
  /** inverse of M as [a, b, c] for the quadratic form a x² + 2 b x y + c y² */
  inv: [number, number, number];
  scale: number;
  /** the lattice's period (px, py): with more than one class the seed interpolates class by class */
  px: number;
  py: number;
}

export function peakOf(g: LatticeGraph): Peak {
  const [a, b, c] = effectiveDiffusion(g);
  const det = a * c - b * b;
  return { inv: [c / det, -b / det, a / det], scale: 1 / (2 * Math.PI * Math.sqrt(det)), px: g.period[0], py: g.period[1] };
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

const sample = (c: CoarseLevel, f: OdometerArray | Float32Array, x: number, y: number) => {
  const cx = x + c.ox, cy = y + c.oy;
  return cx >= 0 && cx < c.W && cy >= 0 && cy < c.H ? f[cy * c.W + cx]! : 0;
};

/** Bilinear value of a coarse field at fine site (X, Y), i.e. coarse coordinates (X/2, Y/2). */
function bilinear(c: CoarseLevel, f: OdometerArray | Float32Array, X: number, Y: number): number {
  const ax = X >> 1, ay = Y >> 1;
  const bx = ax + (X & 1), by = ay + (Y & 1);
  return 0.25 * (sample(c, f, ax, ay) + sample(c, f, bx, ay) + sample(c, f, ax, by) + sample(c, f, bx, by));
}

/**
 * The plain scaled seed P(X, Y) = (chips / coarse chips) · u_coarse(X/2, Y/2). Where all four coarse
 * corners toppled, u + n·G is interpolated and the peak added back exactly; at the pile's edge
 * (where the peak is flat anyway) plain bilinear values are used. Lattices with several classes go
 * through classSeedAt.
 */
export function plainSeedAt(c: CoarseLevel, chips: number, X: number, Y: number, p: Peak): number {
  if (p.px * p.py > 1) return classSeedAt(c, chips, X, Y, p);
  const f = chips / c.chips;
  const ax = X >> 1, ay = Y >> 1;
  const bx = ax + (X & 1), by = ay + (Y & 1);
  const a = sample(c, c.u, ax, ay), b = sample(c, c.u, bx, ay), d = sample(c, c.u, ax, by), e = sample(c, c.u, bx, by);
  if (a <= 0 || b <= 0 || d <= 0 || e <= 0) return f * 0.25 * (a + b + d + e);
  const n = c.chips;
  const lifted = a + b + d + e + peakAt(p, n, ax, ay) + peakAt(p, n, bx, ay) + peakAt(p, n, ax, by) + peakAt(p, n, bx, by);
  return f * (0.25 * lifted - peakAt(p, n, X / 2, Y / 2));
}

const modp = (a: number, m: number) => ((a % m) + m) % m;

/**
 * Bilinear value at the real point (x, y) of a coarse field restricted to the sites of class
 * (cx, cy), i.e. on the sub-lattice of spacing (px, py) through that class; lifted by the peak when
 * `p` is given. NaN when a corner did not topple (the pile's edge).
 */
function classBilinear(c: CoarseLevel, f: OdometerArray | Float32Array, px: number, py: number, cx: number, cy: number, x: number, y: number, p: Peak | null): number {
  const a0 = x - modp(x - cx, px), b0 = y - modp(y - cy, py);
  const a1 = a0 + px, b1 = b0 + py;
  const wx = (x - a0) / px, wy = (y - b0) / py;
  let v00 = sample(c, f, a0, b0), v10 = sample(c, f, a1, b0), v01 = sample(c, f, a0, b1), v11 = sample(c, f, a1, b1);
  if (p) {
    if (sample(c, c.u, a0, b0) <= 0 || sample(c, c.u, a1, b0) <= 0 || sample(c, c.u, a0, b1) <= 0 || sample(c, c.u, a1, b1) <= 0) return NaN;
    const n = c.chips;
    (v00 += peakAt(p, n, a0, b0)), (v10 += peakAt(p, n, a1, b0)), (v01 += peakAt(p, n, a0, b1)), (v11 += peakAt(p, n, a1, b1));
  }
  return (1 - wy) * ((1 - wx) * v00 + wx * v10) + wy * ((1 - wx) * v01 + wx * v11);
}

/**
 * The scaled seed on a lattice with several classes. Bilinear interpolation across classes mixes
 * their lattice-scale offsets (the homogenization corrector, u_c ≈ U + χ_c·∇U), which do not scale
 * like the values and made honeycomb and Manhattan seeds overshoot. So each class is interpolated on
 * its own sub-lattice at (X/2, Y/2); the mean S over classes scales with the values (×f) and the
 * offset D_c = u_c − S of the fine site's class with the gradient (×f/2: u_fine(X) = f·u(X/2)).
 */
function classSeedAt(c: CoarseLevel, chips: number, X: number, Y: number, p: Peak): number {
  const f = chips / c.chips;
  const x = X / 2, y = Y / 2;
  const { px, py } = p;
  const own = modp(Y, py) * px + modp(X, px);
  let sum = 0, mine = 0;
  for (let cy = 0; cy < py; cy++)
    for (let cx = 0; cx < px; cx++) {
      const v = classBilinear(c, c.u, px, py, cx, cy, x, y, p);
      if (Number.isNaN(v)) return f * bilinear(c, c.u, X, Y);
      sum += v;
      if (cy * px + cx === own) mine = v;
    }
  const mean = sum / (px * py);
  return f * (mean - peakAt(p, c.chips, x, y)) + (f / 2) * (mine - mean);
}

/** The seed error carried to the next level: scaled in space, except near the source (unscaled there). */
function errorAt(c: CoarseLevel, err: Float32Array, X: number, Y: number, bulkGain: number, p: Peak): number {
  if (Math.abs(X) <= NEAR_ORIGIN && Math.abs(Y) <= NEAR_ORIGIN) return sample(c, err, X, Y);
  if (p.px * p.py === 1) return bulkGain * bilinear(c, err, X, Y);
  // the error's class structure is carried class by class as well, its offsets scaled like gradients (see classSeedAt)
  const own = modp(Y, p.py) * p.px + modp(X, p.px);
  let sum = 0, mine = 0;
  for (let cy = 0; cy < p.py; cy++)
    for (let cx = 0; cx < p.px; cx++) {
      const v = classBilinear(c, err, p.px, p.py, cx, cy, X / 2, Y / 2, null);
      sum += v;
      if (cy * p.px + cx === own) mine = v;
    }
  const mean = sum / (p.px * p.py);
  return bulkGain * (mean + 0.5 * (mine - mean));
}

/** Box of the fine level's seed: the coarse toppled box scaled by 2, plus a margin. */
export function seedBox(c: CoarseLevel, margin: number): Box {
  const t = c.toppled;
  return { x0: 2 * t.x0 - margin, x1: 2 * t.x1 + margin, y0: 2 * t.y0 - margin, y1: 2 * t.y1 + margin };
}

/** What the seed subtracts at (X, Y) to stay below the true odometer: the flat offset and the extra near the source. */
export function safetyAt(o: SeedOptions, chips: number, X: number, Y: number): number {
  const near = Math.abs(X) + Math.abs(Y) < 64 ? (o.nearSafety ?? NEAR_SAFETY) * chips * Math.exp(-Math.hypot(X, Y) / 8) : 0;
  return flatSafety(o, chips) + near;
}

/** The flat part of safetyAt, the same at every site away from the source. */
export const flatSafety = (o: SeedOptions, chips: number): number => Math.max(o.offset, (o.offsetPerRootN ?? 0) * Math.sqrt(chips));

/** Largest |height| a seed may leave in a cell (Int32 heights, with room for what relaxation adds). */
export const SEED_HEIGHT_LIMIT = 2 ** 30;

/**
 * Writes the seed into grid.od (non-guard cells) and the heights it leaves into grid.h:
 * h = background + sources - deg * s + (s summed over in-neighbours), computed in doubles so the
 * large terms cancel before anything is stored. Returns the cells whose height would leave ±2^30
 * (stored as 0). On a whole-plane grid any such cell means a seed too rough to use (the caller then
 * starts the level from zero). On a folded grid the cells on the fold's edge miss their mirrored
 * in-neighbours here, so next to the source they read about n − 2·u(0) (−1.6·n at n = 10^6, growing
 * like n·log n: past 2^30 from n ≈ 6·10^8); foldGrid and restoreBoundary give those cells their true
 * height before anything reads it, so there they do no harm (`unfitSeedHarmless`).
 */
export function applySeed(grid: ScaleGrid, k: LatticeKernel, c: CoarseLevel, chips: number, o: SeedOptions, peak: Peak, limit = SEED_HEIGHT_LIMIT): number[] {
  const { W, H, ox, oy, guard: G, h, od } = grid;
  const f = chips / c.chips;
  for (let y = G; y < H - G; y++) {
    const Y = y - oy;
    const row = y * W;
    for (let x = G; x < W - G; x++) {
      const X = x - ox;
      const p = plainSeedAt(c, chips, X, Y, peak);
      if (p <= 0) continue;
      const e = c.err ? o.alpha * f * errorAt(c, c.err, X, Y, o.fixedGain ? o.bulkGain : c.gain ?? o.bulkGain, peak) : 0;
      const s = Math.floor(p + e - safetyAt(o, chips, X, Y));
      if (s > 0) od[row + x] = s;
    }
  }
  const { rstart, rdelta, deg } = k;
  const unfit: number[] = [];
  for (let y = G; y < H - G; y++) {
    const row = y * W;
    for (let x = G; x < W - G; x++) {
      const i = row + x;
      const c0 = classAt(k, i);
      let v = h[i]! - deg[c0]! * od[i]!;
      for (let e = rstart[c0]!, e1 = rstart[c0 + 1]!; e < e1; e++) v += od[i + rdelta[e]!]!;
      if (v >= limit || v <= -limit) {
        unfit.push(i);
        h[i] = 0;
      } else h[i] = v;
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
  return unfit;
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
