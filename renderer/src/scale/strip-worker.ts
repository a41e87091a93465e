/**
 * Worker-thread adapter around the strip visits: takes views on the shared grid and the driver's
 * phase buffers (strips.ts), then serves phases until the driver says stop. Its only own state is
 * its stack.
 */
import { parentPort } from 'node:worker_threads';
import { UnstableStack, type LatticeKernel } from './kernel.js';
import { collectGarbage } from './memory.js';
import { serveStrips } from './strip-relax.js';

interface Domain {
  h: SharedArrayBuffer;
  od: SharedArrayBuffer;
  /** the odometer is float64, not uint32 (grid.ts) */
  wide: boolean;
  W: number;
  k: LatticeKernel;
  bounds: Int32Array;
  ctl: Int32Array;
  visits: Int32Array;
  extra: Int32Array;
  deadline: Float64Array;
  budget: number;
}

const stack = new UnstableStack();

parentPort!.on('message', (m: Domain) => {
  try {
    serveStrips({ h: new Int32Array(m.h), od: m.wide ? new Float64Array(m.od) : new Uint32Array(m.od), W: m.W, k: m.k, bounds: m.bounds }, m.ctl, m.visits, m.extra, m.deadline, stack, m.budget);
    // this thread's views keep the grid's shared memory alive until they are collected, and an idle
    // thread collects late: let the grid go now (the driver's next allocations are the big ones)
    collectGarbage();
  } catch (err) {
    parentPort!.postMessage({ error: err instanceof Error ? err.message : String(err) });
  }
});
