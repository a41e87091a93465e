import type { Worker } from 'node:worker_threads';
import { bootWorker, borrow, type Pooled } from '../engine/parallel.js';
import { UnstableStack, type LatticeKernel } from './kernel.js';
import { isWide, type ScaleGrid } from './grid.js';
import { DONE, drainVisits, FAILED, GEN, SCAN_ALL, SCAN_BOTTOM, SCAN_TOP, setVisits, SPILL_DOWN, SPILL_UP, STOP, UNFINISHED, VISITED, visitOf, visitsFor, type StripDomain } from './strip-relax.js';

/**
 * The relaxation on several threads: the grid's rows are cut into strips, and strips of one parity are
 * relaxed concurrently, each by the same one-stack kernel as a single thread (strip-relax.ts). A strip
 * topples only its own cells but adds grains to the `reach` edge rows of its neighbours, which are of
 * the other parity and idle meanwhile, so no two threads ever write the same cell; strips at least
 * 2·reach rows high keep the two neighbours' edge rows apart. Every toppling is legal, so the result
 * is the one-thread result bit for bit (abelian property).
 */

/** Rows per strip on big grids: small enough to share work out, large enough that edges are rare. */
const STRIP_ROWS = 64;

/** Events per visit before the strip yields (abort, progress and checkpoints run between phases). */
const VISIT_BUDGET = 1 << 21;

/** No visit starts later than this after its phase began: phases stay short even when every strip has work. */
const PHASE_MS = 200;

class StripWorker implements Pooled {
  readonly worker: Worker;
  dead: Error | undefined;
  busy = false;

  hold(on: boolean): void {
    if (on) this.worker.ref();
    else this.worker.unref();
  }

  constructor() {
    this.worker = bootWorker(import.meta.url, './strip-worker');
    this.worker.unref();
    this.worker.on('message', (r: { error?: string }) => {
      if (r.error) this.dead = new Error(`strip worker failed: ${r.error}`);
    });
    this.worker.on('error', (e) => (this.dead = e));
    this.worker.on('exit', (code) => (this.dead ??= new Error(`strip worker exited with code ${code}`)));
  }
}

const pool: StripWorker[] = [];

const acquire = (n: number) => borrow(pool, n, () => new StripWorker());

/** Stops the shared pool (tests and graceful shutdown). */
export async function shutdownStripWorkers(): Promise<void> {
  await Promise.all(pool.splice(0).map((w) => w.worker.terminate()));
}

/**
 * Waits until `n` workers finished the phase: blocking waits of 20 ms (a phase is a few ms), with the
 * event loop let through in between so that a worker's failure or exit is noticed.
 */
async function phaseDone(ctl: Int32Array, n: number, workers: StripWorker[]): Promise<void> {
  for (;;) {
    const done = Atomics.load(ctl, DONE);
    if (done >= n) break;
    if (Atomics.wait(ctl, DONE, done, 20) !== 'timed-out') continue;
    await new Promise<void>((resolve) => setImmediate(resolve));
    const dead = workers.find((w) => w.dead);
    if (dead) throw dead.dead;
  }
  if (Atomics.load(ctl, FAILED)) {
    await new Promise<void>((resolve) => setImmediate(resolve)); // let the worker's message arrive
    throw workers.find((w) => w.dead)?.dead ?? new Error('a strip worker failed');
  }
}

/** Strip boundaries over the non-guard rows: strip s is rows b[s] .. b[s + 1] - 1. */
export function stripBounds(grid: ScaleGrid, reach: number, threads: number): Int32Array {
  const y0 = grid.guard, y1 = grid.H - grid.guard;
  const rows = y1 - y0;
  // at least two strips of each parity per thread where the grid allows, each at least 2·reach high
  const high = Math.max(2 * reach, Math.min(STRIP_ROWS, Math.floor(rows / (4 * threads))));
  const n = Math.max(1, Math.floor(rows / high));
  const b = new Int32Array(n + 1);
  for (let s = 0; s <= n; s++) b[s] = y0 + Math.round((s * rows) / n);
  return b;
}

export class StripRelaxer {
  private readonly workers: StripWorker[];
  private readonly stack = new UnstableStack();

  constructor(threads: number) {
    this.workers = threads > 1 ? acquire(threads - 1) : [];
  }

  close(): void {
    this.workers.forEach((w) => ((w.busy = false), w.hold(false)));
  }

