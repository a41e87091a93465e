import { EngineInputError } from './errors.js';

/** An offset (dx, dy, dz); lower-dimensional lattices use 0 in the unused components. */
export type Offset = readonly [number, number, number];

/**
 * Every lattice is a periodic directed multigraph on Z^d: the out-neighbours of site (x, y, z) are
 * (x, y, z) + offsets of its residue class (x mod px, y mod py, z mod pz), remainders non-negative,
 * so the origin is in class 0. Threshold = out-degree of the class.
 */
export interface LatticeGraph {
  name: string;
  dim: 1 | 2 | 3;
  period: readonly [number, number, number];
  /** offsets per class; class index = (cz * py + cy) * px + cx */
  classes: readonly (readonly Offset[])[];
  /** every edge has its reverse (an undirected graph listed both ways) */
  symmetric: boolean;
  /** largest |component| of any offset: the width of the band a toppling can reach */
  reach: number;
}

/** Longest allowed offset component: tiles are 64 wide and same-colour tiles must not collide. */
export const MAX_REACH = 16;

export const mod = (a: number, m: number): number => ((a % m) + m) % m;

export function classOf(g: LatticeGraph, x: number, y: number, z: number): number {
  const [px, py, pz] = g.period;
  return (mod(z, pz) * py + mod(y, py)) * px + mod(x, px);
}

export function degreeOf(g: LatticeGraph, x: number, y: number, z: number): number {
  return g.classes[classOf(g, x, y, z)]!.length;
}

export function maxDegree(g: LatticeGraph): number {
  return Math.max(...g.classes.map((c) => c.length));
}

function build(name: string, dim: 1 | 2 | 3, period: [number, number, number], classes: Offset[][]): LatticeGraph {
  let reach = 0;
  for (const c of classes) for (const o of c) reach = Math.max(reach, Math.abs(o[0]), Math.abs(o[1]), Math.abs(o[2]));
  return { name, dim, period, classes, symmetric: isSymmetric(period, classes), reach };
}

/** True when, for every edge v -> v+o, the class of v+o lists -o at least as often as v's class lists o. */
function isSymmetric(period: readonly [number, number, number], classes: readonly (readonly Offset[])[]): boolean {
  const [px, py, pz] = period;
  const key = (o: Offset) => `${o[0]},${o[1]},${o[2]}`;
  const counts = classes.map((c) => {
    const m = new Map<string, number>();
    for (const o of c) m.set(key(o), (m.get(key(o)) ?? 0) + 1);
    return m;
  });
  for (let cz = 0; cz < pz; cz++)
    for (let cy = 0; cy < py; cy++)
      for (let cx = 0; cx < px; cx++) {
        const c = (cz * py + cy) * px + cx;
        for (const [k, n] of counts[c]!) {
          const [dx, dy, dz] = k.split(',').map(Number) as [number, number, number];
          const t = (mod(cz + dz, pz) * py + mod(cy + dy, py)) * px + mod(cx + dx, px);
          if ((counts[t]!.get(key([-dx, -dy, -dz])) ?? 0) !== n) return false;
        }
      }
  return true;
}

const o2 = (dx: number, dy: number): Offset => [dx, dy, 0];
const SQUARE: Offset[] = [o2(1, 0), o2(-1, 0), o2(0, 1), o2(0, -1)];

/** 2-D presets built on the periodic-graph mechanism; unit cells are drawn in README.md. */
export const PERIODIC_PRESETS: Record<string, { period: [number, number]; neighbours: [number, number][][][] }> = {
  /**
   * F-lattice (arXiv:2110.07556): oriented subgraph of Z^2 with edges x -> x±e1 when x1+x2 is even and
   * x -> x±e2 when x1+x2 is odd; out-degree 2 everywhere.
   */
  'f-lattice': {
    period: [2, 2],
    neighbours: [
      [[[1, 0], [-1, 0]], [[0, 1], [0, -1]]],
      [[[0, 1], [0, -1]], [[1, 0], [-1, 0]]],
    ],
  },
  /**
   * Manhattan lattice: Z^2 with one-way streets; row y points +x when y is even and -x when odd,
   * column x points +y when x is even and -y when odd; out-degree 2.
   */
  manhattan: {
    period: [2, 2],
    neighbours: [
      [[[1, 0], [0, 1]], [[1, 0], [0, -1]]],
      [[[-1, 0], [0, 1]], [[-1, 0], [0, -1]]],
    ],
  },
};

