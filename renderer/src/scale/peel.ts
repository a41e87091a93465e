import type { OdometerArray } from '../engine/outcome.js';
import { classAt, type LatticeKernel, type UnstableStack } from './kernel.js';

/**
 * The burning-type test behind the minimality certificate. Starting from S = every toppled cell, it
 * peels off each cell x whose height could not take back one toppling of S, h(x) >= (edges from S
 * into x); what is left is the largest set S* whose toppling can be undone once with every cell of S*
 * still below threshold (other cells only lose grains). On a lattice where every class has as many
 * in- as out-edges, S* is empty exactly when the odometer is minimal, i.e. the true one: for any
 * stable odometer v above the true u, the cells where v - u is largest form such a set (least action
 * principle, Fey, Levine & Peres, arXiv:0901.3805).
 *
 * Works on any dense row-major array of width W whose toppled cells are at least the lattice's reach
 * away from the array's edges. Returns the cells of S* on `stack` (data[0 .. sp-1]); `mark` is scratch.
 */
/** Most cells the peeling test's drain stack holds (4 MiB); more cost another sweep instead (`drainCap`: tests). */
export const DRAIN_CAP = 1 << 20;

export function peel(h: Int32Array, od: OdometerArray, k: LatticeKernel, stack: UnstableStack, mark: Uint8Array, win?: Window, drainCap = DRAIN_CAP): number {
  const { start, delta, rstart, rdelta, single, cls, period } = k;
  const IN = 128;
  // the window: whole array unless given (cells outside it count as not in S)
  const W = win?.W ?? h.length, x0 = win?.x0 ?? 0, x1 = win?.x1 ?? W - 1, y0 = win?.y0 ?? 0, y1 = win?.y1 ?? Math.floor(h.length / W) - 1;
  // plain loops over the window's rows (no callbacks per cell): this runs once per repair round
  let count = 0;
  for (let y = y0; y <= y1; y++)
    for (let i = y * W + x0, e = y * W + x1; i <= e; i++) {
      const inS = +(od[i]! > 0);
      mark[i] = inS << 7;
      count += inS;
    }
  if (win) {
    // the ring around the window must read as "not in S"
    for (let y = Math.max(0, y0 - k.reach); y <= y1 + k.reach; y++)
      for (let x = x0 - k.reach; x <= x1 + k.reach; x++) if (y < y0 || y > y1 || x < x0 || x > x1) mark[y * W + x] = 0;
  }
  // the drain stack holds at most DRAIN_CAP cells (see below); + maxDeg + 1: a cell's pushes are
  // written before the count moves
  const limit = Math.max(1, Math.min(count, drainCap));
  stack.sp = 0;
  stack.reserve(limit + k.maxDeg + 1);
  let q = stack.data;
  // each cell of S counts the edges into it from S (its reversed edges, read from S's marks: the IN
  // bit is not touched here)
  for (let y = y0; y <= y1; y++) {
    // class of cell i: cls[i % period], kept as a running index (one modulo per row, not per cell)
    let ci = (y * W + x0) % period;
    for (let i = y * W + x0, e = y * W + x1; i <= e; i++, ci = ci + 1 === period ? 0 : ci + 1) {
      if (!(mark[i]! & IN)) continue;
      const c = single ? 0 : cls[ci]!;
      let n = 0;
      for (let r = rstart[c]!, r1 = rstart[c + 1]!; r < r1; r++) n += mark[i + rdelta[r]!]! >>> 7;
      mark[i] = IN | n;
    }
  }
  // Peel in array order: a sweep meets each cell once, and a cell peeled pushes the neighbours it
  // freed that the sweep has already passed onto a stack, drained at once (they are close by, so in
  // cache); those ahead are tested when the sweep reaches them. The result does not depend on the
  // order: S* is the largest set none of whose cells can be peeled. (A queue from the rim inwards
  // reached cells all over the array and cost ~2× more per cell.) A cascade can free most of S behind
  // the sweep (4.3·10^6 cells in one drain at square 10^7: 32 MiB of stack); a cell freed while the
  // stack is full stays in S with its count lowered, and another sweep peels it.
  for (let missed = 1; missed; ) {
    missed = 0;
    for (let y = y0; y <= y1; y++)
      for (let p = y * W + x0, pe = y * W + x1; p <= pe; p++) {
        const mp = mark[p]!;
        if (!(mp & IN) || h[p]! < (mp & 127)) continue;
        mark[p] = mp & 127;
        let tail = 1;
        q[0] = p;
        while (tail > 0) {
          const x = q[--tail]!;
          const c = classAt(k, x);
          for (let e = start[c]!, e1 = start[c + 1]!; e < e1; e++) {
            // without branches (mispredicted about half the time): a cell of S loses one in-edge, and
            // if the sweep has passed it and its height could now take the rest back, it leaves S
            // (when the stack has room; otherwise the next sweep does it)
            const yy = x + delta[e]!;
            const m = mark[yy]!;
            const inS = m >>> 7;
            const left = (m & 127) - inS;
            const free = inS & ((left - h[yy]! - 1) >>> 31) & ((yy - p - 1) >>> 31);
            const out = free & ((tail - limit) >>> 31);
            missed |= free ^ out;
            mark[yy] = (m - inS) ^ (out << 7);
            q[tail] = yy;
            tail += out;
          }
        }
      }
  }
  // S* onto the stack, counted first: reserving a row at a time reserved the whole array when the
  // test runs without a window (one row; 32 MiB of stack at square 10^7)
  let left = 0;
  for (let y = y0; y <= y1; y++) for (let i = y * W + x0, e = y * W + x1; i <= e; i++) left += mark[i]! >>> 7;
  stack.sp = 0;
  stack.reserve(left);
  q = stack.data;
  let sp = 0;
  for (let y = y0; y <= y1; y++) for (let i = y * W + x0, e = y * W + x1; i <= e; i++) if (mark[i]! & IN) q[sp++] = i;
  stack.sp = sp;
  return sp;
}