  /**
   * Topples every unstable non-guard cell until the grid is stable (guard cells aside). `pause` runs
   * between phases, while no thread works (a legal state: checkpoints, abort, progress). `restore`,
   * also run between phases, may raise heights (a folded grid's boundary, symmetry.ts) and returns the
   * cells it made unstable; the grid is stable only when it returns none. Returns the toppling events.
   */
  async relax(grid: ScaleGrid, k: LatticeKernel, pause: (events: number) => Promise<void>, restore?: () => ArrayLike<number>): Promise<number> {
    shareArrays(grid);
    const bounds = stripBounds(grid, k.reach, this.workers.length + 1);
    const S = bounds.length - 1;
    const d: StripDomain = { h: grid.h, od: grid.od, W: grid.W, k, bounds };
    const ctl = new Int32Array(new SharedArrayBuffer(16));
    const visits = visitsFor(S);
    // restore pushes a cell only when it crosses its threshold, and it stays unstable until its strip
    // is visited: the boundary (an axis and a diagonal or two axes) fits in W + H
    const extraBuf = new Int32Array(new SharedArrayBuffer(4 * (grid.W + grid.H)));
    const deadline = new Float64Array(new SharedArrayBuffer(8));
    for (const w of this.workers) w.worker.postMessage({ h: grid.h.buffer, od: grid.od.buffer, wide: isWide(grid), W: grid.W, k, bounds, ctl, visits, extra: extraBuf, deadline, budget: VISIT_BUDGET });
    const rowStrip = new Int32Array(grid.H);
    for (let s = 0; s < S; s++) rowStrip.fill(s, bounds[s]!, bounds[s + 1]!);
    const mode = new Uint8Array(S).fill(SCAN_ALL);
    const extra: number[][] = Array.from({ length: S }, () => []);
    const take = (cells: ArrayLike<number>) => {
      for (let q = 0; q < cells.length; q++) {
        const i = cells[q]!;
        extra[rowStrip[Math.floor(i / grid.W)]!]!.push(i);
      }
      return cells.length;
    };
    let events = 0;
    try {
      for (;;) {
        let worked = false;
        for (let parity = 0; parity < 2; parity++) {
          const strips: number[] = [], modes: number[] = [], from: number[] = [], to: number[] = [];
          let cells = 0;
          for (let s = parity; s < S; s += 2) {
            if (!mode[s] && !extra[s]!.length) continue;
            strips.push(s);
            modes.push(mode[s]!);
            from.push(cells);
            for (const i of extra[s]!) extraBuf[cells++] = i;
            to.push(cells);
            mode[s] = 0;
            extra[s] = [];
          }
          if (!strips.length) continue;
          worked = true;
          setVisits(visits, strips, modes, from, to);
          deadline[0] = Date.now() + PHASE_MS;
          if (this.workers.length && strips.length > 1) {
            Atomics.store(ctl, DONE, 0);
            Atomics.add(ctl, GEN, 1);
            Atomics.notify(ctl, GEN);
            drainVisits(d, visits, extraBuf, this.stack, VISIT_BUDGET, deadline);
            await phaseDone(ctl, this.workers.length, this.workers);
          } else drainVisits(d, visits, extraBuf, this.stack, VISIT_BUDGET, deadline);
          for (let q = 0; q < strips.length; q++) {
            const v = visitOf(visits, q);
            if (!(v.flags & VISITED)) {
              // left for the next phase of this parity, with what it was to look at
              mode[v.strip] |= modes[q]!;
              for (let e = from[q]!; e < to[q]!; e++) extra[v.strip]!.push(extraBuf[e]!);
              continue;
            }
            events += v.events;
            if (v.flags & UNFINISHED) mode[v.strip] |= SCAN_ALL;
            if (v.flags & SPILL_UP && v.strip > 0) mode[v.strip - 1] |= SCAN_BOTTOM;
            if (v.flags & SPILL_DOWN && v.strip < S - 1) mode[v.strip + 1] |= SCAN_TOP;
          }
          if (restore) take(restore());
          await pause(events);
        }
        if (!worked && !(restore && take(restore()) > 0)) return events;
      }
    } finally {
      // release the workers from their phase loop (they go back to waiting for messages)
      Atomics.store(ctl, STOP, 1);
      Atomics.add(ctl, GEN, 1);
      Atomics.notify(ctl, GEN);
    }
  }
}

/** Moves the grid's arrays onto SharedArrayBuffers if they are not there yet (a grid read from a checkpoint). */
function shareArrays(grid: ScaleGrid): void {
  if (grid.h.buffer instanceof SharedArrayBuffer && grid.od.buffer instanceof SharedArrayBuffer) return;
  const h = new Int32Array(new SharedArrayBuffer(grid.h.byteLength));
  h.set(grid.h);
  const od = isWide(grid) ? new Float64Array(new SharedArrayBuffer(grid.od.byteLength)) : new Uint32Array(new SharedArrayBuffer(grid.od.byteLength));
  od.set(grid.od);
  grid.h = h;
  grid.od = od;
}