export const BUILTIN_LATTICES = ['line', 'square', 'cubic', 'triangular', 'honeycomb'] as const;
export const LATTICE_NAMES = [...BUILTIN_LATTICES, ...Object.keys(PERIODIC_PRESETS)];

export function latticePreset(name: string): LatticeGraph {
  switch (name) {
    case 'line':
      return build('line', 1, [1, 1, 1], [[[1, 0, 0], [-1, 0, 0]]]);
    case 'square':
      return build('square', 2, [1, 1, 1], [SQUARE]);
    case 'cubic':
      return build('cubic', 3, [1, 1, 1], [[[1, 0, 0], [-1, 0, 0], [0, 1, 0], [0, -1, 0], [0, 0, 1], [0, 0, -1]]]);
    case 'triangular':
      return build('triangular', 2, [1, 1, 1], [[...SQUARE, o2(1, 1), o2(-1, -1)]]);
    case 'honeycomb': {
      // brick wall: left and right always; up when x+y is even, down when odd (class = (x mod 2, y mod 2))
      const even = [o2(1, 0), o2(-1, 0), o2(0, 1)];
      const odd = [o2(1, 0), o2(-1, 0), o2(0, -1)];
      return build('honeycomb', 2, [2, 2, 1], [even, odd, odd, even]);
    }
  }
  const p = PERIODIC_PRESETS[name];
  if (p) return periodicLattice(p, name);
  throw new EngineInputError(`unknown lattice '${name}' (known: ${LATTICE_NAMES.join(', ')}, or a periodic graph)`);
}

/**
 * Validates a periodic graph given as untrusted JSON ({"period": [px, py], "neighbours": N} with
 * N[y mod py][x mod px] the outgoing offsets [dx, dy]) and builds the lattice. Messages name the class.
 */
export function periodicLattice(json: unknown, name = 'periodic'): LatticeGraph {
  const bad = (msg: string): never => {
    throw new EngineInputError(`periodic graph: ${msg}`);
  };
  if (typeof json !== 'object' || json === null || Array.isArray(json)) bad('expected an object {"period": [px, py], "neighbours": [...]}');
  const { period, neighbours, ...rest } = json as Record<string, unknown>;
  const extra = Object.keys(rest).filter((k) => k !== 'name');
  if (extra.length) bad(`unknown key '${extra[0]}'`);
  if (!Array.isArray(period) || period.length !== 2 || !period.every((p) => Number.isInteger(p) && p >= 1 && p <= 64))
    bad('period must be [px, py] with integers 1..64');
  const [px, py] = period as [number, number];
  if (!Array.isArray(neighbours) || neighbours.length !== py) bad(`neighbours must be an array of ${py} rows (one per y mod ${py})`);
  const classes: Offset[][] = [];
  for (let cy = 0; cy < py; cy++) {
    const row = (neighbours as unknown[])[cy];
    if (!Array.isArray(row) || row.length !== px) bad(`neighbours[${cy}] must list ${px} classes (one per x mod ${px})`);
    for (let cx = 0; cx < px; cx++) {
      const where = `class [${cy}][${cx}] (y mod ${py} = ${cy}, x mod ${px} = ${cx})`;
      const list = (row as unknown[])[cx];
      if (!Array.isArray(list)) bad(`${where} must be a list of offsets [dx, dy]`);
      if ((list as unknown[]).length === 0) bad(`${where} has no outgoing edges (grains could never leave it)`);
      if ((list as unknown[]).length > 64) bad(`${where} has more than 64 edges`);
      const offs: Offset[] = [];
      for (const o of list as unknown[]) {
        if (!Array.isArray(o) || o.length !== 2 || !o.every((v) => typeof v === 'number' && Number.isInteger(v)))
          bad(`${where} has an offset ${JSON.stringify(o)} that is not a pair of integers [dx, dy]`);
        const [dx, dy] = o as [number, number];
        if (dx === 0 && dy === 0) bad(`${where} has a self-loop [0, 0]`);
        if (Math.abs(dx) > MAX_REACH || Math.abs(dy) > MAX_REACH) bad(`${where} has offset [${dx}, ${dy}] longer than ${MAX_REACH} in some axis`);
        offs.push([dx, dy, 0]);
      }
      classes.push(offs);
    }
  }
  const g = build(name, 2, [px, py, 1], classes);
  checkEscapes(g);
  return g;
}

