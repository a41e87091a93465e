import type { Background } from '../../../shared/run-spec.js';
import { EngineInputError } from './errors.js';
import { mod } from './lattice.js';
import { pickHeight, siteHash, weightThresholds } from './random.js';

/**
 * A background as a pure function of lattice coordinates. Rules per kind (x, y, z lattice coordinates;
 * a line has y = z = 0, planar lattices z = 0):
 * - constant h: h everywhere.
 * - checkerboard a,b: a where x+y+z is even, b where it is odd.
 * - motif: cells[y mod rows][x mod cols]; a line reads row 0; the cubic lattice repeats the planar motif
 *   on every z layer.
 * - random: i.i.d. from the weights via the counter-based generator in random.ts (any dimension).
 * - annuli a,b: with rho = floor(|(x,y,z)|) (exact integer square root of x²+y²+z²), ring k covers
 *   k(k+1)/2 <= rho < (k+1)(k+2)/2, so ring k is k+1 wide; even rings are a, odd rings b
 *   (the origin is in ring 0). The line uses |x|, the cubic lattice the 3-D norm.
 * - array: the uploaded array's element floor(size/2) per axis sits on the origin, 0 outside. Its
 *   number of axes must equal the lattice dimension (row-major, x last).
 */
export interface BackgroundField {
  kind: Background['kind'];
  heightAt(x: number, y: number, z: number): number;
  /** heights that occur infinitely often (undefined for a finite upload: it is 0 far away) */
  recurring?: readonly number[];
  /** every site has the same height (constant, or a checkerboard/motif/annuli/random with one value) */
  uniform?: number;
  /** finite support of an upload, as [min, max] lattice coordinates per axis x, y, z */
  extent?: [[number, number], [number, number], [number, number]];
  /** weights for random backgrounds, normalised to probabilities */
  probabilities?: readonly number[];
}

export function isqrt(n: number): number {
  let r = Math.floor(Math.sqrt(n));
  while (r * r > n) r--;
  while ((r + 1) * (r + 1) <= n) r++;
  return r;
}

/** Ring index of rho: the k with k(k+1)/2 <= rho < (k+1)(k+2)/2. */
export function annulusRing(rho: number): number {
  let k = Math.floor((Math.sqrt(8 * rho + 1) - 1) / 2);
  while ((k * (k + 1)) / 2 > rho) k--;
  while (((k + 1) * (k + 2)) / 2 <= rho) k++;
  return k;
}

export interface UploadedArray {
  shape: number[];
  data: Int32Array;
}

export function backgroundField(bg: Background, dim: 1 | 2 | 3, upload?: UploadedArray): BackgroundField {
  const uniq = (vals: number[]) => [...new Set(vals)].sort((a, b) => a - b);
  const uniformOf = (vals: number[]) => (uniq(vals).length === 1 ? vals[0] : undefined);
  switch (bg.kind) {
    case 'constant':
      return { kind: bg.kind, heightAt: () => bg.height, recurring: [bg.height], uniform: bg.height };
    case 'checkerboard': {
      const { a, b } = bg;
      return { kind: bg.kind, heightAt: (x, y, z) => (((x + y + z) & 1) === 0 ? a : b), recurring: uniq([a, b]), uniform: uniformOf([a, b]) };
    }
    case 'motif': {
      const cells = bg.cells;
      const cols = cells[0]!.length;
      if (!cells.every((r) => r.length === cols)) throw new EngineInputError('motif background: every row must have the same number of cells');
      const rows = dim === 1 ? 1 : cells.length;
      const all = cells.slice(0, rows).flat();
      return { kind: bg.kind, heightAt: (x, y) => cells[mod(y, rows)]![mod(x, cols)]!, recurring: uniq(all), uniform: uniformOf(all) };
    }
    case 'random': {
      const total = bg.weights.reduce((a, b) => a + b, 0);
      if (!(total > 0) || !Number.isFinite(total)) throw new EngineInputError('random background: the weights must be finite and not all zero');
      const t = weightThresholds(bg.weights);
      const seed = bg.seed >>> 0;
      const present = bg.weights.map((w, i) => (w > 0 ? i : -1)).filter((i) => i >= 0);
      return {
        kind: bg.kind,
        heightAt: (x, y, z) => pickHeight(t, siteHash(seed, x, y, z)),
        recurring: present,
        uniform: present.length === 1 ? present[0] : undefined,
        probabilities: bg.weights.map((w) => w / total),
      };
    }
    case 'annuli': {
      const { a, b } = bg;
      return {
        kind: bg.kind,
        heightAt: (x, y, z) => (annulusRing(isqrt(x * x + y * y + z * z)) % 2 === 0 ? a : b),
        recurring: uniq([a, b]),
        uniform: uniformOf([a, b]),
      };
    }
    case 'array':
      return arrayField(dim, upload, bg.shape);
  }
}

function arrayField(dim: 1 | 2 | 3, upload: UploadedArray | undefined, declared: number[]): BackgroundField {
  if (!upload) throw new EngineInputError('array background: no uploaded array was supplied');
  const { shape, data } = upload;
  if (!Array.isArray(shape) || shape.length === 0 || !shape.every((s) => Number.isInteger(s) && s >= 1))
    throw new EngineInputError(`uploaded background: shape ${JSON.stringify(shape)} is not a list of positive integers`);
  if (shape.length !== dim) throw new EngineInputError(`uploaded background has ${shape.length} axes (shape [${shape.join(', ')}]) but the lattice is ${dim}-dimensional`);
  if (declared.length !== shape.length || declared.some((s, i) => s !== shape[i]))
    throw new EngineInputError(`uploaded background has shape [${shape.join(', ')}] but the specification declares [${declared.join(', ')}]`);
  const size = shape.reduce((a, b) => a * b, 1);
  if (!(data instanceof Int32Array) || data.length !== size)
    throw new EngineInputError(`uploaded background: shape [${shape.join(', ')}] needs ${size} values but ${data?.length ?? 0} were given`);
  for (let i = 0; i < data.length; i++) if (data[i]! < 0) throw new EngineInputError(`uploaded background: negative height ${data[i]} at flat index ${i}`);
  // array axes are (W) / (H, W) / (D, H, W); lattice axis x is the last one
  const w = shape[dim - 1]!;
  const h = dim >= 2 ? shape[dim - 2]! : 1;
  const d = dim === 3 ? shape[0]! : 1;
  const cx = Math.floor(w / 2);
  const cy = Math.floor(h / 2);
  const cz = Math.floor(d / 2);
  return {
    kind: 'array',
    heightAt: (x, y, z) => {
      const i = x + cx;
      const j = y + cy;
      const k = z + cz;
      if (i < 0 || i >= w || j < 0 || j >= h || k < 0 || k >= d) return 0;
      return data[(k * h + j) * w + i]!;
    },
    extent: [
      [-cx, w - 1 - cx],
      [-cy, h - 1 - cy],
      [-cz, d - 1 - cz],
    ],
  };
}
