import type { Background } from '../../../shared/run-spec.js';
import { ExplosionError } from './errors.js';
import { classOf, type LatticeGraph } from './lattice.js';
import type { Problem } from './problem.js';
import { reachesInfinity } from './quotient.js';

const gcd = (a: number, b: number): number => (b === 0 ? a : gcd(b, a % b));
const lcm = (a: number, b: number) => (a / gcd(a, b)) * b;

/** Period (x, y, z) of a periodic background, or undefined for random, annuli and uploads. */
function backgroundPeriod(bg: Background): [number, number, number] | undefined {
  switch (bg.kind) {
    case 'constant':
      return [1, 1, 1];
    case 'checkerboard':
      return [2, 2, 2];
    case 'motif':
      return [bg.cells[0]!.length, bg.cells.length, 1];
    default:
      return undefined;
  }
}

/**
 * Refuses runs that provably never stabilize (to a finite toppled set), before any work is done.
 * Everything else that grows without end is stopped by the site budget (NotStabilizedError).
 */
export function refuseExplosive(p: Problem, bg: Background): void {
  const g = p.lattice;
  const active = p.grainsIn > 0n;
  const period = backgroundPeriod(bg);
  if (period) {
    // scan one common period of lattice and background: each site there repeats infinitely often
    const [bx, by, bz] = period;
    const ext = [lcm(g.period[0], bx), g.dim >= 2 ? lcm(g.period[1], by) : 1, g.dim === 3 ? lcm(g.period[2], bz) : 1] as const;
    if (ext[0] * ext[1] * ext[2] <= 1 << 22) {
      let allMax = true;
      for (let z = 0; z < ext[2]; z++)
        for (let y = 0; y < ext[1]; y++)
          for (let x = 0; x < ext[0]; x++) {
            const h = p.background.heightAt(x, y, z);
            const d = g.classes[classOf(g, x, y, z)]!.length;
            if (h >= d) throw infinitelyUnstable(h, d, `(${x}, ${y}${g.dim === 3 ? `, ${z}` : ''})`);
            if (h !== d - 1) allMax = false;
          }
      if (allMax && active) throw allMaximal(g);
      if (active && ext[0] * ext[1] * ext[2] <= 1 << 16) refuseMaximalCluster(p, ext);
    }
    return;
  }
  if (bg.kind === 'random' || bg.kind === 'annuli') {
    // every recurring height meets every class infinitely often (a.s. for random; annuli widen without end)
    const heights = p.background.recurring ?? [];
    const degs = g.classes.map((c) => c.length);
    const minDeg = Math.min(...degs);
    const top = Math.max(...heights);
    if (top >= minDeg) throw infinitelyUnstable(top, minDeg, bg.kind === 'random' ? 'sites of a positive density' : 'every ring of one parity');
    if (active && heights.length === 1 && degs.every((d) => d === heights[0]! + 1)) throw allMaximal(g);
  }
}

function infinitelyUnstable(h: number, d: number, where: string): ExplosionError {
  return new ExplosionError(
    `background height ${h} at ${where} is at least the threshold ${d} there and recurs over the whole lattice, so infinitely many sites are unstable and the toppled set cannot be finite (common practice)`,
  );
}

function allMaximal(g: LatticeGraph): ExplosionError {
  return new ExplosionError(
    `the background is at the maximal stable height (threshold - 1) at every site of the ${g.name} lattice, so one added grain makes every site topple and the avalanche never stops ` +
      `(Fey, Levine & Peres, "Growth rates and explosions in sandpiles", J. Stat. Phys. 138 (2010), arXiv:0901.3805; ` +
      `Sadhu & Dhar, "Pattern formation in fast-growing sandpiles", arXiv:1109.2908: maximal-height sites forming an infinite cluster never stop)`,
  );
}

/**
 * Sadhu & Dhar (arXiv:1109.2908): when the sites at maximal stable height form an infinite cluster,
 * avalanches never stop. Decided exactly for a periodic background and a source on such a site: the
 * source topples, every maximal site it reaches along out-edges through maximal sites topples in turn,
 * and that set is infinite iff its periodic quotient has a closed walk with non-zero displacement.
 */
function refuseMaximalCluster(p: Problem, ext: readonly [number, number, number]): void {
  const g = p.lattice;
  const [ex, ey, ez] = ext;
  const m = (a: number, b: number) => ((a % b) + b) % b;
  const node = (x: number, y: number, z: number) => (m(z, ez) * ey + m(y, ey)) * ex + m(x, ex);
  const isMax = (x: number, y: number, z: number) => p.background.heightAt(m(x, ex), m(y, ey), m(z, ez)) === g.classes[classOf(g, x, y, z)]!.length - 1;
  // node -> a representative site (its coordinates inside the common period box)
  const site = (k: number): [number, number, number] => [k % ex, Math.floor(k / ex) % ey, Math.floor(k / (ex * ey))];
  const edges = (k: number) => {
    const [x, y, z] = site(k);
    return g.classes[classOf(g, x, y, z)]!
      .filter(([dx, dy, dz]) => isMax(x + dx, y + dy, z + dz))
      .map(([dx, dy, dz]) => ({ to: node(x + dx, y + dy, z + dz), off: [dx, dy, dz] }));
  };
  for (const s of p.sources) {
    const [x, y, z] = s.at;
    const offs = g.classes[classOf(g, x, y, z)]!;
    if (s.chips === 0 || p.background.heightAt(x, y, z) + s.chips < offs.length) continue;
    // the source topples; every maximal site it feeds, and every maximal site reached from there
    // through maximal sites, then topples in turn
    const fed = offs.filter(([dx, dy, dz]) => isMax(x + dx, y + dy, z + dz)).map(([dx, dy, dz]) => node(x + dx, y + dy, z + dz));
    if (fed.some((k) => reachesInfinity(k, edges)))
      throw new ExplosionError(
        `the source at (${s.at.slice(0, g.dim).join(', ')}) sits on an infinite cluster of sites at the maximal stable height, so its avalanche never stops ` +
          `(Sadhu & Dhar, "Pattern formation in fast-growing sandpiles", arXiv:1109.2908)`,
      );
  }
}
