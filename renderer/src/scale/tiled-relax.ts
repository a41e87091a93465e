import { IDLE, PENDING_FULL, relaxTile, STACK_SLACK, type KernelGeometry } from '../engine/kernel.js';
import type { LatticeGraph } from '../engine/lattice.js';
import { acquireWorkers, releaseWorkers, type TileWorker } from '../engine/parallel.js';
import { tablesFor } from '../engine/tiling.js';
import { drainWork, makeWork } from '../engine/work-queue.js';
import type { ScaleGrid } from './grid.js';

/** Tile side of the parallel relaxation (the plain engine's measured sweet spot). */
export const TILE = 64;

/** Tiles handed out per dispatch: small enough that abort, progress and checkpoints get a turn often. */
const CHUNK = 256;

/** Below this many tiles in a dispatch, waking a worker costs more than it saves. */
const PARALLEL_MIN_TILES = 4;

/** The tiled relaxation needs tiles that hold whole periods and offsets shorter than half a tile. */
export function tileable(g: LatticeGraph): boolean {
  return g.dim === 2 && TILE % g.period[0] === 0 && TILE % g.period[1] === 0 && g.reach <= TILE / 4;
}

/**
 * Relaxes a ScaleGrid on several threads with the plain engine's tile kernel (`relaxTile`): 64 × 64
 * tiles with an active list, tiles of one colour of a 4-colouring relaxed concurrently over
 * SharedArrayBuffers (same-colour tiles are a tile apart, so their writes never meet). Every toppling
 * is legal, so the result is the same as the one-thread stack's, bit for bit (abelian property).
 * The grid's W and H must be multiples of TILE (makeGrid pads them) and its guard frozen.
 */
export class TiledRelaxer {
  private readonly tables;
  private readonly workers: TileWorker[];
  private readonly stack = new Int32Array(TILE * TILE + STACK_SLACK);

  constructor(private readonly g: LatticeGraph, threads: number) {
    this.tables = tablesFor(g);
    this.workers = threads > 1 ? acquireWorkers(threads - 1) : [];
  }

  close(): void {
    releaseWorkers(this.workers);
  }

  /**
   * Topples every unstable non-guard cell until the grid is stable (guard cells aside). `pause` runs
   * between dispatches, while no thread is working (a consistent legal state: checkpoints, abort).
   * Returns the number of toppling events. `restore`, also run between dispatches, may raise heights
   * (a folded grid's boundary, symmetry.ts) and returns the cells it made unstable; their tiles are
   * relaxed again, and the grid is stable only when it returns none.
   */
  async relax(grid: ScaleGrid, pause: (events: number) => Promise<void>, restore?: () => ArrayLike<number>): Promise<number> {
    shareArrays(grid);
    const { W, H } = grid;
    if (W % TILE || H % TILE) throw new Error('the grid is not a whole number of tiles');
    const tnx = W / TILE, tny = H / TILE, nt = tnx * tny;
    const geo: KernelGeometry = { dim: 2, nx: W, ny: H, nz: 1, sx: 0, sy: 0, sz: 0, TX: TILE, TY: TILE, TZ: 1, tnx, tny, tnz: 1 };
    const state = new Uint8Array(new SharedArrayBuffer(nt)).fill(PENDING_FULL);
    const listed = new Uint8Array(nt).fill(1);
    const lists: number[][] = [[], [], [], []];
    const colourOf = (t: number) => (t % tnx & 1) | ((Math.floor(t / tnx) & 1) << 1);
    for (let t = 0; t < nt; t++) lists[colourOf(t)]!.push(t);
    for (const w of this.workers) w.setDomain(grid.h.buffer as SharedArrayBuffer, grid.od.buffer as SharedArrayBuffer, state.buffer as SharedArrayBuffer, geo, this.tables);
    const { tables, stack } = this;
    let events = 0;
    const reactivate = () => {
      const cells = restore?.() ?? [];
      for (let k = 0; k < cells.length; k++) {
        const i = cells[k]!;
        const t = Math.floor((i % W) / TILE) + Math.floor(i / W / TILE) * tnx;
        state[t] = PENDING_FULL;
        if (!listed[t]) ((listed[t] = 1), lists[colourOf(t)]!.push(t));
      }
      return cells.length;
    };
    for (;;) {
      let worked = false;
      for (let c = 0; c < 4; c++) {
        const list = lists[c]!;
        if (list.length === 0) continue;
        lists[c] = [];
        worked = true;
        // tiles of colour c are only ever activated by the other colours, so the list can be taken in chunks
        for (let from = 0; from < list.length; from += CHUNK) {
          const part = list.slice(from, from + CHUNK);
          const modes = part.map((t) => state[t]!);
          for (const t of part) ((state[t] = IDLE), (listed[t] = 0));
          const activated: number[] = [];
          if (this.workers.length === 0 || part.length < PARALLEL_MIN_TILES) {
            for (let k = 0; k < part.length; k++) events += relaxTile(grid.h, grid.od, geo, tables, state, part[k]!, modes[k] === PENDING_FULL, stack, activated);
          } else {
            const work = makeWork(part, modes);
            const pending = this.workers.map((w) => w.relax(work.buffer as SharedArrayBuffer));
            events += drainWork(work, (tile, full) => relaxTile(grid.h, grid.od, geo, tables, state, tile, full, stack, activated));
            for (const r of await Promise.all(pending)) ((events += r.events ?? 0), activated.push(...r.activated!));
          }
          for (const t of activated)
            if (!listed[t]) ((listed[t] = 1), lists[colourOf(t)]!.push(t));
          if (restore) reactivate();
          await pause(events);
        }
      }
      if (!worked && !(restore && reactivate() > 0)) return events;
    }
  }
}

/** Moves the grid's arrays onto SharedArrayBuffers if they are not there yet (a grid read from a checkpoint). */
function shareArrays(grid: ScaleGrid): void {
  if (grid.h.buffer instanceof SharedArrayBuffer && grid.od.buffer instanceof SharedArrayBuffer) return;
  const h = new Int32Array(new SharedArrayBuffer(grid.h.byteLength));
  h.set(grid.h);
  const od = new Float64Array(new SharedArrayBuffer(grid.od.byteLength));
  od.set(grid.od);
  grid.h = h;
  grid.od = od;
}
