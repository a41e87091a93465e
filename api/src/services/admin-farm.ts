import { desc, eq, inArray } from 'drizzle-orm';
import { labs, runs } from '../../../drizzle/schema.js';
import type { FarmHealthResponse } from '../../../shared/api/admin.js';
import { QUEUE_NAMES } from '../../../shared/jobs.js';
import type { Db } from '../db/client.js';
import { conflict, notFound } from '../http/http-error.js';
import type { FarmHealth } from '../queue/farm-health.js';
import { audit } from './audit.js';

/** Farm health for the console: the queues from BullMQ, running runs from PostgreSQL (the source of truth of progress). */
export async function farmReport(db: Db, farm: FarmHealth, now = new Date()): Promise<FarmHealthResponse> {
  const snap = await farm.snapshot();
  const working = await db
    .select({ r: runs, labName: labs.name })
    .from(runs)
    .innerJoin(labs, eq(labs.id, runs.labId))
    .where(inArray(runs.status, ['computing', 'rendering']))
    .orderBy(desc(runs.startedAt));
  const holder = new Map<string, string>();
  for (const w of snap.workers) for (const a of w.active) if (a.runId) holder.set(a.runId, `${w.host}:${w.pid}`);
  const failedRunIds = snap.failed.map((f) => f.runId).filter((x): x is string => x !== null);
  const failedRuns = failedRunIds.length
    ? await db.select({ id: runs.id, title: runs.title, labName: labs.name }).from(runs).innerJoin(labs, eq(labs.id, runs.labId)).where(inArray(runs.id, failedRunIds))
    : [];
  const named = new Map(failedRuns.map((r) => [r.id, r]));
  return {
    at: now.toISOString(),
    queues: snap.queues,
    workers: snap.workers,
    bullWorkers: snap.bullWorkers,
    running: working.map(({ r, labName }) => ({
      runId: r.id,
      title: r.title,
      labId: r.labId,
      labName,
      status: r.status,
      stage: r.stage,
      progress: Math.min(1, Math.max(0, r.progress)),
      startedAt: r.startedAt?.toISOString() ?? null,
      worker: holder.get(r.id) ?? null,
    })),
    failed: snap.failed.map((f) => ({
      ...f,
      runTitle: f.runId ? (named.get(f.runId)?.title ?? null) : null,
      labName: f.runId ? (named.get(f.runId)?.labName ?? null) : null,
      failedAt: f.failedAt?.toISOString() ?? null,
    })),
  };
}

/**
 * Retry a failed job. The worker only starts runs that are queued (or resumes rendering ones), so
 * the run goes back to the state its job begins from first. Its reservation was given back when it
 * failed: an admin's retry of a farm fault is not charged again.
 */
export async function retryFailedJob(db: Db, farm: FarmHealth, actorId: string, queue: string, jobId: string) {
  const known = (Object.values(QUEUE_NAMES) as string[]).includes(queue);
  if (!known) throw notFound(`no queue named ${queue}`);
  const job = (await farm.snapshot()).failed.find((f) => f.queue === queue && f.jobId === jobId);
  if (!job) throw notFound('no failed job with this id in that queue (it may have been retried already)');
  let labId: string | null = null;
  if (job.runId) {
    const [run] = await db.select().from(runs).where(eq(runs.id, job.runId));
    if (run) {
      labId = run.labId;
      if (run.status === 'cancelled') throw conflict('the run was cancelled; its author can run it again instead');
      const [lab] = await db.select({ suspendedAt: labs.suspendedAt }).from(labs).where(eq(labs.id, run.labId));
      if (lab?.suspendedAt) throw conflict('the run\'s lab is suspended; reinstate it first');
      const back = queue === QUEUE_NAMES.render ? 'rendering' : 'queued';
      await db.update(runs).set({ status: back, error: null, finishedAt: null, progress: 0, stage: null, updatedAt: new Date() }).where(eq(runs.id, run.id));
    }
  }
  const retried = await farm.retry(queue, jobId);
  if (!retried) throw notFound('no failed job with this id in that queue (it may have been retried already)');
  await audit(db, { actorId, labId, action: 'farm.retry', subjectType: 'job', subjectId: `${queue}/${jobId}`, detail: { runId: job.runId, error: job.error } });
  return { queue, jobId, runId: job.runId };
}
