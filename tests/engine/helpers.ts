import type { RunSpecInput } from '../../shared/run-spec.js';
import { resolveProblem, type Outcome } from '../../renderer/src/engine/index.js';
import type { Uploads } from '../../renderer/src/engine/problem.js';

export function problem(spec: Partial<RunSpecInput> & { lattice: RunSpecInput['lattice']; chips: number }, uploads?: Uploads) {
  return resolveProblem({ sources: [], background: { kind: 'constant', height: 0 }, ...spec } as never, uploads);
}

/** Height at lattice coordinates (x, y, z) of an outcome, or undefined outside its arrays. */
export function heightAt(o: Outcome, x: number, y = 0, z = 0): number | undefined {
  const idx = indexOf(o, x, y, z);
  return idx === undefined ? undefined : o.heights[idx];
}

export function odometerAt(o: Outcome, x: number, y = 0, z = 0): number {
  const idx = indexOf(o, x, y, z);
  return idx === undefined ? 0 : o.odometer[idx]!;
}

function indexOf(o: Outcome, x: number, y: number, z: number): number | undefined {
  const d = o.shape.length;
  const W = o.shape[d - 1]!, H = d >= 2 ? o.shape[d - 2]! : 1, D = d === 3 ? o.shape[0]! : 1;
  const ox = o.origin[d - 1]!, oy = d >= 2 ? o.origin[d - 2]! : 0, oz = d === 3 ? o.origin[0]! : 0;
  const i = x + ox, j = y + oy, k = z + oz;
  if (i < 0 || i >= W || j < 0 || j >= H || k < 0 || k >= D) return undefined;
  return (k * H + j) * W + i;
}

/** Lattice coordinates of every array element, with a callback. */
export function forEachSite(o: Outcome, f: (x: number, y: number, z: number, i: number) => void): void {
  const d = o.shape.length;
  const W = o.shape[d - 1]!, H = d >= 2 ? o.shape[d - 2]! : 1, D = d === 3 ? o.shape[0]! : 1;
  const ox = o.origin[d - 1]!, oy = d >= 2 ? o.origin[d - 2]! : 0, oz = d === 3 ? o.origin[0]! : 0;
  for (let k = 0; k < D; k++) for (let j = 0; j < H; j++) for (let i = 0; i < W; i++) f(i - ox, j - oy, k - oz, (k * H + j) * W + i);
}

/** Everything two outcomes must share bit for bit (all but the timing). */
export function comparable(o: Outcome) {
  const { seconds: _seconds, ...stats } = o.stats;
  return { shape: o.shape, origin: o.origin, heights: Array.from(o.heights), odometer: Array.from(o.odometer), toppled: Array.from(o.toppled), stats };
}
