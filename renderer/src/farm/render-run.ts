import type { Job } from 'bullmq';
import type { S3Client } from '@aws-sdk/client-s3';
import type { Db } from '../../../api/src/db/client.js';
import type { BlobStore } from '../../../api/src/storage/blob-store.js';
import { renderRunDataSchema } from '../../../shared/jobs.js';
import { computeStats, createS3Sink, planeOf, renderPyramid } from '../render/index.js';
import { readStoredArrays } from './stored-arrays.js';
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

/** Draws the deep-zoom pyramids of a computed run; info.json is written last by each pyramid. */
export async function renderRun(job: Job, deps: RenderDeps): Promise<'finished' | 'skipped'> {
  const { runId } = renderRunDataSchema.parse(job.data);
  const state = runState(deps.db, runId);
  const status = await state.current();
  if (status !== 'rendering') return 'skipped';
  try {
    const input = await readStoredArrays(deps.store, runId);
    const sink = createS3Sink({ client: deps.s3, bucket: deps.bucket });
    // one statistics pass serves every layer's colour scale
    const stats = computeStats(planeOf(input));
    for (const [i, view] of DEFAULT_VIEWS.entries()) {
      await state.progress(`drawing ${view.layer} tiles`, i / DEFAULT_VIEWS.length);
      await renderPyramid(input, sink, { runId, style: { layer: view.layer }, stats });
    }
  } catch (err) {
    // transient (store or database away): BullMQ retries with backoff; on the last attempt the run
    // fails with the reason instead of staying "rendering" for ever
    if (job.attemptsMade + 1 >= (job.opts.attempts ?? 1)) {
      await state.failed(`the farm could not draw this run's views: ${(err as Error).message}`);
      await deps.notifyOutcome(runId);
    }
    throw err;
  }
  if (await state.finished()) await deps.notifyOutcome(runId);
  return 'finished';
}