/**
 * Infinite-lattice semantics need grains to be able to travel arbitrarily far: if the sites reachable
 * from some class form a finite set, grains there can never leave and the engine could cycle forever.
 * Exact test on the quotient graph of classes: the reachable set is infinite iff it meets a strongly
 * connected component with a closed walk of non-zero displacement (detected as inconsistent potentials).
 */
function checkEscapes(g: LatticeGraph): void {
  const [px, py] = g.period;
  const n = px * py;
  const target = (c: number, o: Offset) => mod(Math.floor(c / px) + o[1], py) * px + mod((c % px) + o[0], px);
  const out: number[][] = g.classes.map((offs, c) => offs.map((o) => target(c, o)));
  const inn: number[][] = Array.from({ length: n }, () => []);
  out.forEach((ts, c) => ts.forEach((t) => inn[t]!.push(c)));
  // Kosaraju: finishing order on the graph, then components on the reverse graph
  const order: number[] = [];
  const seen = new Uint8Array(n);
  for (let s = 0; s < n; s++) {
    if (seen[s]) continue;
    const stack: [number, number][] = [[s, 0]];
    seen[s] = 1;
    while (stack.length) {
      const top = stack[stack.length - 1]!;
      const [v, i] = top;
      if (i < out[v]!.length) {
        top[1]++;
        const w = out[v]![i]!;
        if (!seen[w]) {
          seen[w] = 1;
          stack.push([w, 0]);
        }
      } else {
        order.push(v);
        stack.pop();
      }
    }
  }
  const comp = new Int32Array(n).fill(-1);
  let ncomp = 0;
  for (let k = n - 1; k >= 0; k--) {
    const s = order[k]!;
    if (comp[s] !== -1) continue;
    const stack = [s];
    comp[s] = ncomp;
    while (stack.length) {
      const v = stack.pop()!;
      for (const w of inn[v]!) if (comp[w] === -1) ((comp[w] = ncomp), stack.push(w));
    }
    ncomp++;
  }
  // potentials inside each component: an edge that disagrees closes a walk with non-zero displacement
  const potX = new Float64Array(n).fill(NaN);
  const potY = new Float64Array(n);
  const escaping = new Uint8Array(ncomp);
  for (let s = 0; s < n; s++) {
    if (!Number.isNaN(potX[s]!)) continue;
    potX[s] = 0;
    potY[s] = 0;
    const stack = [s];
    while (stack.length) {
      const v = stack.pop()!;
      g.classes[v]!.forEach((o, i) => {
        const w = out[v]![i]!;
        if (comp[w] !== comp[v]) return;
        const x = potX[v]! + o[0];
        const y = potY[v]! + o[1];
        if (Number.isNaN(potX[w]!)) ((potX[w] = x), (potY[w] = y), stack.push(w));
        else if (potX[w] !== x || potY[w] !== y) escaping[comp[v]!] = 1;
      });
    }
  }
  for (let c = 0; c < n; c++) {
    const reach = new Uint8Array(n);
    const stack = [c];
    reach[c] = 1;
    let ok = false;
    while (stack.length && !ok) {
      const v = stack.pop()!;
      if (escaping[comp[v]!]) ok = true;
      for (const w of out[v]!) if (!reach[w]) ((reach[w] = 1), stack.push(w));
    }
    if (!ok)
      throw new EngineInputError(
        `periodic graph: from class [${Math.floor(c / px)}][${c % px}] only finitely many sites are reachable, so grains could never leave them; every class must reach infinitely many sites`,
      );
  }
}
