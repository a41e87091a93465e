import type { LatticeGraph } from '../engine/lattice.js';
import type { OdometerArray } from '../engine/outcome.js';
import { FROZEN, forEachGuard, type ScaleGrid } from './grid.js';

/**
 * The lattice flattened for one grid width: per class its threshold and out-edges as index deltas.
 * Class of cell i = cls[i % period] (see ScaleGrid); a single-class lattice has period 1.
 */
export interface LatticeKernel {
  single: boolean;
  period: number;
  cls: Uint8Array;
  deg: Int32Array;
  /** edges of class c: start[c] .. start[c + 1] - 1 */
  start: Int32Array;
  delta: Int32Array;
  /** threshold of each edge's target */
  tdeg: Int32Array;
  /** reversed edges of class c (for the certificate): rstart / rdelta */
  rstart: Int32Array;
  rdelta: Int32Array;
  maxDeg: number;
  /** in-degree equals out-degree on every class (needed by the minimality certificate) */
  eulerian: boolean;
  /** the plain square lattice, which gets an unrolled kernel */
  square: boolean;
  /** longest offset component */
  reach: number;
}

/**
 * ox, oy: array position of the lattice origin (only its residues matter). H is the array's height,
 * used only by 3-D offsets (single-class lattices only; the certificate checks cubic runs too).
 */
export function latticeKernel(g: LatticeGraph, W: number, ox = 0, oy = 0, H = 1): LatticeKernel {
  if (g.dim === 3 && g.classes.length !== 1) throw new Error('periodic 3-D lattices are not supported here');
  const [px, py] = g.period;
  const nc = px * py;
  const period = W * py;
  const mod = (a: number, m: number) => ((a % m) + m) % m;
  const cls = new Uint8Array(nc === 1 ? 1 : period);
  if (nc > 1) for (let y = 0; y < py; y++) for (let x = 0; x < W; x++) cls[y * W + x] = mod(y - oy, py) * px + mod(x - ox, px);
  const start = new Int32Array(nc + 1);
  for (let c = 0; c < nc; c++) start[c + 1] = start[c]! + g.classes[c]!.length;
  const delta = new Int32Array(start[nc]!);
  const tdeg = new Int32Array(start[nc]!);
  const deg = new Int32Array(nc);
  const indeg = new Int32Array(nc);
  const rev: number[][] = Array.from({ length: nc }, () => []);
  for (let c = 0; c < nc; c++) {
    const cx = c % px, cy = (c - cx) / px;
    deg[c] = g.classes[c]!.length;
    g.classes[c]!.forEach((o, k) => {
      const e = start[c]! + k;
      delta[e] = o[2] * W * H + o[1] * W + o[0];
      const t = mod(cy + o[1], py) * px + mod(cx + o[0], px);
      tdeg[e] = g.classes[t]!.length;
      indeg[t]!++;
      rev[t]!.push(-(o[2] * W * H + o[1] * W + o[0]));
    });
  }
  const rstart = new Int32Array(nc + 1);
  for (let c = 0; c < nc; c++) rstart[c + 1] = rstart[c]! + rev[c]!.length;
  const rdelta = Int32Array.from(rev.flat());
  const sq = g.classes.length === 1 && g.classes[0]!.length === 4 && [[1, 0], [-1, 0], [0, 1], [0, -1]].every(([a, b]) => g.classes[0]!.some((o) => o[0] === a && o[1] === b));
  return {
    single: nc === 1, period, cls, deg, start, delta, tdeg, rstart, rdelta,
    maxDeg: Math.max(...deg), reach: g.reach, eulerian: deg.every((d, c) => indeg[c] === d), square: sq,
  };
}

export const classAt = (k: LatticeKernel, i: number): number => (k.single ? 0 : k.cls[i % k.period]!);

/**
 * A stack of unstable cells over the whole grid. Each cell is on the stack at most once (it is pushed
 * when its height crosses its threshold, and stays unstable until popped), so the stack never holds
 * more than the grid's cells; it starts small and doubles on demand.
 */
export class UnstableStack {
  data: Int32Array;
  sp = 0;
  /** set by relaxSome when it met cells below `lo` / at or above `hi` that became unstable (left to their owner) */
  spilledLow = false;
  spilledHigh = false;
  constructor(capacity = 1 << 16) {
    this.data = new Int32Array(capacity);
  }
  reserve(extra: number): void {
    if (this.sp + extra <= this.data.length) return;
    let cap = this.data.length * 2;
    while (cap < this.sp + extra) cap *= 2;
    const d = new Int32Array(cap);
    d.set(this.data.subarray(0, this.sp));
    this.data = d;
  }
}

/** Pushes every unstable non-guard cell (after seeding, growth or a resume). */
export function pushAllUnstable(grid: ScaleGrid, k: LatticeKernel, stack: UnstableStack): void {
  stack.sp = 0;
  // guard cells are frozen far below any threshold, so whole rows can be scanned
  pushUnstableRows(grid.h, grid.W, k, grid.guard, grid.H - grid.guard, stack);
}

