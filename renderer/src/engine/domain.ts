import { PENDING_FULL, type KernelGeometry } from './kernel.js';
import { mod } from './lattice.js';
import type { Problem } from './problem.js';
import { tileDims } from './tiling.js';

/**
 * The growable working box of the tiled engine, on SharedArrayBuffers so worker threads can share it.
 * The outermost ring of tiles is a guard: grains may land there, but a guard tile with an unstable
 * site means the pile reached the edge, and the box grows before anything there topples. So nothing is
 * ever clipped: outside the box the configuration is exactly the background.
 */
export class Domain {
  geo!: KernelGeometry;
  /** array index of the lattice origin, (x, y, z) */
  ox = 0;
  oy = 0;
  oz = 0;
  h!: Int32Array;
  od!: Float64Array;
  state!: Uint8Array;

  constructor(
    private readonly p: Problem,
    /** lattice-coordinate box that must lie in inner tiles: [min, max] for x, y, z (none: see restore) */
    need?: [[number, number], [number, number], [number, number]],
  ) {
    if (!need) return;
    const dim = p.lattice.dim;
    const T = tileDims(dim);
    const tiles: number[] = [];
    const low: number[] = [];
    for (let a = 0; a < 3; a++) {
      if (a >= dim) {
        tiles.push(1);
        low.push(0);
        continue;
      }
      // tile k covers lattice coords [(k - lowTiles) * T, ...); choose lowTiles so need[a][0] is inside
      const lo = Math.floor(need[a]![0] / T[a]!) - 1;
      const hi = Math.floor(need[a]![1] / T[a]!) + 1;
      tiles.push(hi - lo + 1);
      low.push(-lo * T[a]!);
    }
    this.allocate(tiles as [number, number, number], low as [number, number, number]);
  }

  /**
   * A box as a snapshot left it: `tiles` per axis, the origin at array index `origin`, and its heights
   * and odometer, adopted when they sit on SharedArrayBuffers (a decoded snapshot), copied otherwise.
   * Tile states start idle: the caller marks the tiles that hold unstable sites.
   */
  static restore(p: Problem, tiles: [number, number, number], origin: [number, number, number], h: Int32Array, od: Float64Array): Domain {
    const d = new Domain(p);
    d.allocate(tiles, origin, false);
    if (h.length !== d.sites || od.length !== d.sites) throw new Error(`a box of ${d.sites} sites cannot hold arrays of ${h.length} and ${od.length}`);
    if (h.buffer instanceof SharedArrayBuffer && od.buffer instanceof SharedArrayBuffer) ((d.h = h), (d.od = od));
    else {
      d.h = new Int32Array(new SharedArrayBuffer(h.byteLength));
      d.od = new Float64Array(new SharedArrayBuffer(od.byteLength));
      d.h.set(h);
      d.od.set(od);
    }
    return d;
  }

  get sites(): number {
    return this.geo.nx * this.geo.ny * this.geo.nz;
  }

  static sitesFor(dim: number, tiles: [number, number, number]): number {
    const T = tileDims(dim as 1 | 2 | 3);
    return tiles[0] * T[0] * tiles[1] * T[1] * tiles[2] * T[2];
  }

  private allocate(tiles: [number, number, number], origin: [number, number, number], fill = true): void {
    const dim = this.p.lattice.dim;
    const [TX, TY, TZ] = tileDims(dim);
    const [px, py, pz] = this.p.lattice.period;
    const nx = tiles[0] * TX, ny = tiles[1] * TY, nz = tiles[2] * TZ;
    [this.ox, this.oy, this.oz] = origin;
    this.geo = {
      dim, nx, ny, nz, TX, TY, TZ, tnx: tiles[0], tny: tiles[1], tnz: tiles[2],
      sx: mod(-this.ox, px), sy: mod(-this.oy, py), sz: mod(-this.oz, pz),
    };
    const n = nx * ny * nz;
    this.state = new Uint8Array(new SharedArrayBuffer(tiles[0] * tiles[1] * tiles[2]));
    if (!fill) return;
    this.h = new Int32Array(new SharedArrayBuffer(4 * n));
    this.od = new Float64Array(new SharedArrayBuffer(8 * n));
    this.fillBackground();
  }

  private fillBackground(): void {
    const { nx, ny, nz } = this.geo;
    const bg = this.p.background;
    if (bg.uniform !== undefined) {
      this.h.fill(bg.uniform);
      return;
    }
    for (let z = 0; z < nz; z++)
      for (let y = 0; y < ny; y++) {
        const base = (z * ny + y) * nx;
        for (let x = 0; x < nx; x++) this.h[base + x] = bg.heightAt(x - this.ox, y - this.oy, z - this.oz);
      }
  }

  index(x: number, y: number, z: number): number {
    return ((z + this.oz) * this.geo.ny + (y + this.oy)) * this.geo.nx + (x + this.ox);
  }

  tileOf(i: number): number {
    const { nx, ny, TX, TY, TZ, tnx, tny } = this.geo;
    const x = i % nx;
    const q = (i - x) / nx;
    const y = q % ny;
    const z = (q - y) / ny;
    return (((z / TZ) | 0) * tny + ((y / TY) | 0)) * tnx + ((x / TX) | 0);
  }

