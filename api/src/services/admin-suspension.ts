import { and, eq, isNotNull, isNull } from 'drizzle-orm';
import { labs, runs } from '../../../drizzle/schema.js';
import { JOB_NAMES } from '../../../shared/jobs.js';
import type { Db } from '../db/client.js';
import { conflict, forbidden, notFound } from '../http/http-error.js';
import type { JobQueue } from '../queue/job-queue.js';
import type { Executor } from '../billing/ledger.js';
import { audit } from './audit.js';

/**
 * Suspending a lab stops its queued jobs and its submissions; it deletes nothing. Runs stay
 * "queued" in PostgreSQL while their jobs are off the queue, so reinstating simply puts them back.
 * A job a worker already holds runs to its end (its credits are reserved already).
 */

/** Refuse a submission to a suspended lab (the runs service calls this before recording runs). */
export async function refuseIfSuspended(ex: Executor, labId: string): Promise<void> {
  const [row] = await ex.select({ at: labs.suspendedAt, reason: labs.suspendedReason }).from(labs).where(eq(labs.id, labId));
  if (row?.at) {
    throw forbidden(`this lab was suspended by a site admin on ${row.at.toISOString().slice(0, 10)} (${row.reason ?? 'no reason given'}); no runs can be submitted until it is reinstated`);
  }
}

async function queuedRuns(ex: Executor, labId: string) {
  return ex.select({ id: runs.id, spec: runs.spec }).from(runs).where(and(eq(runs.labId, labId), eq(runs.status, 'queued')));
}

export async function suspendLab(deps: { db: Db; queue: JobQueue }, labId: string, actorId: string, reason: string) {
  const row = await deps.db.transaction(async (tx) => {
    const [lab] = await tx.select({ id: labs.id }).from(labs).where(eq(labs.id, labId));
    if (!lab) throw notFound('lab not found');
    const [updated] = await tx
      .update(labs)
      .set({ suspendedAt: new Date(), suspendedReason: reason })
      .where(and(eq(labs.id, labId), isNull(labs.suspendedAt)))
      .returning();
    if (!updated) throw conflict('the lab is suspended already');
    const waiting = await queuedRuns(tx, labId);
    await audit(tx, { actorId, labId, action: 'lab.suspend', subjectType: 'lab', subjectId: labId, reason, detail: { queuedRuns: waiting.length } });
    return updated;
  });
  // after the commit, so a worker that looks finds the lab suspended; a job already running is left alone
  const waiting = await queuedRuns(deps.db, labId);
  for (const r of waiting) await deps.queue.remove({ name: JOB_NAMES.computeRun, data: { runId: r.id, spec: r.spec } });
  return { ...row, jobsAffected: waiting.length };
}

export async function reinstateLab(deps: { db: Db; queue: JobQueue }, labId: string, actorId: string, reason: string) {
  const row = await deps.db.transaction(async (tx) => {
    const [lab] = await tx.select({ id: labs.id }).from(labs).where(eq(labs.id, labId));
    if (!lab) throw notFound('lab not found');
    const [updated] = await tx
      .update(labs)
      .set({ suspendedAt: null, suspendedReason: null })
      .where(and(eq(labs.id, labId), isNotNull(labs.suspendedAt)))
      .returning();
    if (!updated) throw conflict('the lab is not suspended');
    await audit(tx, { actorId, labId, action: 'lab.reinstate', subjectType: 'lab', subjectId: labId, reason });
    return updated;
  });
  // the job id is the run's, so a job that somehow survived is not queued twice
  const waiting = await queuedRuns(deps.db, labId);
  for (const r of waiting) await deps.queue.enqueue({ name: JOB_NAMES.computeRun, data: { runId: r.id, spec: r.spec } });
  return { ...row, jobsAffected: waiting.length };
}
