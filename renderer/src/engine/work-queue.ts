import { PENDING_FULL } from './kernel.js';

/** A phase's tiles in shared memory: [next, count, tile0, mode0, tile1, mode1, ...]. */
export function makeWork(tiles: number[], modes: number[]): Int32Array {
  const w = new Int32Array(new SharedArrayBuffer(4 * (2 + 2 * tiles.length)));
  w[1] = tiles.length;
  for (let k = 0; k < tiles.length; k++) ((w[2 + 2 * k] = tiles[k]!), (w[3 + 2 * k] = modes[k]!));
  return w;
}

/** Takes tiles until none are left (Atomics.add hands each tile to exactly one thread). */
export function drainWork(w: Int32Array, relax: (tile: number, full: boolean) => number): number {
  let events = 0;
  const n = w[1]!;
  for (;;) {
    const k = Atomics.add(w, 0, 1);
    if (k >= n) return events;
    events += relax(w[2 + 2 * k]!, w[3 + 2 * k] === PENDING_FULL);
  }
}
