import { UnrecoverableError, WaitingError, type Job } from 'bullmq';
import type { S3Client } from '@aws-sdk/client-s3';
import type { Db } from '../../../api/src/db/client.js';
import type { BlobStore } from '../../../api/src/storage/blob-store.js';
import { refreshRunUsage } from '../../../api/src/storage/run-usage.js';
import { computeRunDataSchema } from '../../../shared/jobs.js';
import { ENGINE_VERSION, isEngineError, isSnapshotError, resolveProblem, runStatsToJSON, stabilize, type Outcome, type Problem, type Snapshot } from '../engine/index.js';
import { arrayHash, dtypeName, heightsForExport, odometerForExport } from '../cli/export-arrays.js';
import { toJson, type Sidecar } from '../cli/sidecar.js';
import { writeNpy } from '../npy/index.js';
import { radialProfile, type RadialProfile } from '../analysis/radial-profile.js';
import { arrayKeys } from './artifacts.js';
import { describeSnapshot, runCheckpoints, type RunCheckpoints } from './checkpoints.js';
import { readStoredUpload } from './stored-arrays.js';
import { runState } from './run-state.js';
import { stageWords } from '../engine/stage-words.js';

export interface ComputeDeps {
  db: Db;
  store: BlobStore;
  /** checkpoints stream to the store through the S3 client itself (BlobStore puts whole buffers) */
  s3: S3Client;
  bucket: string;
  /** queue the rendering of a computed run */
  enqueueRender(runId: string): Promise<void>;
  /** tell the author a run has ended (mail); must not throw */
  notifyOutcome(runId: string): Promise<void>;
  threads?: number;
  /** seconds between checkpoints (WORKER_CHECKPOINT_SECONDS) */
  checkpointSeconds: number;
  /** largest domain in sites (default: the engine's DEFAULT_MAX_SITES) */
  maxSites?: number;
  /** fires when the worker process is asked to stop: the run goes back to the queue at its last checkpoint */
  shutdown?: AbortSignal;
  /** the worker's own output (the job's BullMQ log gets the same lines) */
  log?(line: string): void;
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
 * Every run saves the engine's checkpoints (either path) to the store; a job handed to another worker
 * (its first worker died, or was stopped) resumes from the last one, with the same result bit for bit
 * (renderer/src/engine/README.md, Checkpoints).
 */
export async function computeRun(job: Job, deps: ComputeDeps, token?: string, lockLost?: AbortSignal): Promise<'finished' | 'skipped'> {
  const data = computeRunDataSchema.parse(job.data);
  const state = runState(deps.db, data.runId);
  const log = (line: string) => {
    deps.log?.(`run ${data.runId}: ${line}`);
    void job.log(`${new Date().toISOString()} ${line}`).catch(() => {});
  };
  if (!(await state.started('preparing'))) {
    // the API enqueues inside its transaction, so a fast worker can see the job before the row: retry
    const status = await state.current();
    if (status === null) throw new Error(`run ${data.runId} is not in the database yet`);
    // a worker that died between storing the arrays and queueing the render: queue it now (the job
    // id makes this a no-op when the render job exists already)
    if (status === 'rendering') await deps.enqueueRender(data.runId);
    return 'skipped';
  }
  const abort = new AbortController();
  const onShutdown = () => abort.abort(new Error('the worker is stopping'));
  deps.shutdown?.addEventListener('abort', onShutdown, { once: true });
  if (deps.shutdown?.aborted) onShutdown();
  const onLockLost = () => abort.abort(new Error('this worker lost its hold on the job'));
  lockLost?.addEventListener('abort', onLockLost, { once: true });
  let lastWrite = 0;
  let pending: Promise<unknown> = Promise.resolve();
  let checkpoints: RunCheckpoints | null = null;
  // what runs/<id>/ holds, into the run's row after each write or deletion here (api/src/storage/run-usage.ts)
  const recordSize = () => refreshRunUsage(deps.db, deps.store, data.runId, log);
  try {
    const problem = resolveProblem(data.spec, await readStoredUpload(deps.store, data.spec.background));
    const onProgress = (p: { stage: string; fraction: number }) => {
      const now = Date.now();
      if (now - lastWrite < PROGRESS_EVERY_MS) return;
      lastWrite = now;
      pending = pending.then(async () => {
        await job.updateProgress({ stage: p.stage, fraction: p.fraction });
        await state.progress(stageWords(p.stage), p.fraction);
        if ((await state.current()) === 'cancelled') abort.abort(new Error('cancelled by its author'));
      });
    };
    checkpoints = runCheckpoints({ s3: deps.s3, bucket: deps.bucket, runId: data.runId, log, stored: recordSize });
    const outcome = await stabilizeWithCheckpoints(problem, checkpoints, { deps, state, log, signal: abort.signal, onProgress });
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
    const heightsRecord = record('heights.npy', heights);
    const sidecar: Sidecar & { radialProfile: RadialProfile } = {
      format: 'toppleworks.export/1',
      engineVersion: ENGINE_VERSION,
      spec: data.spec,
      heights: heightsRecord,
      odometer: record('odometer.npy', odometer),
      stats,
      // every grain added, the extra sources' too: the n whose n^(1/d) the run page rescales by
      radialProfile: radialProfile(outcome, Number(outcome.stats.grainsIn)),
      createdAt: new Date().toISOString(),
    };
    await deps.store.put(keys.heights, Buffer.from(writeNpy(outcome.shape, heights)), 'application/octet-stream');
    await deps.store.put(keys.odometer, Buffer.from(writeNpy(outcome.shape, odometer)), 'application/octet-stream');
    // written last: its presence says the arrays beside it are complete
    await deps.store.put(keys.sidecar, toJson(sidecar, 2), 'application/json');
    // the arrays are safe: the checkpoint has done its work (a kill before this line resumes and stores them again)
    if (checkpoints) await checkpoints.remove().catch((err: Error) => log(`the checkpoint could not be deleted: ${err.message}`));
    await recordSize();
    log(`arrays stored (heights sha256 ${heightsRecord.sha256.slice(0, 16)}…)`);
    await state.computed(stats);
    await deps.enqueueRender(data.runId);
    return 'finished';
  } catch (err) {
    await pending.catch(() => {});
    if (abort.signal.aborted) {
      if (lockLost?.aborted) {
        // the job belongs to another worker now (or was given up): touch neither its state nor its checkpoint
        log('stopped here: this worker lost its hold on the job');
        throw abort.signal.reason;
      }
      if (deps.shutdown?.aborted && (await state.current()) === 'computing') {
        // stopping worker: the last checkpoint is in the store; hand the job straight back instead of
        // letting its lock run out, so another worker resumes it at once
        await checkpoints?.flush();
        await state.progress('waiting for a worker (resumes from its checkpoint)', 0);
        log('the worker is stopping: back to the queue');
        await job.moveToWait(token);
        throw new WaitingError();
      }
      // cancelled: nothing of it is kept
      await checkpoints?.remove().catch(() => {});
      await recordSize();
      return 'skipped';
    }
    if (unrecoverable(err) || err instanceof UnrecoverableError) {
      await checkpoints?.remove().catch(() => {});
      await recordSize();
      await state.failed(err.message);
      await deps.notifyOutcome(data.runId);
      throw new UnrecoverableError(err.message);
    }
    // transient (store or database hiccup): BullMQ retries with backoff, from the last checkpoint;
    // mark failed on the last attempt
    if (job.attemptsMade + 1 >= (job.opts.attempts ?? 1)) {
      await checkpoints?.remove().catch(() => {});
      await recordSize();
      await state.failed(`the farm could not finish this run: ${(err as Error).message}`);
      await deps.notifyOutcome(data.runId);
    }
    throw err;
  } finally {
    deps.shutdown?.removeEventListener('abort', onShutdown);
    lockLost?.removeEventListener('abort', onLockLost);
    checkpoints?.dispose();
  }
}

/**
 * The engine with the run's checkpoints: resume from the stored one if there is one, save new ones
 * periodically. The engine picks the path (and falls back from an uncertified fast-path result); a
 * stored checkpoint the engine refuses (another engine version or specification, a damaged state)
 * is deleted and the run starts from the beginning.
 */
async function stabilizeWithCheckpoints(
  problem: Problem,
  checkpoints: RunCheckpoints,
  ctx: { deps: ComputeDeps; state: ReturnType<typeof runState>; log(line: string): void; signal: AbortSignal; onProgress(p: { stage: string; fraction: number }): void },
): Promise<Outcome> {
  const { deps, log, signal, onProgress } = ctx;
  const stored = await checkpoints.load();
  const run = (resume?: Snapshot) =>
    stabilize(problem, { threads: deps.threads, maxSites: deps.maxSites, signal, onProgress, resume, checkpoint: { everySeconds: deps.checkpointSeconds, save: (s) => checkpoints.save(s) } });
  if (!stored) return run();
  const when = stored.savedAt ? ` saved ${stored.savedAt.toISOString()}` : '';
  log(`resuming from its checkpoint${when} (${describeSnapshot(stored.snapshot)}, ${(stored.bytes / 2 ** 20).toFixed(1)} MiB)`);
  await ctx.state.progress('resuming from a checkpoint', 0);
  try {
    return await run(stored.snapshot);
  } catch (err) {
    if (signal.aborted || !isSnapshotError(err)) throw err;
    log(`the checkpoint was refused (${err.message}); starting from the beginning`);
    await checkpoints.remove();
    return run();
  }
}
