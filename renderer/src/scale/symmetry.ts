import type { BackgroundField } from '../engine/background.js';
import { classOf, type LatticeGraph } from '../engine/lattice.js';
import { FROZEN, forEachGuard, gridShape, innerBox, isWide, makeGrid, type Box, type ScaleGrid } from './grid.js';
import type { UnstableStack } from './kernel.js';

/**
 * Mirror symmetry of a single-source run. Grains at the origin on a lattice and background that the
 * reflections X → −X, Y → −Y (and, for `octant`, X ↔ Y) map onto themselves give a final state and
 * odometer with the same symmetry (the odometer is the least function of its kind, and the mirror
 * image of that function is another one). So a level is relaxed on a quarter (X, Y ≥ 0) or an eighth
 * (0 ≤ Y ≤ X) of the plane: 4× or 8× fewer toppling events, exactly the same result. Lattices whose
 * mirrors are the diagonals instead, X ↔ Y and (X, Y) → (−Y, −X) (the triangular preset in its
 * coordinates), fold onto the `wedge` X ≥ |Y|, a quarter of the plane; a lattice with the mirror
 * X → −X only (the honeycomb preset's brick wall) onto the `half` X ≥ 0. Lattices with several classes
 * fold as well when each class's offsets, mirrored, are those of the mirrored site's class.
 *
 * Inside the grid, cells outside the fundamental domain are sinks: frozen, never toppled, their
 * grains thrown away. A domain cell next to them (the boundary) misses what its mirrored neighbours
 * send it; its true height is recomputed from the odometer (`restoreBoundary`) between batches of the
 * kernel. Until then its stored height is below the true one, so every toppling the kernel does is
 * legal and the abelian property makes the end exact.
 */
export type Fold = 'quadrant' | 'octant' | 'wedge' | 'half';

type Offsets = readonly (readonly number[])[];
const sameSet = (a: Offsets, b: Offsets) => {
  const key = (o: readonly number[]) => `${o[0]},${o[1]}`;
  const sa = a.map(key).sort(), sb = b.map(key).sort();
  return sa.length === sb.length && sa.every((v, i) => v === sb[i]);
};

/** The offsets of lattice site (X, Y) (its class's). */
const offsetsAt = (g: LatticeGraph, X: number, Y: number): Offsets => g.classes[classOf(g, X, Y, 0)]!;

/** The largest fold a run allows: planar lattice and its classes invariant under the mirrors, uniform background, grains at the origin. */
export function foldOf(g: LatticeGraph, bg: BackgroundField): Fold | null {
  if (g.dim !== 2 || bg.uniform === undefined) return null;
  // a linear map m is a symmetry when the offsets of every site, mapped, are those of its image
  // (checked over two periods each way, enough for the classes of both ends of every map)
  const P = 2 * Math.max(g.period[0], g.period[1]);
  const keeps = (m: (x: number, y: number) => [number, number]) => {
    for (let Y = -P; Y < P; Y++)
      for (let X = -P; X < P; X++) {
        const [a, b] = m(X, Y);
        if (!sameSet(offsetsAt(g, a, b), offsetsAt(g, X, Y).map(([x, y]) => m(x!, y!)))) return false;
      }
    return true;
  };
  const mx = keeps((x, y) => [-x, y]);
  const my = keeps((x, y) => [x, -y]);
  const swap = keeps((x, y) => [y, x]);
  if (mx && my) return swap ? 'octant' : 'quadrant';
  if (swap && keeps((x, y) => [-y, -x])) return 'wedge';
  return mx ? 'half' : null;
}

/** The image of lattice site (X, Y) in the fundamental domain. */
export function foldXY(f: Fold, X: number, Y: number): [number, number] {
  if (f === 'wedge') {
    if (X >= Math.abs(Y)) return [X, Y];
    if (Y >= Math.abs(X)) return [Y, X];
    return -X >= Math.abs(Y) ? [-X, -Y] : [-Y, -X];
  }
  if (f === 'half') return [Math.abs(X), Y];
  const a = Math.abs(X), b = Math.abs(Y);
  return f === 'octant' && b > a ? [b, a] : [a, b];
}

export const inDomain = (f: Fold, X: number, Y: number) =>
  f === 'wedge' ? X >= Math.abs(Y) : f === 'half' ? X >= 0 : X >= 0 && Y >= 0 && (f === 'quadrant' || Y <= X);

/** Sites of the domain's images of every site of `box` (grown to a square for the octant). */
export function foldBox(f: Fold, b: Box): Box {
  const x1 = Math.max(Math.abs(b.x0), Math.abs(b.x1)), y1 = Math.max(Math.abs(b.y0), Math.abs(b.y1));
  const m = Math.max(x1, y1);
  if (f === 'wedge') return { x0: 0, x1: m, y0: -m, y1: m };
  if (f === 'half') return { x0: 0, x1, y0: b.y0, y1: b.y1 };
  return f === 'octant' ? { x0: 0, x1: m, y0: 0, y1: m } : { x0: 0, x1, y0: 0, y1 };
}

