import { inArray } from 'drizzle-orm';
import { runs, series } from '../../../drizzle/schema.js';
import { JOB_NAMES, type JobItem } from '../../../shared/jobs.js';
import type { RunSpec } from '../../../shared/run-spec.js';
import type { Db } from '../db/client.js';
import type { JobQueue } from '../queue/job-queue.js';
import { audit } from './audit.js';
import { checkArrayBackground } from './background-uploads.js';
import { refuseIfTooLarge } from './run-memory.js';
import { reserveForRuns } from '../billing/gate.js';
import { refuseIfSuspended } from './admin-suspension.js';
import { issueLabAllowance } from './admin-allowance.js';

export type NewRun = { title: string; spec: RunSpec };
type RunRow = typeof runs.$inferSelect;

/**
 * Record runs (and reserve their credits) in one transaction, then enqueue their compute jobs; if
 * Redis refuses a job, the runs are marked failed, so no orphan "queued" row remains.
 * Used by POST /api/runs, re-runs and series, so all three check the same things.
 */
export async function createRuns(
  deps: { db: Db; queue: JobQueue },
  actor: { id: string },
  labId: string,
  items: NewRun[],
  options: { series?: { title: string }; action?: string; detail?: Record<string, unknown> } = {},
): Promise<{ rows: RunRow[]; seriesId: string | null }> {
  // a lab suspended by a site admin takes no new runs (403 with the reason)
  await refuseIfSuspended(deps.db, labId);
  // a lab whose allowance an admin set gets this month's at that amount, before the ledger issues the default
  await issueLabAllowance(deps.db, labId);
  // more memory than the machine has: refused with the estimate before anything is recorded
  for (const item of items) refuseIfTooLarge(item.spec);
  for (const item of items) await checkArrayBackground(deps.db, item.spec.background, item.spec.lattice);
  const created = await deps.db.transaction(async (tx) => {
    let seriesId: string | null = null;
    if (options.series) {
      const [row] = await tx.insert(series).values({ labId, authorId: actor.id, title: options.series.title }).returning({ id: series.id });
      seriesId = row!.id;
      await audit(tx, { actorId: actor.id, labId, action: 'series.create', subjectType: 'series', subjectId: seriesId, detail: { chips: items.map((i) => i.spec.chips) } });
    }
    const rows = await tx
      .insert(runs)
      .values(items.map((item) => ({ labId, authorId: actor.id, title: item.title, spec: item.spec, seriesId })))
      .returning();
    // credits: reserve the estimate or refuse with 402 (api/src/billing/README.md); the rows roll back on refusal
    await reserveForRuns(tx, labId, actor.id, rows);
    for (const row of rows) {
      await audit(tx, { actorId: actor.id, labId, action: options.action ?? 'run.create', subjectType: 'run', subjectId: row.id, detail: { chips: row.spec.chips, ...(seriesId ? { series: seriesId } : {}), ...options.detail } });
    }
    return { rows, seriesId };
  });
  // Enqueue only after the commit: a worker that takes the job at once must find the run queued
  // (inside the transaction it saw no such row and skipped the job, leaving the run queued for ever).
  const enqueued: JobItem[] = [];
  try {
    for (const row of created.rows) {
      const job: JobItem = { name: JOB_NAMES.computeRun, data: { runId: row.id, spec: row.spec } };
      await deps.queue.enqueue(job);
      enqueued.push(job);
    }
  } catch (err) {
    // no orphan "queued" rows: take back the jobs that got in and mark every run failed (its credits are then released)
    await Promise.allSettled(enqueued.map((job) => deps.queue.remove(job)));
    await deps.db
      .update(runs)
      .set({ status: 'failed', error: 'the farm queue did not accept this run; submit it again', finishedAt: new Date(), updatedAt: new Date() })
      .where(inArray(runs.id, created.rows.map((r) => r.id)));
    throw err;
  }
  return created;
}
