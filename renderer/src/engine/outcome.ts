import type { RunStats } from '../../../shared/run-stats.js';
import type { Problem } from './problem.js';

/**
 * Topplings per site. The plain engine counts in doubles (exact to 2^53); the fast path keeps
 * 32-bit unsigned counts where its bound on the odometer allows (half the memory of the largest array
 * at 10^9 grains, scale/scaled.ts) and hands them over as they are.
 */
export type OdometerArray = Float64Array | Uint32Array;

/**
 * The result of a run. Arrays are row-major with x as the last axis: shape (W) for the line, (H, W)
 * for planar lattices, (D, H, W) for cubic. They cover every toppled site and every site whose height
 * changed; origin is the array index of the lattice origin in array axis order.
 */
export interface Outcome {
  shape: number[];
  origin: number[];
  heights: Int32Array;
  odometer: OdometerArray;
  toppled: Uint8Array;
  stats: RunStats;
}

/** A dense working box in (x, y, z) order with the lattice origin at index (ox, oy, oz). */
export interface DenseBox {
  nx: number;
  ny: number;
  nz: number;
  ox: number;
  oy: number;
  oz: number;
  heights: Int32Array | Float64Array;
  odometer: OdometerArray;
}

/** Exact sum of many doubles that are each exact integers: flush to bigint before 2^53 is reached. */
class ExactSum {
  private big = 0n;
  private small = 0;
  add(v: number): void {
    this.small += v;
    if (this.small >= 2 ** 52 || this.small <= -(2 ** 52)) {
      this.big += BigInt(this.small);
      this.small = 0;
    }
  }
  get value(): bigint {
    return this.big + BigInt(this.small);
  }
}

/**
 * Crops the working box to the changed region and computes the statistics. Works on any dense box, so
 * the tiled engine and the reference share it (the kernels are what the abelian tests compare).
 */
export function buildOutcome(p: Problem, box: DenseBox, seconds: number): Outcome {
  const { nx, ny, nz, ox, oy, oz, heights: h, odometer: od } = box;
  const dim = p.lattice.dim;
  const bgAt = p.background.heightAt;
  let x0 = Infinity, x1 = -Infinity, y0 = Infinity, y1 = -Infinity, z0 = Infinity, z1 = -Infinity;
  let toppledSites = 0;
  let sumToppledHeights = 0;
  let r2 = 0;
  let rInf = 0;
  const total = new ExactSum();
  const heightCounts: number[] = [];
  const massOut = new ExactSum();
  const uniform = p.background.uniform;
  for (let z = 0; z < nz; z++)
    for (let y = 0; y < ny; y++) {
      const row = (z * ny + y) * nx;
      for (let x = 0; x < nx; x++) {
        const i = row + x;
        const v = h[i]!;
        massOut.add(v - (uniform ?? bgAt(x - ox, y - oy, z - oz)));
        const u = od[i]!;
        if (u === 0) continue;
        if (u > Number.MAX_SAFE_INTEGER) throw new Error(`odometer ${u} exceeds 2^53 at one site: beyond the exact range of this engine`);
        toppledSites++;
        total.add(u);
        heightCounts[v] = (heightCounts[v] ?? 0) + 1;
        sumToppledHeights += v;
        const X = x - ox, Y = y - oy, Z = z - oz;
        if (X < x0) x0 = X;
        if (X > x1) x1 = X;
        if (Y < y0) y0 = Y;
        if (Y > y1) y1 = Y;
        if (Z < z0) z0 = Z;
        if (Z > z1) z1 = Z;
        const d2 = X * X + Y * Y + Z * Z;
        if (d2 > r2) r2 = d2;
        const m = Math.max(Math.abs(X), Math.abs(Y), Math.abs(Z));
        if (m > rInf) rInf = m;
      }
    }
  for (let k = 0; k < heightCounts.length; k++) heightCounts[k] ??= 0;

  // crop: toppled sites plus the band their grains reach, plus every source site
  const r = p.lattice.reach;
  let cx0 = toppledSites ? x0 - r : 0, cx1 = toppledSites ? x1 + r : 0;
  let cy0 = toppledSites && dim >= 2 ? y0 - r : 0, cy1 = toppledSites && dim >= 2 ? y1 + r : 0;
  let cz0 = toppledSites && dim === 3 ? z0 - r : 0, cz1 = toppledSites && dim === 3 ? z1 + r : 0;
  for (const s of p.sources) {
    if (s.chips === 0) continue;
    cx0 = Math.min(cx0, s.at[0]); cx1 = Math.max(cx1, s.at[0]);
    cy0 = Math.min(cy0, s.at[1]); cy1 = Math.max(cy1, s.at[1]);
    cz0 = Math.min(cz0, s.at[2]); cz1 = Math.max(cz1, s.at[2]);
  }
  const W = cx1 - cx0 + 1, H = cy1 - cy0 + 1, D = cz1 - cz0 + 1;
  // a box that already is the crop (the scaled path compacts in place) is adopted, not copied:
  // at 10^9 grains a second copy would double the peak memory
  const adopt = h instanceof Int32Array && W === nx && H === ny && D === nz && cx0 === -ox && cy0 === -oy && cz0 === -oz;
  const heights = adopt ? (h as Int32Array) : new Int32Array(W * H * D);
  const odometer: OdometerArray = adopt ? od : new Float64Array(W * H * D);
  const toppled = new Uint8Array(W * H * D);
  if (adopt) for (let i = 0; i < toppled.length; i++) toppled[i] = od[i]! > 0 ? 1 : 0;
  else for (let z = 0; z < D; z++)
    for (let y = 0; y < H; y++)
      for (let x = 0; x < W; x++) {
        const X = x + cx0, Y = y + cy0, Z = z + cz0;
        const bx = X + ox, by = Y + oy, bz = Z + oz;
        const o = (z * H + y) * W + x;
        if (bx >= 0 && bx < nx && by >= 0 && by < ny && bz >= 0 && bz < nz) {
          const i = (bz * ny + by) * nx + bx;
          heights[o] = h[i]!;
          odometer[o] = od[i]!;
          toppled[o] = od[i]! > 0 ? 1 : 0;
        } else heights[o] = bgAt(X, Y, Z);
      }

  const shape = dim === 1 ? [W] : dim === 2 ? [H, W] : [D, H, W];
  const origin = dim === 1 ? [-cx0] : dim === 2 ? [-cy0, -cx0] : [-cz0, -cy0, -cx0];
  const axes: [number, number][] = dim === 1 ? [[x0, x1]] : dim === 2 ? [[y0, y1], [x0, x1]] : [[z0, z1], [y0, y1], [x0, x1]];
  const originIdx = (oz * ny + oy) * nx + ox;
  const radiusEuclidean = Math.sqrt(r2);
  const stats: RunStats = {
    lattice: p.lattice.name,
    chips: BigInt(p.sources[0]!.chips),
    shape,
    origin,
    grainsIn: p.grainsIn,
    grainsOut: massOut.value,
    toppledSites,
    totalTopplings: total.value,
    originOdometer: BigInt(od[originIdx] ?? 0),
    bbox: toppledSites ? axes : null,
    radiusEuclidean,
    radiusLinf: rInf,
    radiusOverSqrtN: p.grainsIn > 0n ? radiusEuclidean / Math.sqrt(Number(p.grainsIn)) : null,
    heightCounts,
    meanHeightToppled: toppledSites ? sumToppledHeights / toppledSites : null,
    symmetric: p.lattice.symmetric,
    seconds,
  };
  return { shape, origin, heights, odometer, toppled, stats };
}
