/**
 * The peeling test (renderer/src/scale/peel.ts) against its definition, computed the slow way: start
 * from S = the toppled cells (of the window), and as long as some x in S has h(x) ≥ (edges from S
 * into x), take x out of S; what is left is S* (a burning-type test as in Dhar's burning algorithm,
 * Dhar, Phys. Rev. Lett. 64, 1613 (1990); the fixed point does not depend on the order of removal,
 * common practice). Random heights and odometers on every planar preset and an uploaded-style
 * lattice with two classes, with and without a window: the sets must be the same cell for cell.
 */
import { describe, expect, it } from 'vitest';
import { latticeKernel, UnstableStack, classAt, type LatticeKernel } from '../../renderer/src/scale/kernel.js';
import { peel, type Window } from '../../renderer/src/scale/peel.js';
import { problem } from '../engine/helpers.js';

function mulberry32(seed: number) {
  return () => {
    seed = (seed + 0x6d2b79f5) | 0;
    let t = Math.imul(seed ^ (seed >>> 15), 1 | seed);
    t = (t + Math.imul(t ^ (t >>> 7), 61 | t)) ^ t;
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/** The definition, by repeated passes until nothing changes. */
function peelSlowly(h: Int32Array, od: Float64Array, k: LatticeKernel, W: number, win: Window | null): number[] {
  const H = h.length / W;
  const inWin = (i: number) => {
    const x = i % W, y = Math.floor(i / W);
    return win ? x >= win.x0 && x <= win.x1 && y >= win.y0 && y <= win.y1 : x >= 0 && y >= 0 && y < H;
  };
  const S = new Set<number>();
  for (let i = 0; i < h.length; i++) if (od[i]! > 0 && inWin(i)) S.add(i);
  const edgesInto = (x: number) => {
    let n = 0;
    for (const y of S) {
      const c = classAt(k, y);
      for (let e = k.start[c]!; e < k.start[c + 1]!; e++) if (y + k.delta[e]! === x) n++;
    }
    return n;
  };
  for (let changed = true; changed; ) {
    changed = false;
    for (const x of [...S]) if (h[x]! >= edgesInto(x)) ((S.delete(x)), (changed = true));
  }
  return [...S].sort((a, b) => a - b);
}

describe('peel', () => {
  const presets = ['square', 'triangular', 'honeycomb', 'f-lattice', 'manhattan'];
  for (const preset of presets)
    it(`${preset}: the same S* as the definition, on 12 random states, whole array and windowed`, () => {
      const g = problem({ lattice: { preset }, chips: 10 }).lattice;
      const W = 24, H = 20, M = 3; // toppled cells at least M from the edges (M ≥ reach)
      const rnd = mulberry32(7 + preset.length);
      let nonEmpty = 0;
      for (let trial = 0; trial < 12; trial++) {
        const k = latticeKernel(g, W, 11, 9);
        const h = new Int32Array(W * H), od = new Float64Array(W * H);
        for (let y = M; y < H - M; y++)
          for (let x = M; x < W - M; x++) {
            const i = y * W + x;
            h[i] = Math.floor(rnd() * k.deg[classAt(k, i)]!);
            od[i] = rnd() < 0.8 ? 1 + Math.floor(rnd() * 3) : 0;
          }
        const win: Window = { W, x0: M + 2, x1: W - M - 4, y0: M + 1, y1: H - M - 3 };
        for (const w of [null, win])
          // a drain stack of 1 or 3 cells: most cascades overflow it and are finished by more sweeps
          for (const cap of [undefined, 1, 3]) {
            const stack = new UnstableStack(4);
            const n = peel(h, od, k, stack, new Uint8Array(h.length), w ?? undefined, cap);
            const got = Array.from(stack.data.subarray(0, n)).sort((a, b) => a - b);
            expect(got, `cap ${cap}`).toEqual(peelSlowly(h, od, k, W, w));
            if (n > 0) nonEmpty++;
          }
      }
      // random states keep some cells that cannot be peeled: the comparison is not only of empty sets
      expect(nonEmpty).toBeGreaterThan(0);
    });
});
