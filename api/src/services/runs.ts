import { runs, series } from '../../../drizzle/schema.js';
import { JOB_NAMES, type JobItem } from '../../../shared/jobs.js';
import type { RunSpec } from '../../../shared/run-spec.js';
import type { Db } from '../db/client.js';
import type { JobQueue } from '../queue/job-queue.js';
import { audit } from './audit.js';
import { checkArrayBackground } from './background-uploads.js';
import { reserveForRuns } from '../billing/gate.js';

export type NewRun = { title: string; spec: RunSpec };
type RunRow = typeof runs.$inferSelect;

/**
 * Record runs and enqueue their compute jobs in one transaction: if Redis refuses a job, no orphan
 * "queued" row remains. Used by POST /api/runs, re-runs and series, so all three check the same things.
 */
export async function createRuns(
  deps: { db: Db; queue: JobQueue },
  actor: { id: string },
  labId: string,
  items: NewRun[],
  options: { series?: { title: string }; action?: string; detail?: Record<string, unknown> } = {},
): Promise<{ rows: RunRow[]; seriesId: string | null }> {
  for (const item of items) await checkArrayBackground(deps.db, item.spec.background, item.spec.lattice);
  return deps.db.transaction(async (tx) => {
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
    const enqueued: JobItem[] = [];
    try {
      for (const row of rows) {
        const job: JobItem = { name: JOB_NAMES.computeRun, data: { runId: row.id, spec: row.spec } };
        await deps.queue.enqueue(job);
        enqueued.push(job);
      }
    } catch (err) {
      // the rows roll back; take back the jobs of a series that did get in (workers would skip them anyway)
      await Promise.allSettled(enqueued.map((job) => deps.queue.remove(job)));
      throw err;
    }
    return { rows, seriesId };
  });
}
