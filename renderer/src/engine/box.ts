import { EngineInputError } from './errors.js';
import { classOf, latticePreset, type LatticeGraph } from './lattice.js';

export interface BoxOptions {
  /** lattice coordinates (x, y, z) of array element 0 (default all 0); fixes the classes of periodic graphs */
  corner?: [number, number, number];
}

export interface BoxResult {
  heights: Int32Array;
  odometer: Float64Array;
  totalTopplings: bigint;
  /** grains that left the box into the sink */
  grainsLost: bigint;
}

/**
 * Finite-box mode: the sites of `shape` (array axis order, x last) form the graph, and every edge that
 * leaves the box goes to a sink that swallows grains. This is the setting of the sandpile group
 * (identity element, recurrent configurations). Sequential stack order with multi-toppling; meant for
 * small boxes.
 */
export function stabilizeBox(lattice: string | LatticeGraph, heights: Int32Array, shape: number[], options: BoxOptions = {}): BoxResult {
  return boxStabilizer(lattice, shape, options)(heights);
}

/**
 * Prepares the box graph once and returns a stabilizer for many configurations on it (burning tests,
 * group enumeration).
 */
export function boxStabilizer(lattice: string | LatticeGraph, shape: number[], options: BoxOptions = {}): (heights: Int32Array) => BoxResult {
  const g = typeof lattice === 'string' ? latticePreset(lattice) : lattice;
  if (shape.length !== g.dim || !shape.every((s) => Number.isInteger(s) && s >= 1))
    throw new EngineInputError(`box shape [${shape.join(', ')}] must list ${g.dim} positive sizes for the ${g.name} lattice`);
  const W = shape[g.dim - 1]!, H = g.dim >= 2 ? shape[g.dim - 2]! : 1, D = g.dim === 3 ? shape[0]! : 1;
  const n = W * H * D;
  const [cx, cy, cz] = options.corner ?? [0, 0, 0];
  // per site: its degree and its in-box neighbours (-1 = sink)
  const deg = new Int32Array(n);
  const nbr: Int32Array[] = [];
  for (let z = 0; z < D; z++)
    for (let y = 0; y < H; y++)
      for (let x = 0; x < W; x++) {
        const offs = g.classes[classOf(g, x + cx, y + cy, z + cz)]!;
        const i = (z * H + y) * W + x;
        deg[i] = offs.length;
        nbr[i] = Int32Array.from(offs, ([dx, dy, dz]) => {
          const X = x + dx, Y = y + dy, Z = z + dz;
          return X < 0 || X >= W || Y < 0 || Y >= H || Z < 0 || Z >= D ? -1 : (Z * H + Y) * W + X;
        });
      }
  const stack = new Int32Array(n);
  const inStack = new Uint8Array(n);
  return (heights) => {
    if (heights.length !== n) throw new EngineInputError(`box of shape [${shape.join(', ')}] needs ${n} heights, got ${heights.length}`);
    const h = Float64Array.from(heights);
    for (let i = 0; i < n; i++) if (h[i]! < 0) throw new EngineInputError(`box heights must be non-negative (index ${i} is ${h[i]})`);
    const od = new Float64Array(n);
    let sp = 0;
    for (let i = 0; i < n; i++) if (h[i]! >= deg[i]!) ((stack[sp++] = i), (inStack[i] = 1));
    // totals stay exact: flushed to bigint long before a double loses integers
    let total = 0n, lost = 0n, t = 0, l = 0;
    while (sp > 0) {
      const i = stack[--sp]!;
      inStack[i] = 0;
      const k = Math.floor(h[i]! / deg[i]!);
      if (k === 0) continue;
      h[i] = h[i]! - k * deg[i]!;
      od[i] = od[i]! + k;
      t += k;
      for (const j of nbr[i]!) {
        if (j < 0) {
          l += k;
          continue;
        }
        h[j] = h[j]! + k;
        if (!inStack[j] && h[j]! >= deg[j]!) ((stack[sp++] = j), (inStack[j] = 1));
      }
      if (t > 2 ** 52 || l > 2 ** 52) ((total += BigInt(t)), (lost += BigInt(l)), (t = 0), (l = 0));
    }
    return { heights: Int32Array.from(h), odometer: od, totalTopplings: total + BigInt(t), grainsLost: lost + BigInt(l) };
  };
}
