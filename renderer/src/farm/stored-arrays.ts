import { UnrecoverableError } from 'bullmq';
import type { BlobStore } from '../../../api/src/storage/blob-store.js';
import { heightsFromNpy } from '../cli/upload-array.js';
import { readNpy } from '../npy/index.js';
import type { Uploads } from '../engine/index.js';
import type { RenderInput } from '../render/index.js';
import { arrayKeys, uploadKey } from './artifacts.js';

const bytesOf = (b: Buffer) => new Uint8Array(b.buffer, b.byteOffset, b.byteLength);

/** A computed run's final arrays read back from the store, as the renderer and the printer take them. */
export async function readStoredArrays(store: BlobStore, runId: string): Promise<RenderInput> {
  const keys = arrayKeys(runId);
  const [h, u, side] = await Promise.all([store.get(keys.heights), store.get(keys.odometer), store.get(keys.sidecar)]);
  if (!h || !u || !side) throw new UnrecoverableError(`the arrays of run ${runId} are not in the store`);
  const heights = readNpy(bytesOf(h));
  const odo = readNpy(bytesOf(u));
  const odometer = new Float64Array(odo.data.length);
  const toppled = new Uint8Array(odo.data.length);
  for (let k = 0; k < odometer.length; k++) {
    odometer[k] = Number(odo.data[k]!);
    toppled[k] = odometer[k]! > 0 ? 1 : 0;
  }
  // run.json is written last, so its presence says the arrays beside it are complete
  const sidecar = JSON.parse(side.toString('utf8')) as { heights?: { origin?: number[] } };
  const origin = sidecar.heights?.origin ?? heights.shape.map((n) => Math.floor(n / 2));
  return { shape: heights.shape, origin, heights: Int32Array.from(heights.data as ArrayLike<number>), odometer, toppled };
}

/** The uploaded background array a spec refers to, read back from the store; undefined for other kinds. */
export async function readStoredUpload(store: BlobStore, background: { kind: string; sha256?: string }): Promise<Uploads | undefined> {
  if (background.kind !== 'array' || !background.sha256) return undefined;
  const bytes = await store.get(uploadKey(background.sha256));
  if (!bytes) throw new UnrecoverableError(`the uploaded background ${background.sha256.slice(0, 12)}… is not in the store`);
  try {
    return { background: heightsFromNpy(bytesOf(bytes), 'uploaded background') };
  } catch (err) {
    throw new UnrecoverableError((err as Error).message);
  }
}