/** Pushes the unstable cells of rows y0 .. y1 - 1 of a width-W array, in array order, without a branch per cell. */
export function pushUnstableRows(h: Int32Array, W: number, k: LatticeKernel, y0: number, y1: number, stack: UnstableStack): void {
  const { single, deg, cls, period } = k;
  const d0 = deg[0]!;
  for (let y = y0; y < y1; y++) {
    const row = y * W;
    stack.reserve(W + 1); // + 1: the slot after the last is written before the count moves
    const data = stack.data;
    let sp = stack.sp;
    if (single)
      for (let i = row, e = row + W; i < e; i++) {
        data[sp] = i;
        sp += +(h[i]! >= d0);
      }
    else
      for (let i = row, e = row + W; i < e; i++) {
        data[sp] = i;
        sp += +(h[i]! >= deg[cls[i % period]!]!);
      }
    stack.sp = sp;
  }
}

/** True when some guard cell's real height reached its threshold: the pile touched the edge. */
export function guardUnstable(grid: ScaleGrid, k: LatticeKernel): boolean {
  const h = grid.h;
  let hit = false;
  forEachGuard(grid, (i) => {
    if (h[i]! + FROZEN >= k.deg[classAt(k, i)]!) hit = true;
  });
  return hit;
}

/**
 * Pops and topples up to `budget` cells (each k = floor(h / deg) times at once). Returns the number
 * of toppling events; the stack is empty when the grid is stable apart from its frozen guard.
 * Only cells with index in [lo, hi) are toppled (a strip of rows, strips.ts): a neighbour outside that
 * becomes unstable is popped and left alone, and `stack.spilledLow` / `spilledHigh` say it happened.
 */
export function relaxSome(grid: Pick<ScaleGrid, 'h' | 'od' | 'W'>, k: LatticeKernel, stack: UnstableStack, budget: number, lo = 0, hi = grid.h.length): number {
  if (k.square) return relaxSquare(grid.h, grid.od, grid.W, stack, budget, lo, hi);
  return relaxGeneric(grid.h, grid.od, k, stack, budget, lo, hi);
}

function relaxSquare(h: Int32Array, od: OdometerArray, W: number, stack: UnstableStack, budget: number, lo: number, hi: number): number {
  // each toppling may push its four neighbours: keep room for them so the pushes need no test
  let data = stack.data;
  let sp = stack.sp;
  let events = 0;
  while (sp > 0 && events < budget) {
    if (sp + 4 > data.length) {
      stack.sp = sp;
      stack.reserve(4);
      data = stack.data;
    }
    const i = data[--sp]!;
    // one well-predicted test: outside the strip (rare, at its edges) belongs to a neighbouring strip
    if (i < lo || i >= hi) {
      if (i < lo) stack.spilledLow = true;
      else stack.spilledHigh = true;
      continue;
    }
    const v = h[i]!;
    if (v < 4) continue;
    const t = v >> 2;
    h[i] = v & 3;
    od[i] += t;
    events++;
    // push j when b < 4 <= b + t, without a branch: the write always happens, the count moves by 0 or 1
    let j = i - 1, b = h[j]!;
    h[j] = b + t;
    data[sp] = j;
    sp += ((b - 4) & (3 - b - t)) >>> 31;
    j = i + 1; b = h[j]!;
    h[j] = b + t;
    data[sp] = j;
    sp += ((b - 4) & (3 - b - t)) >>> 31;
    j = i - W; b = h[j]!;
    h[j] = b + t;
    data[sp] = j;
    sp += ((b - 4) & (3 - b - t)) >>> 31;
    j = i + W; b = h[j]!;
    h[j] = b + t;
    data[sp] = j;
    sp += ((b - 4) & (3 - b - t)) >>> 31;
  }
  stack.sp = sp;
  return events;
}

function relaxGeneric(h: Int32Array, od: OdometerArray, k: LatticeKernel, stack: UnstableStack, budget: number, lo: number, hi: number): number {
  const { single, period, cls, deg, start, delta, tdeg, maxDeg } = k;
  let data = stack.data;
  let sp = stack.sp;
  let events = 0;
  while (sp > 0 && events < budget) {
    if (sp + maxDeg > data.length) {
      stack.sp = sp;
      stack.reserve(maxDeg);
      data = stack.data;
    }
    const i = data[--sp]!;
    if (i < lo || i >= hi) {
      if (i < lo) stack.spilledLow = true;
      else stack.spilledHigh = true;
      continue;
    }
    const c = single ? 0 : cls[i % period]!;
    const d = deg[c]!;
    const v = h[i]!;
    if (v < d) continue;
    const t = (v - (v % d)) / d;
    h[i] = v - t * d;
    od[i] += t;
    events++;
    for (let e = start[c]!, e1 = start[c + 1]!; e < e1; e++) {
      const j = i + delta[e]!;
      const b = h[j]!;
      h[j] = b + t;
      const dj = tdeg[e]!;
      // push when b < dj <= b + t, without a branch (see relaxSquare)
      data[sp] = j;
      sp += ((b - dj) & (dj - 1 - b - t)) >>> 31;
    }
  }
  stack.sp = sp;
  return events;
}