  isGuard(t: number): boolean {
    const { dim, tnx, tny, tnz } = this.geo;
    const tx = t % tnx;
    const ty = Math.floor(t / tnx) % tny;
    const tz = Math.floor(t / (tnx * tny));
    return tx === 0 || tx === tnx - 1 || (dim >= 2 && (ty === 0 || ty === tny - 1)) || (dim === 3 && (tz === 0 || tz === tnz - 1));
  }

  colourOf(t: number): number {
    const { tnx, tny } = this.geo;
    const tx = t % tnx;
    const ty = Math.floor(t / tnx) % tny;
    const tz = Math.floor(t / (tnx * tny));
    return (tx & 1) | ((ty & 1) << 1) | ((tz & 1) << 2);
  }

  /** Tiles to add on each side of every active axis for the next growth, or null if over budget. */
  growthPlan(maxSites: number): [number, number, number] | null {
    const { dim, tnx, tny, tnz } = this.geo;
    const cur = [tnx, tny, tnz];
    for (const frac of [0.5, 0.25, 0]) {
      const add = cur.map((n, a) => (a < dim ? Math.max(1, Math.ceil(n * frac)) : 0)) as [number, number, number];
      const next = cur.map((n, a) => n + 2 * add[a]!) as [number, number, number];
      if (Domain.sitesFor(dim, next) <= maxSites) return add;
    }
    return null;
  }

  /** Grows by `add` tiles on both sides of each axis, copying the box and its tile states. */
  grow(add: [number, number, number]): void {
    const { h, od, state } = this;
    const old = this.geo;
    const oldOrigin = [this.ox, this.oy, this.oz];
    const tiles: [number, number, number] = [old.tnx + 2 * add[0], old.tny + 2 * add[1], old.tnz + 2 * add[2]];
    this.allocate(tiles, [oldOrigin[0]! + add[0] * old.TX, oldOrigin[1]! + add[1] * old.TY, oldOrigin[2]! + add[2] * old.TZ]);
    const g = this.geo;
    const shiftX = add[0] * old.TX, shiftY = add[1] * old.TY, shiftZ = add[2] * old.TZ;
    for (let z = 0; z < old.nz; z++)
      for (let y = 0; y < old.ny; y++) {
        const from = (z * old.ny + y) * old.nx;
        const to = ((z + shiftZ) * g.ny + (y + shiftY)) * g.nx + shiftX;
        this.h.set(h.subarray(from, from + old.nx), to);
        this.od.set(od.subarray(from, from + old.nx), to);
      }
    for (let tz = 0; tz < old.tnz; tz++)
      for (let ty = 0; ty < old.tny; ty++)
        for (let tx = 0; tx < old.tnx; tx++) {
          const s = state[(tz * old.tny + ty) * old.tnx + tx]!;
          if (s) this.state[((tz + add[2]) * g.tny + (ty + add[1])) * g.tnx + (tx + add[0])] = s;
        }
  }

  /** Marks the tile of site i as pending with any site possibly unstable. */
  markFull(i: number): number {
    const t = this.tileOf(i);
    this.state[t] = PENDING_FULL;
    return t;
  }
}

/** Generous first guess of the pile's radius; the box grows anyway, so this only saves copies. */
function radiusGuess(dim: number, grains: number): number {
  if (dim === 1) return Math.ceil(grains / 2) + 2;
  if (dim === 2) return Math.ceil(0.5 * Math.sqrt(grains)) + 2;
  return Math.ceil(0.8 * Math.cbrt(grains)) + 2;
}

/**
 * The lattice-coordinate box a run starts with ([min, max] for x, y, z): every source with a radius
 * guess, the origin, and any uploaded array, clamped to the site budget (the sources must still fit).
 * Both the tiled engine and the line path start from it and grow alike, so they refuse the same runs.
 */
export function initialNeed(problem: Problem, maxSites: number): [[number, number], [number, number], [number, number]] {
  const dim = problem.lattice.dim;
  const need: [[number, number], [number, number], [number, number]] = [[0, 0], [0, 0], [0, 0]];
  const r0 = radiusGuess(dim, Number(problem.grainsIn));
  for (const s of problem.sources) {
    const r = s.chips > 0 ? r0 : 0;
    for (let a = 0; a < dim; a++) {
      need[a]![0] = Math.min(need[a]![0], s.at[a]! - r);
      need[a]![1] = Math.max(need[a]![1], s.at[a]! + r);
    }
  }
  const ext = problem.background.extent;
  if (ext) for (let a = 0; a < dim; a++) ((need[a]![0] = Math.min(need[a]![0], ext[a]![0])), (need[a]![1] = Math.max(need[a]![1], ext[a]![1])));
  const T = tileDims(dim);
  for (let a = 0; a < dim; a++) {
    const span = need[a]![1] - need[a]![0] + 1;
    const cap = Math.floor(Math.pow(maxSites, 1 / dim)) - 2 * T[a]!;
    if (span > cap && !ext) {
      const lo = Math.min(...problem.sources.map((s) => s.at[a]!)), hi = Math.max(...problem.sources.map((s) => s.at[a]!));
      const mid = Math.floor((lo + hi) / 2), half = Math.max(Math.floor(cap / 2), Math.ceil((hi - lo) / 2));
      need[a] = [Math.min(lo, mid - half), Math.max(hi, mid + half)];
    }
  }
  return need;
}