/** A rectangle of a row-major array of width W (inclusive bounds), at least `reach` inside it. */
export interface Window {
  W: number;
  x0: number;
  x1: number;
  y0: number;
  y1: number;
}

/** The bounding window of the cells on the stack, widened by `margin` and clipped to [lo, W-1-lo]. */
export function windowOf(stack: UnstableStack, W: number, H: number, margin: number, lo: number): Window {
  let x0 = Infinity, x1 = -Infinity, y0 = Infinity, y1 = -Infinity;
  for (let s = 0; s < stack.sp; s++) {
    const i = stack.data[s]!;
    const x = i % W, y = (i - x) / W;
    if (x < x0) x0 = x;
    if (x > x1) x1 = x;
    if (y < y0) y0 = y;
    if (y > y1) y1 = y;
  }
  return { W, x0: Math.max(lo, x0 - margin), x1: Math.min(W - 1 - lo, x1 + margin), y0: Math.max(lo, y0 - margin), y1: Math.min(H - 1 - lo, y1 + margin) };
}

/** Undoes one toppling of every cell on the stack (the set S* that peel found). */
export function untopple(h: Int32Array, od: OdometerArray, k: LatticeKernel, stack: UnstableStack): void {
  const { start, delta, deg } = k;
  for (let s = 0; s < stack.sp; s++) {
    const x = stack.data[s]!;
    const c = classAt(k, x);
    od[x] = od[x]! - 1;
    h[x] = h[x]! + deg[c]!;
    for (let e = start[c]!, e1 = start[c + 1]!; e < e1; e++) h[x + delta[e]!]!--;
  }
}

/**
 * Lowers the odometer to max(v − M, 0) and the heights with it (each cell gets back what it sent
 * and loses what its in-neighbours take back), reading the old odometer throughout. Any function below
 * the true odometer relaxes legally to it (least action principle), and one above it still ends at a
 * stable odometer at least as high, so relaxing from here is exact either way.
 */
export function lowerOdometer(h: Int32Array, od: OdometerArray, k: LatticeKernel, M: number): void {
  const { rstart, rdelta, deg } = k;
  const n = od.length;
  for (let i = 0; i < n; i++) {
    const c = classAt(k, i);
    let v = h[i]! + deg[c]! * Math.min(od[i]!, M);
    for (let e = rstart[c]!, e1 = rstart[c + 1]!; e < e1; e++) {
      const j = i + rdelta[e]!;
      if (j >= 0 && j < n) v -= Math.min(od[j]!, M);
    }
    h[i] = v;
  }
  for (let i = 0; i < n; i++) od[i] = Math.max(0, od[i]! - M);
}
