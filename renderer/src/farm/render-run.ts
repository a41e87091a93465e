import { UnrecoverableError, type Job } from 'bullmq';
import type { S3Client } from '@aws-sdk/client-s3';
import type { Db } from '../../../api/src/db/client.js';
import type { BlobStore } from '../../../api/src/storage/blob-store.js';
import { renderRunDataSchema } from '../../../shared/jobs.js';
import { readNpy } from '../npy/index.js';
import { computeStats, createS3Sink, planeOf, renderPyramid, type RenderInput } from '../render/index.js';
import { arrayKeys } from './artifacts.js';
import { runState } from './run-state.js';

export interface RenderDeps {
  db: Db;
  store: BlobStore;
  s3: S3Client;
  bucket: string;
  /** tell the author a run has ended (mail); must not throw */
  notifyOutcome(runId: string): Promise<void>;
}

/** The layers drawn for every run; the reader page switches between them. */
export const DEFAULT_VIEWS = [
  { layer: 'heights' },
  { layer: 'toppled' },
  { layer: 'odometer' },
] as const;

async function readArrays(store: BlobStore, runId: string): Promise<RenderInput> {
  const keys = arrayKeys(runId);
  const [h, u] = await Promise.all([store.get(keys.heights), store.get(keys.odometer)]);
  if (!h || !u) throw new UnrecoverableError(`the arrays of run ${runId} are not in the store`);
  const heights = readNpy(new Uint8Array(h.buffer, h.byteOffset, h.byteLength));
  const odo = readNpy(new Uint8Array(u.buffer, u.byteOffset, u.byteLength));
  const odometer = new Float64Array(odo.data.length);
  const toppled = new Uint8Array(odo.data.length);
  for (let k = 0; k < odometer.length; k++) {
    odometer[k] = Number(odo.data[k]!);
    toppled[k] = odometer[k]! > 0 ? 1 : 0;
  }
  return { shape: heights.shape, origin: originOf(heights.shape, await store.get(keys.sidecar)), heights: Int32Array.from(heights.data as ArrayLike<number>), odometer, toppled };
}

function originOf(shape: number[], sidecar: Buffer | null): number[] {
  const parsed = sidecar ? (JSON.parse(sidecar.toString('utf8')) as { heights?: { origin?: number[] } }) : null;
  return parsed?.heights?.origin ?? shape.map((n) => Math.floor(n / 2));
}

/** Draws the deep-zoom pyramids of a computed run; info.json is written last by each pyramid. */
export async function renderRun(job: Job, deps: RenderDeps): Promise<'finished' | 'skipped'> {
  const { runId } = renderRunDataSchema.parse(job.data);
  const state = runState(deps.db, runId);
  const status = await state.current();
  if (status !== 'rendering') return 'skipped';
  const input = await readArrays(deps.store, runId);
  const sink = createS3Sink({ client: deps.s3, bucket: deps.bucket });
  // one statistics pass serves every layer's colour scale
  const stats = computeStats(planeOf(input));
  for (const [i, view] of DEFAULT_VIEWS.entries()) {
    await state.progress(`drawing ${view.layer} tiles`, i / DEFAULT_VIEWS.length);
    await renderPyramid(input, sink, { runId, style: { layer: view.layer }, stats });
  }
  if (await state.finished()) await deps.notifyOutcome(runId);
  return 'finished';
}