/** Number of lattice sites site (X, Y) of the domain stands for. */
export function multiplicity(f: Fold, X: number, Y: number): number {
  if (f === 'wedge') return X === 0 && Y === 0 ? 1 : Math.abs(Y) === X ? 2 : 4;
  if (f === 'half') return X > 0 ? 2 : 1;
  let m = (X > 0 ? 2 : 1) * (Y > 0 ? 2 : 1);
  if (f === 'octant' && X !== Y) m *= 2;
  return m;
}

/** The domain's boundary cells and the cells whose odometers their in-neighbours stand for. */
export interface FoldedBoundary {
  fold: Fold;
  /** boundary cells (grid indices) and their thresholds */
  cells: Int32Array;
  deg: Int32Array;
  /** in-neighbours of cells[i]: sources[from[i] .. from[i + 1] - 1], grid indices in the domain */
  from: Int32Array;
  sources: Int32Array;
  /** sinks next to the domain, which receive grains and are reset to frozen */
  sinks: Int32Array;
  /** height of a cell before any toppling (uniform background), and the source's index and grains */
  base: number;
  origin: number;
  chips: number;
}

const cellOf = (grid: ScaleGrid, X: number, Y: number) => (Y + grid.oy) * grid.W + X + grid.ox;

/** Freezes every sink of a folded grid (height −FROZEN, odometer 0) and lists the boundary. */
export function foldGrid(grid: ScaleGrid, g: LatticeGraph, f: Fold, base: number, chips: number): FoldedBoundary {
  const { W, H, ox, oy, h, od } = grid;
  const cells: number[] = [], degs: number[] = [], from = [0], sources: number[] = [], sinks = new Set<number>();
  // in-neighbours of a site of class t: X − o for the offsets o that lead from their class to t
  const px = g.period[0];
  const into: [number, number][][] = g.classes.map(() => []);
  g.classes.forEach((offs, c) => {
    const cx = c % px, cy = (c - cx) / px;
    for (const o of offs) into[classOf(g, cx + o[0]!, cy + o[1]!, 0)]!.push([o[0]!, o[1]!]);
  });
  for (let y = 0; y < H; y++)
    for (let x = 0; x < W; x++) {
      const X = x - ox, Y = y - oy;
      const i = y * W + x;
      if (!inDomain(f, X, Y)) {
        h[i] = -FROZEN;
        od[i] = 0;
        continue;
      }
      // guard cells stay frozen (their mirrored neighbours are guard cells too, which never topple)
      if (x < grid.guard || y < grid.guard || x >= W - grid.guard || y >= H - grid.guard) continue;
      const offs = offsetsAt(g, X, Y);
      for (const o of offs) if (!inDomain(f, X + o[0]!, Y + o[1]!)) sinks.add(cellOf(grid, X + o[0]!, Y + o[1]!));
      // a cell with an in-neighbour outside the domain misses its grains: its height is restored
      const ins = into[classOf(g, X, Y, 0)]!;
      if (ins.every(([a, b]) => inDomain(f, X - a, Y - b))) continue;
      cells.push(i);
      degs.push(offs.length);
      // the in-neighbour's odometer is its image's (mirror symmetry)
      for (const [a, b] of ins) {
        const [fa, fb] = foldXY(f, X - a, Y - b);
        sources.push(cellOf(grid, fa, fb));
      }
      from.push(sources.length);
    }
  return {
    fold: f, cells: Int32Array.from(cells), deg: Int32Array.from(degs), from: Int32Array.from(from), sources: Int32Array.from(sources),
    sinks: Int32Array.from([...sinks].filter((i) => i >= 0 && i < h.length)), base, origin: cellOf(grid, 0, 0), chips,
  };
}

/**
 * Gives every boundary cell its true height (background + grains + what its in-neighbours toppled −
 * what it toppled) and empties the sinks. Pushes the cells that became unstable; returns how many.
 */
export function restoreBoundary(grid: ScaleGrid, fb: FoldedBoundary, stack: UnstableStack): number {
  const { h } = grid;
  for (let s = 0; s < fb.sinks.length; s++) h[fb.sinks[s]!] = -FROZEN;
  stack.reserve(fb.cells.length);
  let pushed = 0;
  for (let c = 0; c < fb.cells.length; c++) {
    const i = fb.cells[c]!;
    const d = fb.deg[c]!;
    const v = boundaryHeight(grid, fb, c);
    const old = h[i]!;
    h[i] = v;
    if (old < d && v >= d) (stack.data[stack.sp++] = i), pushed++;
  }
  return pushed;
}

