import { NotStabilizedError } from './errors.js';
import { classOf } from './lattice.js';
import { DEFAULT_MAX_SITES } from './limits.js';
import { buildOutcome, type Outcome } from './outcome.js';
import { certify } from '../scale/certificate.js';
import type { Problem } from './problem.js';

const SPAN = 2 ** 16;
const key = (x: number, y: number, z: number) => ((x + SPAN) * 2 * SPAN + (y + SPAN)) * 2 * SPAN + (z + SPAN);

/**
 * The plainest legal toppling order: a first-in first-out queue of unstable sites, one toppling at a
 * time, sites kept in a hash map. Deliberately shares no code with the tiled kernel, so the abelian
 * property tests compare two independent implementations. Meant for small runs (|coordinates| < 2^16).
 */
export function stabilizeReference(problem: Problem, options: { maxSites?: number } = {}): Outcome {
  const t0 = performance.now();
  const maxSites = options.maxSites ?? DEFAULT_MAX_SITES;
  const g = problem.lattice;
  const bg = problem.background;
  const height = new Map<number, number>();
  const fired = new Map<number, number>();
  const coords = new Map<number, [number, number, number]>();
  const queue: number[] = [];
  let head = 0;
  const touch = (x: number, y: number, z: number): number => {
    if (Math.abs(x) >= SPAN || Math.abs(y) >= SPAN || Math.abs(z) >= SPAN) throw new NotStabilizedError(maxSites);
    const k = key(x, y, z);
    if (!height.has(k)) {
      if (height.size >= maxSites) throw new NotStabilizedError(maxSites);
      height.set(k, bg.heightAt(x, y, z));
      coords.set(k, [x, y, z]);
    }
    return k;
  };
  const enqueueIfUnstable = (k: number) => {
    const [x, y, z] = coords.get(k)!;
    if (height.get(k)! >= g.classes[classOf(g, x, y, z)]!.length) queue.push(k);
  };
  // an uploaded array may hold unstable sites of its own
  if (bg.extent) {
    const [[ax0, ax1], [ay0, ay1], [az0, az1]] = bg.extent;
    for (let z = az0; z <= az1; z++) for (let y = ay0; y <= ay1; y++) for (let x = ax0; x <= ax1; x++) enqueueIfUnstable(touch(x, y, z));
  }
  touch(0, 0, 0);
  for (const s of problem.sources) {
    const k = touch(...s.at);
    height.set(k, height.get(k)! + s.chips);
    enqueueIfUnstable(k);
  }
  while (head < queue.length) {
    const k = queue[head++]!;
    const [x, y, z] = coords.get(k)!;
    const offs = g.classes[classOf(g, x, y, z)]!;
    const v = height.get(k)!;
    if (v < offs.length) continue; // a stale duplicate entry
    height.set(k, v - offs.length);
    fired.set(k, (fired.get(k) ?? 0) + 1);
    for (const [dx, dy, dz] of offs) {
      const j = touch(x + dx, y + dy, z + dz);
      height.set(j, height.get(j)! + 1);
      enqueueIfUnstable(j);
    }
    enqueueIfUnstable(k);
    if (head > 1 << 20) {
      queue.splice(0, head);
      head = 0;
    }
  }
  // lay the touched sites out as a dense box for the shared statistics
  let x0 = 0, x1 = 0, y0 = 0, y1 = 0, z0 = 0, z1 = 0;
  for (const [x, y, z] of coords.values()) {
    x0 = Math.min(x0, x); x1 = Math.max(x1, x);
    y0 = Math.min(y0, y); y1 = Math.max(y1, y);
    z0 = Math.min(z0, z); z1 = Math.max(z1, z);
  }
  const nx = x1 - x0 + 1, ny = y1 - y0 + 1, nz = z1 - z0 + 1;
  const heights = new Float64Array(nx * ny * nz);
  const odometer = new Float64Array(nx * ny * nz);
  for (let z = 0; z < nz; z++)
    for (let y = 0; y < ny; y++)
      for (let x = 0; x < nx; x++) {
        const k = key(x + x0, y + y0, z + z0);
        const i = (z * ny + y) * nx + x;
        heights[i] = height.get(k) ?? bg.heightAt(x + x0, y + y0, z + z0);
        odometer[i] = fired.get(k) ?? 0;
      }
  const outcome = buildOutcome(problem, { nx, ny, nz, ox: -x0, oy: -y0, oz: -z0, heights, odometer }, (performance.now() - t0) / 1000);
  outcome.stats.certificate = certify(problem, outcome, { method: 'legal' });
  return outcome;
}
