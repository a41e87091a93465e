import { UnrecoverableError, type Job } from 'bullmq';
import type { Db } from '../../../api/src/db/client.js';
import type { BlobStore } from '../../../api/src/storage/blob-store.js';
import { computeRunDataSchema } from '../../../shared/jobs.js';
import { ENGINE_VERSION, isEngineError, resolveProblem, runStatsToJSON, stabilize } from '../engine/index.js';
import { arrayHash, dtypeName, heightsForExport, odometerForExport } from '../cli/export-arrays.js';
import { toJson, type Sidecar } from '../cli/sidecar.js';
import { writeNpy } from '../npy/index.js';
import { radialProfile, type RadialProfile } from '../analysis/radial-profile.js';
import { arrayKeys } from './artifacts.js';
import { readStoredUpload } from './stored-arrays.js';
import { runState } from './run-state.js';

export interface ComputeDeps {
  db: Db;
  store: BlobStore;
  /** queue the rendering of a computed run */
  enqueueRender(runId: string): Promise<void>;
  /** tell the author a run has ended (mail); must not throw */
  notifyOutcome(runId: string): Promise<void>;
  threads?: number;
}

/** How often the worker writes progress to PostgreSQL and looks for a cancellation. */
const PROGRESS_EVERY_MS = 1000;

/** Run outcomes the farm does not retry: the same specification would fail the same way. */
function unrecoverable(err: unknown): err is Error {
  return isEngineError(err);
}

/**
 * Stabilizes one run: the spec travels in the job, the arrays and statistics go to the object store,
 * the state to PostgreSQL; rendering is a job of its own so render workers can scale apart.
 */
export async function computeRun(job: Job, deps: ComputeDeps): Promise<'finished' | 'skipped'> {
  const data = computeRunDataSchema.parse(job.data);
  const state = runState(deps.db, data.runId);
  if (!(await state.started('preparing'))) {
    // the API enqueues inside its transaction, so a fast worker can see the job before the row: retry
    if ((await state.current()) === null) throw new Error(`run ${data.runId} is not in the database yet`);
    return 'skipped';
  }
  const abort = new AbortController();
  let lastWrite = 0;
  let pending: Promise<unknown> = Promise.resolve();
  try {
    const problem = resolveProblem(data.spec, await readStoredUpload(deps.store, data.spec.background));
    const outcome = await stabilize(problem, {
      threads: deps.threads,
      signal: abort.signal,
      onProgress: (p) => {
        const now = Date.now();
        if (now - lastWrite < PROGRESS_EVERY_MS) return;
        lastWrite = now;
        pending = pending.then(async () => {
          await job.updateProgress({ stage: p.stage, fraction: p.fraction });
          await state.progress(p.stage, p.fraction);
          if ((await state.current()) === 'cancelled') abort.abort(new Error('cancelled by its author'));
        });
      },
    });
    await pending;

    const keys = arrayKeys(data.runId);
    const heights = heightsForExport(outcome.heights);
    const odometer = odometerForExport(outcome.odometer, 'int64');
    const stats = runStatsToJSON(outcome.stats);
    const record = (file: string, arr: typeof heights | typeof odometer) => ({
      file,
      dtype: dtypeName(arr),
      shape: outcome.shape,
      origin: outcome.origin,
      sha256: arrayHash(arr),
    });
    const sidecar: Sidecar & { radialProfile: RadialProfile } = {
      format: 'toppleworks.export/1',
      engineVersion: ENGINE_VERSION,
      spec: data.spec,
      heights: record('heights.npy', heights),
      odometer: record('odometer.npy', odometer),
      stats,
      radialProfile: radialProfile(outcome, data.spec.chips),
      createdAt: new Date().toISOString(),
    };
    await deps.store.put(keys.heights, Buffer.from(writeNpy(outcome.shape, heights)), 'application/octet-stream');
    await deps.store.put(keys.odometer, Buffer.from(writeNpy(outcome.shape, odometer)), 'application/octet-stream');
    // written last: its presence says the arrays beside it are complete
    await deps.store.put(keys.sidecar, toJson(sidecar, 2), 'application/json');
    await state.computed(stats);
    await deps.enqueueRender(data.runId);
    return 'finished';
  } catch (err) {
    await pending.catch(() => {});
    if (abort.signal.aborted) return 'skipped';
    if (unrecoverable(err) || err instanceof UnrecoverableError) {
      await state.failed(err.message);
      await deps.notifyOutcome(data.runId);
      throw new UnrecoverableError(err.message);
    }
    // transient (store or database hiccup): BullMQ retries with backoff; mark failed on the last attempt
    if (job.attemptsMade + 1 >= (job.opts.attempts ?? 1)) {
      await state.failed(`the farm could not finish this run: ${(err as Error).message}`);
      await deps.notifyOutcome(data.runId);
    }
    throw err;
  }
}
