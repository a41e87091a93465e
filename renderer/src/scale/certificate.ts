import type { Certificate } from '../../../shared/run-stats.js';
import type { Outcome } from '../engine/outcome.js';
import type { Problem } from '../engine/problem.js';
import { classAt, latticeKernel, UnstableStack } from './kernel.js';
import { peel } from './peel.js';

/**
 * The certificate of a finished run, computed from its final arrays alone (any engine): heights below
 * threshold and non-negative, grains conserved, every height explained by the odometer, odometer
 * minimal by the peeling test (see peel.ts).
 * Sites outside the arrays never changed (outcomes cover every toppled site plus the band its grains
 * reach), so the arrays are all that needs checking.
 */
export function certify(
  problem: Problem,
  o: Outcome,
  extra: { method: Certificate['method']; repairRounds?: number; scratch?: { stack: UnstableStack; mark?: Uint8Array } },
): Certificate {
  const g = problem.lattice;
  const d = o.shape.length;
  const W = o.shape[d - 1]!, H = d >= 2 ? o.shape[d - 2]! : 1;
  const ox = o.origin[d - 1]!, oy = d >= 2 ? o.origin[d - 2]! : 0, oz = d === 3 ? o.origin[0]! : 0;
  const k = latticeKernel(g, W, ox, oy, H);
  const { heights: h, odometer: od } = o;
  let stable = true;
  let nonNegative = true;
  let mass = 0n;
  let small = 0;
  const bg = problem.background;
  const D = h.length / (W * H);
  const n = h.length;
  // each height must be its start plus the grains added there, minus deg·u, plus u over its in-edges:
  // this ties the odometer's values to the heights (mass and minimality read only heights and u > 0).
  // checkTiledSnapshot (engine/tiled-resume.ts) checks the same balance with bounds per in-edge, on
  // boxes without the reach margin an outcome has; here index arithmetic keeps it one pass at 10^9
  const added = new Map<number, number>();
  for (const s of problem.sources) {
    if (s.chips === 0) continue;
    const i = ((s.at[2] + oz) * H + s.at[1] + oy) * W + s.at[0] + ox;
    added.set(i, (added.get(i) ?? 0) + s.chips);
  }
  let odometerMatches = true;
  let sourcesMatched = 0;
  const { rstart, rdelta, deg } = k;
  for (let z = 0; z < D; z++)
    for (let y = 0; y < H; y++) {
      const row = (z * H + y) * W;
      for (let x = 0; x < W; x++) {
        const i = row + x;
        const v = h[i]!;
        const c = classAt(k, i);
        if (v >= deg[c]!) stable = false;
        if (v < 0) nonNegative = false;
        const start = bg.uniform ?? bg.heightAt(x - ox, y - oy, z - oz);
        small += v - start;
        // toppled sites lie the lattice's reach inside the arrays, so an in-edge that wraps to another
        // row reads an untoppled cell (0), and one past either end contributes nothing
        let moved = -deg[c]! * od[i]!;
        for (let e = rstart[c]!, e1 = rstart[c + 1]!; e < e1; e++) {
          const j = i + rdelta[e]!;
          if (j >= 0 && j < n) moved += od[j]!;
        }
        const diff = v - start - moved;
        if (diff !== 0) {
          if (added.get(i) === diff) sourcesMatched++;
          else odometerMatches = false;
        }
        if (small > 2 ** 52 || small < -(2 ** 52)) ((mass += BigInt(small)), (small = 0));
      }
    }
  mass += BigInt(small);
  const massConserved = mass === problem.grainsIn;
  if (sourcesMatched !== added.size) odometerMatches = false;
  let minimal: boolean | null = null;
  let peeledSites = 0;
  if (k.eulerian) {
    // a caller that already holds a big enough stack and mark lends them (peak memory at 10^8: the
    // peeling queue alone is 4 bytes per toppled site)
    const stack = extra.scratch?.stack ?? new UnstableStack();
    const lent = extra.scratch?.mark;
    peeledSites = peel(h, od, k, stack, lent && lent.length >= h.length ? lent.subarray(0, h.length) : new Uint8Array(h.length));
    stack.sp = 0;
    minimal = peeledSites === 0;
  }
  const passed = stable && nonNegative && massConserved && odometerMatches && minimal !== false;
  return { stable, nonNegative, massConserved, odometerMatches, minimal, peeledSites, repairRounds: extra.repairRounds ?? 0, method: extra.method, passed };
}
