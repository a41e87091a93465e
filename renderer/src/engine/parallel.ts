import { Worker } from 'node:worker_threads';
import type { KernelGeometry, KernelTables } from './kernel.js';

/**
 * Starts the worker module `name` (no extension) next to the module at `here`. Under tsx or vitest the
 * sources are .ts and are booted through tsx's loader (a .ts worker file cannot be started directly).
 */
export function bootWorker(here: string, name: string): Worker {
  if (here.endsWith('.ts')) {
    const url = new URL(`${name}.ts`, here).href;
    // resolved here, not in the worker: an eval'd worker resolves bare names from the current
    // folder, which is not the repository when the command runs elsewhere
    const tsx = import.meta.resolve('tsx/esm/api');
    return new Worker(`import(${JSON.stringify(tsx)}).then((m) => { m.register(); return import(${JSON.stringify(url)}); })`, { eval: true });
  }
  return new Worker(new URL(`${name}.js`, here));
}

interface Reply {
  id: number;
  activated?: number[];
  events?: number;
  error?: string;
}

/**
 * A small pool of tile workers shared by all runs in this process. Workers are unref'd between runs so
 * an idle pool never keeps the process alive, and ref'd while a run is waiting on them.
 */
class TileWorker {
  private readonly worker: Worker;
  private waiting = new Map<number, { resolve: (r: Reply) => void; reject: (e: Error) => void }>();
  private next = 1;
  dead: Error | undefined;
  busy = false;

  constructor() {
    this.worker = bootWorker(import.meta.url, './tile-worker');
    this.worker.unref();
    this.worker.on('message', (r: Reply) => {
      const w = this.waiting.get(r.id);
      if (!w) return;
      this.waiting.delete(r.id);
      if (r.error) w.reject(new Error(`tile worker failed: ${r.error}`));
      else w.resolve(r);
    });
    const fail = (e: Error) => {
      this.dead = e;
      for (const w of this.waiting.values()) w.reject(e);
      this.waiting.clear();
    };
    this.worker.on('error', fail);
    this.worker.on('exit', (code) => fail(new Error(`tile worker exited with code ${code}`)));
  }

  setDomain(h: SharedArrayBuffer, od: SharedArrayBuffer, state: SharedArrayBuffer, geo: KernelGeometry, tables: KernelTables): void {
    this.worker.postMessage({ type: 'domain', h, od, state, geo, tables });
  }

  relax(work: SharedArrayBuffer): Promise<Reply> {
    if (this.dead) return Promise.reject(this.dead);
    const id = this.next++;
    return new Promise((resolve, reject) => {
      this.waiting.set(id, { resolve, reject });
      this.worker.postMessage({ type: 'relax', id, work });
    });
  }

  hold(on: boolean): void {
    if (on) this.worker.ref();
    else this.worker.unref();
  }

  terminate(): Promise<number> {
    return this.worker.terminate();
  }
}

const pool: TileWorker[] = [];

/** What a pooled worker must offer to be borrowed: a busy flag, its failure if it died, ref/unref. */
export interface Pooled {
  busy: boolean;
  dead: Error | undefined;
  hold(on: boolean): void;
}

/** Borrows `n` idle workers from `pool` (dropping dead ones, starting new ones with `make` as needed). */
export function borrow<T extends Pooled>(pool: T[], n: number, make: () => T): T[] {
  for (let i = pool.length - 1; i >= 0; i--) if (pool[i]!.dead) pool.splice(i, 1);
  const ws = pool.filter((w) => !w.busy).slice(0, n);
  while (ws.length < n) {
    const w = make();
    pool.push(w);
    ws.push(w);
  }
  ws.forEach((w) => ((w.busy = true), w.hold(true)));
  return ws;
}

/** Borrow `n` workers for one run; release them with releaseWorkers. */
export function acquireWorkers(n: number): TileWorker[] {
  return borrow(pool, n, () => new TileWorker());
}

export function releaseWorkers(ws: TileWorker[]): void {
  ws.forEach((w) => ((w.busy = false), w.hold(false)));
}

/** Stops the shared pool (tests and graceful shutdown). */
export async function shutdownWorkers(): Promise<void> {
  const ws = pool.splice(0);
  await Promise.all(ws.map((w) => w.terminate()));
}

export type { TileWorker };
