import { inArray } from 'drizzle-orm';
import { runs, series } from '../../../drizzle/schema.js';
import { JOB_NAMES, type JobItem } from '../../../shared/jobs.js';
import type { RunSpec } from '../../../shared/run-spec.js';
import type { Db } from '../db/client.js';
import type { JobQueue } from '../queue/job-queue.js';
import { dispatchNow, recordJobs } from '../queue/outbox.js';
import type { Logger } from '../logger.js';
import { audit } from './audit.js';
import { checkArrayBackground } from './background-uploads.js';
import { estimateOrRefuse, refuseIfTooLarge } from './run-memory.js';
import { reserveForRuns } from '../billing/gate.js';
import { refuseIfSuspended } from './admin-suspension.js';
import { issueLabAllowance } from './admin-allowance.js';

export type NewRun = { title: string; spec: RunSpec };
type RunRow = typeof runs.$inferSelect;

/**
 * Record runs, their credit reservations and their compute jobs (in the job outbox) in one
 * transaction, then send the jobs to the queue. While Redis is away the answer does not wait: the
 * runs stay queued, saying they wait for a farm slot, and the outbox dispatcher sends their jobs
 * when Redis is back (queue/outbox.ts). Used by POST /api/runs, re-runs and series, so all three
 * check the same things.
 */
export async function createRuns(
  deps: { db: Db; queue: JobQueue; log?: Logger },
  actor: { id: string },
  labId: string,
  items: NewRun[],
  options: { series?: { title: string }; action?: string; detail?: Record<string, unknown> } = {},
): Promise<{ rows: RunRow[]; seriesId: string | null }> {
  // a lab suspended by a site admin takes no new runs (403 with the reason)
  await refuseIfSuspended(deps.db, labId);
  // a lab whose allowance an admin set gets this month's at that amount, before the ledger issues the default
  await issueLabAllowance(deps.db, labId);
  // more memory than the machine has: refused with the estimate before anything is recorded or priced
  for (const item of items) refuseIfTooLarge(estimateOrRefuse(item.spec));
  for (const item of items) await checkArrayBackground(deps.db, item.spec.background, item.spec.lattice);
  const created = await deps.db.transaction(async (tx) => {
    let seriesId: string | null = null;
    if (options.series) {
      const [row] = await tx.insert(series).values({ labId, authorId: actor.id, title: options.series.title }).returning({ id: series.id });
      seriesId = row!.id;
      await audit(tx, { actorId: actor.id, labId, action: 'series.create', subjectType: 'series', subjectId: seriesId, detail: { chips: items.map((i) => i.spec.chips) } });
    }
    // a new run holds nothing in the store yet; the worker records its size as it writes (storage/run-usage.ts)
    const rows = await tx
      .insert(runs)
      .values(items.map((item) => ({ labId, authorId: actor.id, title: item.title, spec: item.spec, seriesId, storedBytes: 0, storedObjects: 0 })))
      .returning();
    // credits: reserve the estimate or refuse with 402 (api/src/billing/README.md); the rows roll back on refusal
    await reserveForRuns(tx, labId, actor.id, rows);
    for (const row of rows) {
      await audit(tx, { actorId: actor.id, labId, action: options.action ?? 'run.create', subjectType: 'run', subjectId: row.id, detail: { chips: row.spec.chips, ...(seriesId ? { series: seriesId } : {}), ...options.detail } });
    }
    // the jobs are recorded with the runs, so a run is never without its job, whatever Redis does
    const jobIds = await recordJobs(tx, deps.queue, rows.map((row): JobItem => ({ name: JOB_NAMES.computeRun, data: { runId: row.id, spec: row.spec } })));
    return { rows, seriesId, jobIds };
  });
  // Send after the commit: a worker that takes the job at once must find the run queued. While Redis
  // is away the jobs stay in the outbox and the runs say they wait for a farm slot (queue/outbox.ts).
  await dispatchNow(deps, created.jobIds);
  const rows = await deps.db.select().from(runs).where(inArray(runs.id, created.rows.map((r) => r.id)));
  const byId = new Map(rows.map((r) => [r.id, r]));
  return { rows: created.rows.map((r) => byId.get(r.id) ?? r), seriesId: created.seriesId };
}
