import type { BackgroundField } from '../engine/background.js';
import type { LatticeGraph } from '../engine/lattice.js';
import type { OdometerArray } from '../engine/outcome.js';

/**
 * Guard cells carry their real height minus FROZEN, so no toppling can ever make them unstable: the
 * kernel needs no bounds test, and after a relaxation a guard cell whose real height reached its
 * threshold says the pile touched the edge and the box must grow.
 */
export const FROZEN = 2 ** 30;

/**
 * A dense planar working box of the fast path. Lattice site (X, Y) is array cell
 * (X + ox) + (Y + oy) * W. ox and oy are multiples of the lattice period and W is a multiple of px,
 * so the class of a cell depends only on its index modulo W * py (see LatticeKernel.cls). W and H are
 * multiples of 64 when the period divides 64 (tiles of the two-thread relaxation), and the arrays sit
 * on SharedArrayBuffers.
 * The outer `guard` rows and columns are frozen (see FROZEN). The odometer is 32-bit unsigned unless
 * the level's bound on it says otherwise (`wideOdometer`, scaled.ts): 8 instead of 12 bytes per cell.
 */
export interface ScaleGrid {
  W: number;
  H: number;
  ox: number;
  oy: number;
  guard: number;
  h: Int32Array;
  od: OdometerArray;
}

/** Lattice-coordinate box [x0, x1] x [y0, y1] of the sites that may topple. */
export interface Box {
  x0: number;
  x1: number;
  y0: number;
  y1: number;
}

const ceilTo = (v: number, m: number) => Math.ceil(v / m) * m;

/** Size and origin of the grid makeGrid allocates for `box` (so a caller can check it first). */
export function gridShape(g: LatticeGraph, box: Box): Pick<ScaleGrid, 'W' | 'H' | 'ox' | 'oy' | 'guard'> {
  const [px, py] = g.period;
  const guard = Math.max(1, g.reach);
  const ox = ceilTo(guard - box.x0, px);
  const oy = ceilTo(guard - box.y0, py);
  // whole 64 × 64 tiles where periods allow (the two-thread relaxation needs them; a few rows more otherwise)
  const mx = 64 % px === 0 ? 64 : px, my = 64 % py === 0 ? 64 : py;
  return { W: ceilTo(ox + box.x1 + 1 + guard, mx), H: ceilTo(oy + box.y1 + 1 + guard, my), ox, oy, guard };
}

/**
 * Allocates a grid whose non-guard cells cover `box` (grown to the period), filled with the
 * background; `wide`: a float64 odometer instead of uint32.
 */
export function makeGrid(g: LatticeGraph, bg: BackgroundField, box: Box, wide = false): ScaleGrid {
  const { W, H, ox, oy, guard } = gridShape(g, box);
  // shared, so worker threads can relax tiles of it in place
  const h = new Int32Array(new SharedArrayBuffer(4 * W * H));
  const od = wide ? new Float64Array(new SharedArrayBuffer(8 * W * H)) : new Uint32Array(new SharedArrayBuffer(4 * W * H));
  const grid: ScaleGrid = { W, H, ox, oy, guard, h, od };
  fillBackground(grid, bg);
  return grid;
}

function fillBackground(grid: ScaleGrid, bg: BackgroundField): void {
  const { W, H, ox, oy, h } = grid;
  if (bg.uniform !== undefined) h.fill(bg.uniform);
  else
    for (let y = 0; y < H; y++) {
      const row = y * W;
      for (let x = 0; x < W; x++) h[row + x] = bg.heightAt(x - ox, y - oy, 0);
    }
  freezeGuard(grid);
}

/** Runs f on every guard cell index. */
export function forEachGuard(grid: ScaleGrid, f: (i: number) => void): void {
  const { W, H, guard: G } = grid;
  for (let y = 0; y < H; y++) {
    const row = y * W;
    if (y < G || y >= H - G) for (let x = 0; x < W; x++) f(row + x);
    else {
      for (let x = 0; x < G; x++) f(row + x);
      for (let x = W - G; x < W; x++) f(row + x);
    }
  }
}

function freezeGuard(grid: ScaleGrid): void {
  const h = grid.h;
  forEachGuard(grid, (i) => (h[i] = h[i]! - FROZEN));
}

function thawGuard(grid: ScaleGrid): void {
  const h = grid.h;
  forEachGuard(grid, (i) => (h[i] = h[i]! + FROZEN));
}

/** The non-guard box of a grid, in lattice coordinates. */
export function innerBox(grid: ScaleGrid): Box {
  const { W, H, ox, oy, guard: G } = grid;
  return { x0: G - ox, x1: W - G - 1 - ox, y0: G - oy, y1: H - G - 1 - oy };
}

/**
 * A bigger grid holding the same state: the old cells are copied (guard cells thawed, so they may
 * topple now), the new cells get the background. Legal: delaying a toppling never changes the result.
 */
export function growGrid(g: LatticeGraph, bg: BackgroundField, grid: ScaleGrid, box: Box): ScaleGrid {
  const next = makeGrid(g, bg, box, isWide(grid));
  thawGuard(grid);
  const b = innerBox(grid);
  const G = grid.guard;
  for (let y = b.y0 - G; y <= b.y1 + G; y++) {
    const from = (y + grid.oy) * grid.W + (b.x0 - G + grid.ox);
    const to = (y + next.oy) * next.W + (b.x0 - G + next.ox);
    const len = b.x1 - b.x0 + 1 + 2 * G;
    next.h.set(grid.h.subarray(from, from + len), to);
    next.od.set(grid.od.subarray(from, from + len), to);
  }
  return next;
}

/** Whether the grid counts topplings in float64 (see ScaleGrid). */
export const isWide = (grid: Pick<ScaleGrid, 'od'>): boolean => grid.od instanceof Float64Array;
