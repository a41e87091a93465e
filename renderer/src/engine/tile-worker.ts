/**
 * Worker-thread adapter around relaxTile: holds views on the shared box and relaxes the tiles the
 * driver sends, replying with the tiles it activated. No state beyond the current box.
 */
import { parentPort } from 'node:worker_threads';
import { relaxTile, STACK_SLACK, type KernelGeometry, type KernelTables } from './kernel.js';
import { drainWork } from './work-queue.js';

interface Box {
  h: Int32Array;
  od: Float64Array;
  state: Uint8Array;
  geo: KernelGeometry;
  tables: KernelTables;
  stack: Int32Array;
}
let box: Box | undefined;

parentPort!.on('message', (msg: { type: 'domain'; h: SharedArrayBuffer; od: SharedArrayBuffer; state: SharedArrayBuffer; geo: KernelGeometry; tables: KernelTables } | { type: 'relax'; id: number; work: SharedArrayBuffer }) => {
  try {
    if (msg.type === 'domain') {
      box = {
        h: new Int32Array(msg.h),
        od: new Float64Array(msg.od),
        state: new Uint8Array(msg.state),
        geo: msg.geo,
        tables: msg.tables,
        stack: new Int32Array(msg.geo.TX * msg.geo.TY * msg.geo.TZ + STACK_SLACK),
      };
      return;
    }
    const b = box!;
    const activated: number[] = [];
    const events = drainWork(new Int32Array(msg.work), (tile, full) => relaxTile(b.h, b.od, b.geo, b.tables, b.state, tile, full, b.stack, activated));
    parentPort!.postMessage({ id: msg.id, activated, events });
  } catch (err) {
    parentPort!.postMessage({ id: (msg as { id?: number }).id ?? -1, error: err instanceof Error ? err.message : String(err) });
  }
});
