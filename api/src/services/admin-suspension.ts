import { and, eq, isNotNull, isNull } from 'drizzle-orm';
import { labs, runs } from '../../../drizzle/schema.js';
import { JOB_NAMES } from '../../../shared/jobs.js';
import type { Db } from '../db/client.js';
import { conflict, forbidden, notFound } from '../http/http-error.js';
import type { JobQueue } from '../queue/job-queue.js';
import type { Executor } from '../billing/ledger.js';
import { HttpError } from '../http/http-error.js';
import type { Logger } from '../logger.js';
import { dispatchNow, recordJobs } from '../queue/outbox.js';
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

const unavailableQueue = (what: string) => new HttpError(503, `temporarily unavailable: the job queue is not answering; ${what}, try again in a moment`);

async function queuedRuns(ex: Executor, labId: string) {
  return ex.select({ id: runs.id, spec: runs.spec }).from(runs).where(and(eq(runs.labId, labId), eq(runs.status, 'queued')));
}

export async function suspendLab(deps: { db: Db; queue: JobQueue; log?: Logger }, labId: string, actorId: string, reason: string) {
  // the lab's waiting jobs must come off the queue, which needs Redis: refuse at once, recording nothing, while it is away
  if (!(await deps.queue.ping())) throw unavailableQueue('the lab was not suspended');
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
  // after the commit, so a worker that looks finds the lab suspended; a job already running is left
  // alone, and jobs still in the outbox are not sent while the lab is suspended (queue/outbox.ts)
  const waiting = await queuedRuns(deps.db, labId);
  try {
    for (const r of waiting) await deps.queue.remove({ name: JOB_NAMES.computeRun, data: { runId: r.id, spec: r.spec } });
  } catch (err) {
    // Redis went away after the check above: the suspension stands; say which jobs may still run
    deps.log?.error('lab suspended, but its waiting jobs could not be taken off the queue', { labId, runs: waiting.map((r) => r.id), err });
  }
  return { ...row, jobsAffected: waiting.length };
}

export async function reinstateLab(deps: { db: Db; queue: JobQueue; log?: Logger }, labId: string, actorId: string, reason: string) {
  const { updated: row, jobIds } = await deps.db.transaction(async (tx) => {
    const [lab] = await tx.select({ id: labs.id }).from(labs).where(eq(labs.id, labId));
    if (!lab) throw notFound('lab not found');
    const [updated] = await tx
      .update(labs)
      .set({ suspendedAt: null, suspendedReason: null })
      .where(and(eq(labs.id, labId), isNotNull(labs.suspendedAt)))
      .returning();
    if (!updated) throw conflict('the lab is not suspended');
    await audit(tx, { actorId, labId, action: 'lab.reinstate', subjectType: 'lab', subjectId: labId, reason });
    const waiting = await queuedRuns(tx, labId);
    return { updated, jobIds: await recordJobs(tx, deps.queue, waiting.map((r) => ({ name: JOB_NAMES.computeRun, data: { runId: r.id, spec: r.spec } }))) };
  });
  // sent after the commit (the job id is the run's, so a job that somehow survived is not queued
  // twice); while Redis is away the outbox keeps them
  await dispatchNow(deps, jobIds);
  return { ...row, jobsAffected: jobIds.length };
}
