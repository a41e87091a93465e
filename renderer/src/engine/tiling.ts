import type { KernelTables } from './kernel.js';
import { mod, type LatticeGraph } from './lattice.js';

/** Tile edge per dimension: 4096 sites per tile in every case (64 x 64 is the measured sweet spot in 2-D). */
export function tileDims(dim: 1 | 2 | 3): [number, number, number] {
  return dim === 1 ? [4096, 1, 1] : dim === 2 ? [64, 64, 1] : [16, 16, 16];
}

/** Flattens a lattice into the kernel's tables (edge lists per class, target classes, degrees). */
export function tablesFor(g: LatticeGraph): KernelTables {
  const [px, py, pz] = g.period;
  const n = g.classes.length;
  const start = new Int32Array(n + 1);
  for (let c = 0; c < n; c++) start[c + 1] = start[c]! + g.classes[c]!.length;
  const m = start[n]!;
  const dx = new Int32Array(m), dy = new Int32Array(m), dz = new Int32Array(m), tcls = new Int32Array(m);
  const deg = new Int32Array(n);
  for (let c = 0; c < n; c++) {
    const cx = c % px, cy = Math.floor(c / px) % py, cz = Math.floor(c / (px * py));
    deg[c] = g.classes[c]!.length;
    g.classes[c]!.forEach((o, k) => {
      const e = start[c]! + k;
      dx[e] = o[0];
      dy[e] = o[1];
      dz[e] = o[2];
      tcls[e] = (mod(cz + o[2], pz) * py + mod(cy + o[1], py)) * px + mod(cx + o[0], px);
    });
  }
  const square =
    n === 1 && g.dim === 2 && m === 4 && [[1, 0], [-1, 0], [0, 1], [0, -1]].every(([a, b]) => g.classes[0]!.some((o) => o[0] === a && o[1] === b && o[2] === 0));
  return { px, py, pz, start, dx, dy, dz, tcls, deg, reach: g.reach, square };
}
