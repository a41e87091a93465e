import { UnrecoverableError, type Job } from 'bullmq';
import type { S3Client } from '@aws-sdk/client-s3';
import { eq } from 'drizzle-orm';
import type { Db } from '../../../api/src/db/client.js';
import type { BlobStore } from '../../../api/src/storage/blob-store.js';
import { refreshRunUsage } from '../../../api/src/storage/run-usage.js';
import { runs } from '../../../drizzle/schema.js';
import { renderRunDataSchema } from '../../../shared/jobs.js';
import { renderViews, runSpecSchema, type RunSpec } from '../../../shared/run-spec.js';
import { isEngineError, resolveProblem } from '../engine/index.js';
import { backgroundFromLattice, computeStats, createS3Sink, isRenderInputError, planeOf, renderPyramid, type BackgroundSource, type RenderInput } from '../render/index.js';
import { readStoredArrays, readStoredUpload } from './stored-arrays.js';
import { runState } from './run-state.js';

export interface RenderDeps {
  db: Db;
  store: BlobStore;
  s3: S3Client;
  bucket: string;
  /** tell the author a run has ended (mail); must not throw */
  notifyOutcome(runId: string): Promise<void>;
}

/** The run's background over the stored arrays, rebuilt from its spec (the difference layer needs it). */
async function backgroundOf(deps: RenderDeps, spec: RunSpec, input: RenderInput): Promise<BackgroundSource> {
  const problem = resolveProblem(spec, await readStoredUpload(deps.store, spec.background));
  return backgroundFromLattice(problem.background.heightAt, input);
}

/**
 * Draws the deep-zoom pyramids a computed run's spec asks for, each with its legend; info.json is
 * written last by each pyramid. The spec is read from the run's row (PostgreSQL is the source of truth).
 */
export async function renderRun(job: Job, deps: RenderDeps): Promise<'finished' | 'skipped'> {
  const { runId } = renderRunDataSchema.parse(job.data);
  const state = runState(deps.db, runId);
  const status = await state.current();
  if (status !== 'rendering') return 'skipped';
  const [row] = await deps.db.select({ spec: runs.spec }).from(runs).where(eq(runs.id, runId));
  const recordSize = () => refreshRunUsage(deps.db, deps.store, runId, (line) => console.error(`run ${runId}: ${line}`));
  try {
    // stored rows predate the `render` field or hold it; parsing fills the same defaults the API did
    const parsed = runSpecSchema.safeParse(row?.spec);
    if (!parsed.success) throw new UnrecoverableError(`the stored specification cannot be drawn: ${parsed.error.issues.map((i) => `${i.path.join('.')}: ${i.message}`).join('; ')}`);
    const spec = parsed.data;
    // the spec's `render` (layers × palettes), or the default for older specs
    const views = renderViews(spec);
    const input = await readStoredArrays(deps.store, runId);
    const background = views.some((v) => v.layer === 'difference') ? await backgroundOf(deps, spec, input) : undefined;
    const sink = createS3Sink({ client: deps.s3, bucket: deps.bucket });
    // one statistics pass serves every view's colour scale
    const stats = computeStats(planeOf(input, { background }));
    for (const [i, view] of views.entries()) {
      await state.progress(`drawing ${view.layer} tiles (${view.palette})`, i / views.length);
      await renderPyramid(input, sink, { runId, style: view, stats, background: view.layer === 'difference' ? background : undefined });
    }
  } catch (err) {
    // a pyramid drawn in part stays in the store until a retry overwrites it: count what is there
    await recordSize();
    // a spec or arrays the renderer refuses would be refused again: fail the run at once with the reason
    if (err instanceof UnrecoverableError || isRenderInputError(err) || isEngineError(err)) {
      const message = (err as Error).message;
      await state.failed(message);
      await deps.notifyOutcome(runId);
      throw new UnrecoverableError(message);
    }
    // transient (store or database away): BullMQ retries with backoff; on the last attempt the run
    // fails with the reason instead of staying "rendering" for ever
    if (job.attemptsMade + 1 >= (job.opts.attempts ?? 1)) {
      await state.failed(`the farm could not draw this run's views: ${(err as Error).message}`);
      await deps.notifyOutcome(runId);
    }
    throw err;
  }
  // the arrays and every pyramid are stored: one listing of runs/<id>/ into the row (api/src/storage/run-usage.ts)
  await recordSize();
  if (await state.finished()) await deps.notifyOutcome(runId);
  return 'finished';
}
