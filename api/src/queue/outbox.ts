import { and, asc, eq, inArray, isNull, sql } from 'drizzle-orm';
import { figureVersions, jobOutbox, labs, runs } from '../../../drizzle/schema.js';
import { JOB_DATA_SCHEMAS, JOB_NAMES, jobIdFor, type JobItem, type JobName } from '../../../shared/jobs.js';
import type { Executor, Tx } from '../billing/ledger.js';
import type { Db } from '../db/client.js';
import type { Logger } from '../logger.js';
import type { JobQueue } from './job-queue.js';

/**
 * The transactional outbox of farm jobs. A route records its jobs with `recordJobs` inside the
 * transaction that creates what they are for (run rows and their credit reservations, a figure
 * version), so the answer never waits for Redis and nothing is lost or half-written when Redis is
 * away. `dispatchOutbox` then adds the jobs to BullMQ and deletes their rows: once right after the
 * commit (the usual case, no extra delay) and from `startOutboxDispatcher`'s loop, which sends what
 * is left once Redis is back. Rows are claimed with FOR UPDATE SKIP LOCKED, so several API processes
 * share the work; a job is added under its own id (jobIdFor), so a second add of the same job, by a
 * second dispatcher or after a timed-out first attempt that still reached Redis, is a no-op.
 */

/** What a run shows beside its bar while its job waits in the outbox for Redis. */
export const WAITING_FOR_QUEUE_STAGE = 'waiting for a farm slot (the job queue is unreachable; the run is kept and sent as soon as it is back)';

/**
 * Record jobs in the caller's transaction, for the farm of `queue` (its prefix); a job already
 * pending keeps its row (one per farm and job id). Returns the job ids, for dispatchNow.
 */
export async function recordJobs(tx: Executor, queue: Pick<JobQueue, 'prefix'>, items: JobItem[]): Promise<string[]> {
  if (items.length === 0) return [];
  const rows = items.map((item) => ({ queuePrefix: queue.prefix, jobId: jobIdFor(item), name: item.name, data: item.data }));
  await tx.insert(jobOutbox).values(rows).onConflictDoNothing({ target: [jobOutbox.queuePrefix, jobOutbox.jobId] });
  return rows.map((r) => r.jobId);
}

/**
 * Whether a job recorded earlier is still wanted when it is sent: a run cancelled, failed or whose
 * lab was suspended while Redis was away gets no job (reinstating the lab records it again), nor does
 * a figure version no longer queued.
 */
async function stillWanted(tx: Tx, item: JobItem): Promise<boolean> {
  if (item.name === JOB_NAMES.computeRun) {
    const [row] = await tx
      .select({ id: runs.id })
      .from(runs)
      .innerJoin(labs, eq(labs.id, runs.labId))
      .where(and(eq(runs.id, item.data.runId), eq(runs.status, 'queued'), isNull(labs.suspendedAt)));
    return row !== undefined;
  }
  if (item.name === JOB_NAMES.printFigure) {
    const [row] = await tx.select({ id: figureVersions.id }).from(figureVersions).where(and(eq(figureVersions.id, item.data.versionId), eq(figureVersions.status, 'queued')));
    return row !== undefined;
  }
  return true;
}

export type DispatchResult = { sent: number; dropped: number; pending: number; error?: Error };

/**
 * Send pending jobs (only `jobIds` when given) to the queue, oldest first, up to `limit`. Stops at
 * the first job Redis does not take (the rest would wait the same budget each) and leaves it and the
 * rest for the next round, counting the attempt. Never throws for Redis; a database error rejects.
 */
