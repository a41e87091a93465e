import type { OdometerArray } from '../engine/outcome.js';
import { pushUnstableRows, relaxSome, type LatticeKernel, type UnstableStack } from './kernel.js';

/**
 * One visit of one strip of rows, shared by the driver (strips.ts) and its worker threads: push the
 * strip's unstable cells, then topple cells of the strip only, with the one-stack kernel. Pure: typed
 * arrays in, counts out.
 */

/** What a visit must look for: every row, or only the rows next to a neighbouring strip. */
export const SCAN_ALL = 1;
export const SCAN_TOP = 2;
export const SCAN_BOTTOM = 4;

/** Result flags of a visit: cells of the strip above / below became unstable; the budget ran out; it took place. */
export const SPILL_UP = 1;
export const SPILL_DOWN = 2;
export const UNFINISHED = 4;
export const VISITED = 8;

/**
 * A phase's visits in shared memory: [claimed, count, taken from the front, taken from the back, then
 * per visit ITEM ints]. Strips are listed in order and one thread takes them from the front, the
 * others from the back, so each thread tends to stay on the same part of the grid from one phase to
 * the next (its cache keeps the rows).
 */
export const ITEM = 6;
const HEAD = 4;
const STRIP = 0, MODE = 1, E0 = 2, E1 = 3, EVENTS = 4, FLAGS = 5;

export interface StripDomain {
  h: Int32Array;
  od: OdometerArray;
  W: number;
  k: LatticeKernel;
  /** strip s is rows bounds[s] .. bounds[s + 1] - 1 */
  bounds: Int32Array;
}

/** Room for a phase's visits of `strips` strips. */
export const visitsFor = (strips: number) => new Int32Array(new SharedArrayBuffer(4 * (HEAD + ITEM * strips)));

/** Lists a phase's visits in `w` (from visitsFor) and resets its counters. */
export function setVisits(w: Int32Array, strips: number[], modes: number[], extraFrom: number[], extraTo: number[]): void {
  w[0] = w[2] = w[3] = 0;
  w[1] = strips.length;
  strips.forEach((s, q) => {
    const o = HEAD + ITEM * q;
    w[o + STRIP] = s;
    w[o + MODE] = modes[q]!;
    w[o + E0] = extraFrom[q]!;
    w[o + E1] = extraTo[q]!;
    w[o + EVENTS] = w[o + FLAGS] = 0;
  });
}

export const visitOf = (w: Int32Array, q: number) => {
  const o = HEAD + ITEM * q;
  return { strip: w[o + STRIP]!, events: w[o + EVENTS]!, flags: w[o + FLAGS]! };
};

/**
 * Relaxes strip `s`: finds its unstable cells (all rows, or the `reach` rows next to a neighbour that
 * spilled into it, plus `extra[e0 .. e1)`), then topples cells of the strip until it is stable or
 * `budget` events were done. Returns events and flags.
 */
export function visitStrip(d: StripDomain, s: number, mode: number, extra: Int32Array, e0: number, e1: number, stack: UnstableStack, budget: number): { events: number; flags: number } {
  const y0 = d.bounds[s]!, y1 = d.bounds[s + 1]!;
  stack.sp = 0;
  stack.spilledLow = stack.spilledHigh = false;
  if (mode & SCAN_ALL) pushUnstableRows(d.h, d.W, d.k, y0, y1, stack);
  else {
    const r = d.k.reach;
    if (mode & SCAN_TOP) pushUnstableRows(d.h, d.W, d.k, y0, Math.min(y1, y0 + r), stack);
    if (mode & SCAN_BOTTOM) pushUnstableRows(d.h, d.W, d.k, Math.max(y0 + ((mode & SCAN_TOP) ? r : 0), y1 - r), y1, stack);
  }
  if (e1 > e0) {
    stack.reserve(e1 - e0);
    for (let q = e0; q < e1; q++) stack.data[stack.sp++] = extra[q]!;
  }
  const events = relaxSome(d, d.k, stack, budget, y0 * d.W, y1 * d.W);
  let flags = (stack.spilledLow ? SPILL_UP : 0) | (stack.spilledHigh ? SPILL_DOWN : 0);
  // cells still on the stack are dropped: the strip is scanned whole next time, and its neighbours'
  // edge rows too (the dropped cells may include theirs)
  if (stack.sp > 0) flags |= UNFINISHED | SPILL_UP | SPILL_DOWN;
  stack.sp = 0;
  return { events, flags };
}

/**
 * Takes visits until none are left or the phase's deadline (Date.now() milliseconds in `deadline[0]`)
 * has passed, and records their results: a claim (Atomics.add on the count of claimed visits)
 * entitles a thread to one more visit from its end, so the two ends never meet. Visits left unclaimed
 * at the deadline keep VISITED clear; the driver lists them again.
 */
export function drainVisits(d: StripDomain, w: Int32Array, extra: Int32Array, stack: UnstableStack, budget: number, deadline: Float64Array, fromBack = false): void {
  const n = w[1]!;
  for (;;) {
    if (Date.now() > deadline[0]!) return;
    if (Atomics.add(w, 0, 1) >= n) return;
    const q = fromBack ? n - 1 - Atomics.add(w, 3, 1) : Atomics.add(w, 2, 1);
    const o = HEAD + ITEM * q;
    const r = visitStrip(d, w[o + STRIP]!, w[o + MODE]!, extra, w[o + E0]!, w[o + E1]!, stack, budget);
    w[o + EVENTS] = r.events;
    w[o + FLAGS] = r.flags | VISITED;
  }
}

/**
 * Phase handshake between the driver and its workers, in shared memory: the driver bumps GEN to start
 * a phase (or to stop, with STOP set), each worker drains the visits and adds one to DONE.
 */
export const GEN = 0, DONE = 1, STOP = 2, FAILED = 3;

/** A worker's side: waits for phases and drains them until told to stop (blocks its thread meanwhile). */
export function serveStrips(d: StripDomain, ctl: Int32Array, visits: Int32Array, extra: Int32Array, deadline: Float64Array, stack: UnstableStack, budget: number): void {
  let gen = 0;
  for (;;) {
    Atomics.wait(ctl, GEN, gen);
    gen = Atomics.load(ctl, GEN);
    if (Atomics.load(ctl, STOP)) return;
    try {
      drainVisits(d, visits, extra, stack, budget, deadline, true);
    } catch (err) {
      Atomics.store(ctl, FAILED, 1);
      throw err;
    } finally {
      Atomics.add(ctl, DONE, 1);
      Atomics.notify(ctl, DONE);
    }
  }
}
