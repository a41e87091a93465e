import { classOf, type LatticeGraph } from './lattice.js';
import type { Problem } from './problem.js';
import { SnapshotError, type TiledSnapshot } from './snapshot.js';
import { tileDims } from './tiling.js';

/** In-offsets per class: site x of class c receives a grain from x − o for each o listed. */
function inOffsets(g: LatticeGraph): (readonly [number, number, number])[][] {
  const [px, py] = g.period;
  const out: (readonly [number, number, number])[][] = g.classes.map(() => []);
  g.classes.forEach((offs, c) => {
    const cx = c % px, cy = Math.floor(c / px) % py, cz = Math.floor(c / (px * py));
    for (const o of offs) out[classOf(g, cx + o[0], cy + o[1], cz + o[2])]!.push(o);
  });
  return out;
}

/**
 * Checks a tiled snapshot against the problem beyond its key (snapshot.ts checkSnapshot): the box's
 * shape, the reserves, and the balance of every site,
 *   h(x) = background(x) + grains added at x − grains still in its reserve − deg(x)·u(x) + Σ u(y) over edges y → x,
 * with u the odometer: every toppling keeps it, so a damaged or foreign state fails it (and heights and
 * odometer must be non-negative integers). One pass over the box, a few times cheaper than relaxing it.
 * @throws SnapshotError naming the first disagreement.
 */
export function checkTiledSnapshot(p: Problem, s: TiledSnapshot): void {
  const g = p.lattice;
  const dim = g.dim;
  const T = tileDims(dim);
  const n = [s.tiles[0] * T[0], s.tiles[1] * T[1], s.tiles[2] * T[2]] as const;
  for (let a: number = dim; a < 3; a++)
    if (s.tiles[a] !== 1 || s.origin[a] !== 0) throw new SnapshotError(`the checkpoint's box does not fit a ${dim}-dimensional lattice`);
  for (let a = 0; a < dim; a++)
    if (s.origin[a]! < 0 || s.origin[a]! >= n[a]!) throw new SnapshotError("the checkpoint's box does not hold the origin");
  const [nx, ny, nz] = n;
  const [ox, oy, oz] = s.origin;
  if (s.h.length !== nx * ny * nz || s.od.length !== s.h.length) throw new SnapshotError("the checkpoint's arrays do not fill its box");
  const inside = (x: number, y: number, z: number) => x + ox >= 0 && x + ox < nx && y + oy >= 0 && y + oy < ny && z + oz >= 0 && z + oz < nz;
  const index = (x: number, y: number, z: number) => ((z + oz) * ny + (y + oy)) * nx + (x + ox);

  // grains added minus grains still waiting, per site (sources and an upload's tall sites)
  const added = new Map<number, number>();
  const bump = (i: number, v: number) => added.set(i, (added.get(i) ?? 0) + v);
  for (const src of p.sources) {
    if (src.chips === 0) continue;
    if (!inside(...src.at)) throw new SnapshotError(`the checkpoint's box does not hold the source at [${src.at.slice(0, dim).join(', ')}]`);
    bump(index(...src.at), src.chips);
  }
  const r = s.reserves;
  for (let k = 0; k < r.length; k += 4) {
    const x = r[k]!, y = r[k + 1]!, z = r[k + 2]!, left = r[k + 3]!;
    if (![x, y, z, left].every(Number.isSafeInteger) || left < 0 || !inside(x, y, z)) throw new SnapshotError(`the checkpoint's reserve ${k / 4} is malformed`);
    bump(index(x, y, z), -left);
  }

  const ins = inOffsets(g);
  const bg = p.background;
  const { h, od } = s;
  for (let z = 0; z < nz; z++)
    for (let y = 0; y < ny; y++)
      for (let x = 0; x < nx; x++) {
        const i = (z * ny + y) * nx + x;
        const X = x - ox, Y = y - oy, Z = z - oz;
        const u = od[i]!;
        if (!(u >= 0 && Number.isSafeInteger(u)) || h[i]! < 0) throw new SnapshotError(`the checkpoint's state is damaged at [${[X, Y, Z].slice(0, dim).join(', ')}] (negative or fractional)`);
        const c = classOf(g, X, Y, Z);
        let expected = (bg.uniform ?? bg.heightAt(X, Y, Z)) + (added.get(i) ?? 0) - g.classes[c]!.length * u;
        for (const o of ins[c]!) {
          const sx = x - o[0], sy = y - o[1], sz = z - o[2];
          if (sx >= 0 && sx < nx && sy >= 0 && sy < ny && sz >= 0 && sz < nz) expected += od[(sz * ny + sy) * nx + sx]!;
        }
        if (h[i] !== expected)
          throw new SnapshotError(`the checkpoint's heights and odometer disagree at [${[X, Y, Z].slice(0, dim).join(', ')}]: it is damaged or belongs to another run`);
      }
}

/** Marks every tile that holds an unstable site as pending (a restored box starts with all tiles idle). */
export function pendingTilesOf(g: LatticeGraph, s: TiledSnapshot, mark: (i: number) => void): void {
  const T = tileDims(g.dim);
  const nx = s.tiles[0] * T[0], ny = s.tiles[1] * T[1], nz = s.tiles[2] * T[2];
  const [ox, oy, oz] = s.origin;
  const deg = g.classes.map((c) => c.length);
  const single = deg.length === 1;
  for (let z = 0; z < nz; z++)
    for (let y = 0; y < ny; y++) {
      const row = (z * ny + y) * nx;
      for (let x = 0; x < nx; x++) if (s.h[row + x]! >= deg[single ? 0 : classOf(g, x - ox, y - oy, z - oz)]!) mark(row + x);
    }
}