export async function dispatchOutbox(deps: { db: Db; queue: JobQueue }, options: { jobIds?: string[]; limit?: number } = {}): Promise<DispatchResult> {
  if (options.jobIds && options.jobIds.length === 0) return { sent: 0, dropped: 0, pending: 0 };
  return deps.db.transaction(async (tx) => {
    const rows = await tx
      .select()
      .from(jobOutbox)
      .where(and(eq(jobOutbox.queuePrefix, deps.queue.prefix), options.jobIds ? inArray(jobOutbox.jobId, options.jobIds) : undefined))
      .orderBy(asc(jobOutbox.id))
      .limit(options.limit ?? 100)
      // the loop skips rows another dispatcher holds; a request waits for them (at most one call's
      // budget), so it knows whether its own jobs went out before it answers
      .for('update', options.jobIds ? {} : { skipLocked: true });
    const out: DispatchResult = { sent: 0, dropped: 0, pending: 0 };
    for (const [k, row] of rows.entries()) {
      const name = row.name as JobName;
      const schema = JOB_DATA_SCHEMAS[name];
      const parsed = schema?.safeParse(row.data);
      if (!parsed?.success) {
        // written by this code from a parsed job, so this means a newer or older build's row: keep it, say so
        out.pending = rows.length - k;
        out.error = new Error(`outbox row ${row.id} holds a job this build cannot read (${row.name})`);
        await tx.update(jobOutbox).set({ attempts: sql`${jobOutbox.attempts} + 1`, lastError: out.error.message }).where(eq(jobOutbox.id, row.id));
        continue;
      }
      const item = { name, data: parsed.data } as JobItem;
      if (!(await stillWanted(tx, item))) {
        await tx.delete(jobOutbox).where(eq(jobOutbox.id, row.id));
        out.dropped++;
        continue;
      }
      try {
        await deps.queue.enqueue(item);
      } catch (err) {
        out.error = err as Error;
        out.pending = rows.length - k;
        await tx.update(jobOutbox).set({ attempts: sql`${jobOutbox.attempts} + 1`, lastError: out.error.message }).where(eq(jobOutbox.id, row.id));
        if (item.name === JOB_NAMES.computeRun) {
          await tx.update(runs).set({ stage: WAITING_FOR_QUEUE_STAGE, updatedAt: new Date() }).where(and(eq(runs.id, item.data.runId), eq(runs.status, 'queued')));
        }
        break;
      }
      await tx.delete(jobOutbox).where(eq(jobOutbox.id, row.id));
      if (item.name === JOB_NAMES.computeRun) {
        // the run is on the queue now: it waits for a worker like any other
        await tx.update(runs).set({ stage: null, updatedAt: new Date() }).where(and(eq(runs.id, item.data.runId), eq(runs.status, 'queued'), eq(runs.stage, WAITING_FOR_QUEUE_STAGE)));
      }
      out.sent++;
    }
    return out;
  });
}

/**
 * Send right after the commit what a request just recorded, so the usual path adds no delay. A
 * failure (Redis away, the database gone after the commit) is left to the dispatcher's loop: the
 * rows are committed, so the request still succeeds.
 */
export async function dispatchNow(deps: { db: Db; queue: JobQueue; log?: Logger }, jobIds: string[]): Promise<void> {
  try {
    const result = await dispatchOutbox(deps, { jobIds });
    if (result.error) deps.log?.warn('jobs kept in the outbox until the job queue answers', { jobs: result.pending, err: result.error });
  } catch (err) {
    deps.log?.warn('jobs kept in the outbox: the dispatch after the commit failed', { err });
  }
}

export type OutboxDispatcher = { kick(): void; stop(): Promise<void> };

/**
 * The loop that sends what is left in the outbox: every `everyMs` (1 s) while rows wait, and at
 * once on `kick()`. Logs an outage once when it starts and once when the queue takes jobs again.
 */
export function startOutboxDispatcher(deps: { db: Db; queue: JobQueue; log: Logger }, options: { everyMs?: number } = {}): OutboxDispatcher {
  const everyMs = options.everyMs ?? 1000;
  let stopped = false;
  let timer: NodeJS.Timeout | undefined;
  let running: Promise<void> | null = null;
  let failing = false;
  const round = async () => {
    try {
      for (;;) {
        const result = await dispatchOutbox(deps);
        if (result.error) {
          if (!failing) deps.log.warn('the job outbox cannot be sent: the job queue does not answer', { pending: result.pending, err: result.error });
          failing = true;
          return;
        }
        if (failing && result.sent > 0) deps.log.info('the job queue answers again: outbox jobs sent', { sent: result.sent });
        failing = false;
        // a full page may have more behind it
        if (result.sent + result.dropped < 100 || stopped) return;
      }
    } catch (err) {
      if (!failing) deps.log.warn('the job outbox cannot be read', { err });
      failing = true;
    }
  };
  const schedule = (ms: number) => {
    if (stopped) return;
    clearTimeout(timer);
    timer = setTimeout(tick, ms);
    timer.unref();
  };
  const tick = () => {
    if (running || stopped) return;
    running = round().finally(() => {
      running = null;
      schedule(everyMs);
    });
  };
  schedule(0);
  return {
    kick: () => schedule(0),
    async stop() {
      stopped = true;
      clearTimeout(timer);
      await running;
    },
  };
}