/** The true height of boundary cell c of the fold (its odometer and its mirrored in-neighbours'), in doubles. */
function boundaryHeight({ od }: Pick<ScaleGrid, 'od'>, fb: FoldedBoundary, c: number): number {
  const i = fb.cells[c]!;
  let v = fb.base + (i === fb.origin ? fb.chips : 0) - fb.deg[c]! * od[i]!;
  for (let e = fb.from[c]!, e1 = fb.from[c + 1]!; e < e1; e++) v += od[fb.sources[e]!]!;
  return v;
}

/**
 * Whether the cells whose seeded height did not fit (applySeed) are all ones the fold takes care of:
 * outside the fundamental domain (frozen by foldGrid) or on its edge with a true height, counted with
 * the mirrored in-neighbours as restoreBoundary will, inside ±limit.
 */
export function unfitSeedHarmless(grid: ScaleGrid, fb: FoldedBoundary, unfit: readonly number[], limit: number): boolean {
  const at = new Map<number, number>();
  for (let c = 0; c < fb.cells.length; c++) at.set(fb.cells[c]!, c);
  return unfit.every((i) => {
    if (grid.h[i] === -FROZEN) return true;
    const c = at.get(i);
    return c !== undefined && Math.abs(boundaryHeight(grid, fb, c)) < limit;
  });
}

/**
 * Toppled lattice sites a folded grid stands for (progress). A row's cells share one multiplicity
 * except on the axis and the mirror line, so each row is counted with a plain loop and those one or
 * two cells corrected (a multiplicity per cell took 1.2–1.6 s on the 1.3·10^8 cells of square 10^9's
 * eighth, on every progress report). Cells outside the domain hold no topplings.
 */
export function countToppledFolded(grid: Pick<ScaleGrid, 'W' | 'H' | 'ox' | 'oy' | 'od'>, f: Fold): number {
  const { W, H, ox, oy, od } = grid;
  let n = 0;
  for (let y = 0; y < H; y++) {
    const Y = y - oy;
    const row = y * W;
    let c = 0;
    for (let i = row, e = row + W; i < e; i++) c += +(od[i] !== 0);
    if (c === 0) continue;
    // the multiplicity of a cell off the special ones: X > 0, off the mirror line
    const common = multiplicity(f, Math.abs(Y) === 1 ? 2 : 1, Y);
    n += common * c;
    const special = f === 'octant' ? [0, Y] : f === 'wedge' ? [0, Math.abs(Y)] : [0];
    for (let s = 0; s < special.length; s++) {
      const X = special[s]!;
      if (s > 0 && X === special[0]) continue;
      const x = X + ox;
      if (x >= 0 && x < W && od[row + x] !== 0) n += multiplicity(f, X, Y) - common;
    }
  }
  return n;
}

/** The whole-plane box a folded grid unfolds onto: the images of its non-guard cells. */
function unfoldedBox(grid: ScaleGrid, f: Fold): Box {
  // images fall inside the folded grid or on its far guard (frozen), never on its mirrored side
  const inner = innerBox(grid);
  const r = Math.max(inner.x1, inner.y1, -inner.y0);
  if (f === 'wedge') return { x0: -r, x1: r, y0: -r, y1: r };
  if (f === 'half') return { x0: -inner.x1, x1: inner.x1, y0: inner.y0, y1: inner.y1 };
  return { x0: -inner.x1, x1: inner.x1, y0: -inner.y1, y1: inner.y1 };
}

/** Cells of the whole-plane grid `unfold` would allocate (a site budget is checked against it before relaxing). */
export function unfoldedCells(grid: ScaleGrid, g: LatticeGraph, f: Fold): number {
  const { W, H } = gridShape(g, unfoldedBox(grid, f));
  return W * H;
}

/**
 * The whole-plane grid of a relaxed folded grid: every site takes the height and odometer of its
 * image (guard cells frozen as usual). The folded grid is left as it was (a checkpoint may still hold it).
 */
export function unfold(grid: ScaleGrid, g: LatticeGraph, bg: BackgroundField, f: Fold): ScaleGrid {
  const fx0 = -grid.ox, fy0 = -grid.oy, fx1 = grid.W - 1 - grid.ox, fy1 = grid.H - 1 - grid.oy;
  const G = grid.guard;
  const full = makeGrid(g, bg, unfoldedBox(grid, f), isWide(grid));
  const { W, H, ox, oy, h, od } = full;
  forEachGuard(full, (i) => (h[i] = h[i]! + FROZEN));
  for (let y = 0; y < H; y++) {
    const row = y * W;
    for (let x = 0; x < W; x++) {
      const [a, b] = foldXY(f, x - ox, y - oy);
      if (a < fx0 || a > fx1 || b < fy0 || b > fy1) continue; // beyond the folded grid: untouched background
      const j = (b + grid.oy) * grid.W + a + grid.ox;
      const guard = a < fx0 + G || a > fx1 - G || b < fy0 + G || b > fy1 - G;
      h[row + x] = grid.h[j]! + (guard ? FROZEN : 0);
      od[row + x] = grid.od[j]!;
    }
  }
  forEachGuard(full, (i) => (h[i] = h[i]! - FROZEN));
  return full;
}
