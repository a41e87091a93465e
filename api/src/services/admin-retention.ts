import { and, eq, inArray, isNotNull, isNull, lte, min, sql } from 'drizzle-orm';
import { auditEvents, figureVersions, figures, labs, memberships, runs, users } from '../../../drizzle/schema.js';
import { RETENTION_RULE } from '../../../shared/api/admin.js';
import { printThumbnailKey } from '../../../renderer/src/farm/artifacts.js';
import type { Env } from '../../../shared/env.js';
import type { Executor } from '../billing/ledger.js';
import type { Db } from '../db/client.js';
import { conflict } from '../http/http-error.js';
import { retentionMail } from '../mail/retention-mail.js';
import type { Mailer } from '../mail/mailer.js';
import type { BlobStore } from '../storage/blob-store.js';
import { recordRunUsage, runPrefix, runUsageOf } from '../storage/run-usage.js';
import { audit } from './audit.js';

/**
 * The retention rule for unpublished artifacts (RETENTION_RULE): a finished run that no published
 * figure uses keeps its arrays and tiles for keepDays after it ended; its lab's managers are mailed
 * noticeDays before; at the end the sweep deletes the arrays, tiles and the prints of draft figures
 * made from it, and marks the run "expired" (`runs.artifacts_expired_at`). The run row, its
 * statistics and specification stay, so it can be computed again. Nothing goes without a notice
 * mailed at least noticeDays earlier: a run found past its end without one is mailed first.
 */

export type RetentionDeps = { db: Db; env: Env; mailer: Mailer; blobs: BlobStore };

const DAY = 86400_000;

/** When an unpublished run's retention ends (pure): keepDays after it ended; never for kept or unfinished runs. */
export function expiryOf(finishedAt: Date | null, kept: boolean): Date | null {
  if (!finishedAt || kept) return null;
  return new Date(finishedAt.getTime() + RETENTION_RULE.keepDays * DAY);
}

/** Whether the notice period has begun (pure). */
export function dueForNotice(expiresAt: Date | null, now: Date): boolean {
  return expiresAt !== null && expiresAt.getTime() - RETENTION_RULE.noticeDays * DAY <= now.getTime();
}

/** When the artifacts actually go (pure): the end of retention, but never sooner than noticeDays after the notice; null until noticed. */
export function removalDateOf(expiresAt: Date, noticeAt: Date | null): Date | null {
  if (!noticeAt) return null;
  return new Date(Math.max(expiresAt.getTime(), noticeAt.getTime() + RETENTION_RULE.noticeDays * DAY));
}

/**
 * Runs retention never touches: every run used by a figure that was ever published — its lead run,
 * its current panels and the panels of each printed version. A withdrawn figure counts too: it
 * may be published again, and withdrawing keeps everything.
 */
export async function keptRunIds(ex: Executor, runId?: string): Promise<Set<string>> {
  const only = runId ? sql`and x.id = ${runId}` : sql``;
  const res = await ex.execute<{ id: string }>(sql`
    select distinct x.id from (
      select f.run_id::text as id from ${figures} f where f.published_at is not null
      union all
      select p->>'runId' from ${figures} f cross join lateral jsonb_array_elements(f.spec->'panels') p where f.published_at is not null and f.spec is not null
      union all
      select p->>'runId' from ${figureVersions} v join ${figures} f on f.id = v.figure_id cross join lateral jsonb_array_elements(v.spec->'panels') p where f.published_at is not null
    ) x where x.id is not null ${only}`);
  return new Set(res.rows.map((r) => r.id));
}

/** The first notice mailed for each run, from the audit trail (the notice's only record). */
export async function noticesOf(ex: Executor, runIds?: string[]): Promise<Map<string, Date>> {
  if (runIds && runIds.length === 0) return new Map();
  const rows = await ex
    .select({ runId: auditEvents.subjectId, at: min(auditEvents.at) })
    .from(auditEvents)
    .where(and(eq(auditEvents.action, 'retention.notice'), runIds ? inArray(auditEvents.subjectId, runIds) : undefined))
    .groupBy(auditEvents.subjectId);
  return new Map(rows.flatMap((r) => (r.runId && r.at ? [[r.runId, r.at] as const] : [])));
}

/** Finished runs whose notice period has begun and whose artifacts are still there, optionally of some labs only. */
async function candidates(db: Executor, now: Date, labIds?: string[]) {
  const noticeFrom = new Date(now.getTime() - (RETENTION_RULE.keepDays - RETENTION_RULE.noticeDays) * DAY);
  const rows = await db
    .select({ id: runs.id, labId: runs.labId, title: runs.title, finishedAt: runs.finishedAt })
    .from(runs)
    .where(and(eq(runs.status, 'finished'), lte(runs.finishedAt, noticeFrom), isNull(runs.artifactsExpiredAt), labIds ? inArray(runs.labId, labIds) : undefined));
  const kept = await keptRunIds(db);
  return rows.filter((r) => !kept.has(r.id)).map((r) => ({ ...r, expiresAt: expiryOf(r.finishedAt, false)! }));
}

/** Who hears about a lab's runs: its managers, or every member of a lab that lost its last manager. */
async function recipientsOf(db: Executor, labId: string): Promise<string[]> {
  const people = await db
    .select({ email: users.email, role: memberships.role })
    .from(memberships)
    .innerJoin(users, eq(users.id, memberships.userId))
    .where(eq(memberships.labId, labId))
    .orderBy(users.email);
  const managers = people.filter((p) => p.role === 'manager');
  return (managers.length ? managers : people).map((p) => p.email);
}

export type NoticeResult = { mailedTo: string[]; runs: number; labName: string };

/**
 * Mail a lab about its runs in the notice period that hold artifacts and were not mailed yet, and
 * record one `retention.notice` event per run. One mailer per lab at a time (an advisory lock), so
 * the admin's button and any number of sweeps never mail a run twice. `wait: false` returns null
 * when another one holds the lab.
 */
export async function mailRetentionNotices(deps: RetentionDeps, labId: string, actorId: string | null, opts: { now?: Date; wait: boolean }): Promise<NoticeResult | null> {
  const now = opts.now ?? new Date();
  return deps.db.transaction(async (tx) => {
    const lockKey = `retention-notice:${labId}`;
    if (opts.wait) await tx.execute(sql`select pg_advisory_xact_lock(hashtext(${lockKey}))`);
    else if (!(await tx.execute<{ ok: boolean }>(sql`select pg_try_advisory_xact_lock(hashtext(${lockKey})) as ok`)).rows[0]?.ok) return null;
    const [lab] = await tx.select({ name: labs.name }).from(labs).where(eq(labs.id, labId));
    if (!lab) return null;
    const runsDue = (await candidates(tx, now, [labId])).filter((r) => dueForNotice(r.expiresAt, now));
    const noticed = await noticesOf(tx, runsDue.map((r) => r.id));
    const held = await runUsageOf({ db: tx, blobs: deps.blobs }, runsDue.filter((r) => !noticed.has(r.id)).map((r) => r.id));
    const due = runsDue.filter((r) => !noticed.has(r.id) && (held.get(r.id)?.objects ?? 0) > 0);
    if (due.length === 0) return { mailedTo: [], runs: 0, labName: lab.name };
    const to = await recipientsOf(tx, labId);
    const items = due.map((r) => ({ title: r.title, removalAt: removalDateOf(r.expiresAt, now)!.toISOString() }));
    // mailed inside the transaction: if a mail fails nothing is recorded and the next sweep tries again
    for (const email of to) await deps.mailer.send(retentionMail(deps.env.PUBLIC_URL, email, lab.name, items));
    for (const [k, r] of due.entries()) {
      await audit(tx, {
        actorId,
        labId,
        action: 'retention.notice',
        subjectType: 'run',
        subjectId: r.id,
        reason: to.length ? null : 'the lab has no members to mail',
        detail: { expiresAt: r.expiresAt.toISOString(), removalAt: items[k]!.removalAt, mailedTo: to },
      });
    }
    return { mailedTo: to, runs: due.length, labName: lab.name };
  });
}

/**
 * Delete what an expired run left in the store: everything under runs/<id>/, and the printed files of
 * versions of never-published figures composed with it (those versions become failed, saying why).
 * Idempotent: a sweep interrupted midway runs it again; `artifacts_cleared_at` is set once it is done.
 */
export async function clearExpiredRun(deps: Pick<RetentionDeps, 'db' | 'blobs'>, runId: string, title: string): Promise<{ objects: number; prints: number }> {
  // in batches of ≤ 1,000 per request, failed keys retried; anything left throws, so artifacts_cleared_at stays unset
  const objects = await deps.blobs.deletePrefix(runPrefix(runId));
  const drafts = await deps.db
    .select({ id: figureVersions.id, figureId: figureVersions.figureId, number: figureVersions.number, files: figureVersions.files, status: figureVersions.status })
    .from(figureVersions)
    .innerJoin(figures, eq(figures.id, figureVersions.figureId))
    .where(and(isNull(figures.publishedAt), sql`${figureVersions.spec}->'panels' @> ${JSON.stringify([{ runId }])}::jsonb`));
  let prints = 0;
  for (const v of drafts) {
    // the page's small picture goes with the files it was shrunk from
    await deps.blobs.deleteMany([...v.files.map((f) => f.key), printThumbnailKey(v.figureId, v.number)]);
    prints += v.files.length;
    if (v.status === 'ready') {
      await deps.db
        .update(figureVersions)
        .set({ status: 'failed', error: `its printed files were deleted with the artifacts of run "${title}" at the end of its retention period` })
        .where(and(eq(figureVersions.id, v.id), eq(figureVersions.status, 'ready')));
    }
  }
  // deletePrefix returned on an empty listing page: the run holds nothing now
  await deps.db
    .update(runs)
    .set({ artifactsClearedAt: sql`coalesce(${runs.artifactsClearedAt}, now())`, storedBytes: 0, storedObjects: 0 })
    .where(eq(runs.id, runId));
  return { objects, prints };
}

/**
 * Take one run past its end: lock it (skipping a run another sweep or a publication holds), check
 * again that no published figure uses it, mark it expired and record the event, all in one
 * transaction; deletion follows after the commit. A publication locks the same row, so it either
 * commits first (the run is kept) or finds the run expired and is refused.
 */
async function claimExpiredRun(db: Db, blobs: BlobStore, run: { id: string; expiresAt: Date }, noticeAt: Date): Promise<{ labId: string; title: string; bytes: number; objects: number } | null> {
  return db.transaction(async (tx) => {
    const [row] = await tx
      .select({ id: runs.id, labId: runs.labId, title: runs.title })
      .from(runs)
      .where(and(eq(runs.id, run.id), isNull(runs.artifactsExpiredAt)))
      .for('update', { skipLocked: true });
    if (!row) return null;
    if ((await keptRunIds(tx, run.id)).size > 0) return null;
    // listed once more at the claim, for the audit record (and the row, in case it was unknown)
    const size = await recordRunUsage(tx, blobs, run.id);
    await tx.update(runs).set({ artifactsExpiredAt: new Date() }).where(eq(runs.id, run.id));
    await audit(tx, {
      actorId: null,
      labId: row.labId,
      action: 'retention.expire',
      subjectType: 'run',
      subjectId: run.id,
      reason: `unpublished ${RETENTION_RULE.keepDays} days after it ended; the lab was mailed on ${noticeAt.toISOString().slice(0, 10)}`,
      detail: { title: row.title, expiresAt: run.expiresAt.toISOString(), noticeMailedAt: noticeAt.toISOString(), bytes: size.bytes, objects: size.objects },
    });
    return { labId: row.labId, title: row.title, ...size };
  });
}

export type SweepResult = {
  noticed: { labId: string; runs: number; mailedTo: string[] }[];
  expired: { runId: string; labId: string; bytes: number; objects: number; prints: number }[];
  /** runs expired earlier whose deletion an interrupted sweep left unfinished */
  finished: string[];
};

/**
 * One pass of the rule over every lab (or `labIds` only: an admin sweeping one lab, or a test that
 * must not touch other tests' labs). Safe to run twice at once: notices are mailed under a per-lab
 * lock, runs are claimed with SKIP LOCKED, and deleting an object twice is harmless.
 */
export async function sweepRetention(deps: RetentionDeps, opts: { now?: Date; labIds?: string[] } = {}): Promise<SweepResult> {
  const now = opts.now ?? new Date();
  const out: SweepResult = { noticed: [], expired: [], finished: [] };
  const found = await candidates(deps.db, now, opts.labIds);

  // 1. mail first: every lab with runs in their notice period not mailed yet
  const notices = await noticesOf(deps.db, found.map((r) => r.id));
  const toMail = new Set(found.filter((r) => !notices.has(r.id)).map((r) => r.labId));
  for (const labId of toMail) {
    const sent = await mailRetentionNotices(deps, labId, null, { now, wait: false });
    if (sent && sent.runs > 0) out.noticed.push({ labId, runs: sent.runs, mailedTo: sent.mailedTo });
  }

  // 2. then delete: runs past their end whose notice is at least noticeDays old
  const mailed = await noticesOf(deps.db, found.map((r) => r.id));
  for (const r of found) {
    const removalAt = removalDateOf(r.expiresAt, mailed.get(r.id) ?? null);
    if (!removalAt || removalAt.getTime() > now.getTime()) continue;
    const claimed = await claimExpiredRun(deps.db, deps.blobs, r, mailed.get(r.id)!);
    if (!claimed) continue;
    const cleared = await clearExpiredRun(deps, r.id, claimed.title);
    out.expired.push({ runId: r.id, labId: claimed.labId, bytes: claimed.bytes, objects: claimed.objects, prints: cleared.prints });
  }

  // 3. finish what an interrupted sweep left behind
  const unfinished = await deps.db
    .select({ id: runs.id, title: runs.title })
    .from(runs)
    .where(and(isNotNull(runs.artifactsExpiredAt), isNull(runs.artifactsClearedAt), opts.labIds ? inArray(runs.labId, opts.labIds) : undefined));
  for (const r of unfinished) {
    await clearExpiredRun(deps, r.id, r.title);
    out.finished.push(r.id);
  }
  return out;
}

/**
 * Publication's half of the claim: lock every run a figure uses (the sweep's claim skips locked runs)
 * and refuse when one of them has expired, so no published figure ever points at deleted artifacts.
 */
export async function lockRunsForPublication(tx: Executor, figureId: string): Promise<void> {
  const res = await tx.execute<{ id: string; title: string; expired: Date | null }>(sql`
    select r.id, r.title, r.artifacts_expired_at as expired from ${runs} r where r.id::text in (
      select f.run_id::text from ${figures} f where f.id = ${figureId}
      union select p->>'runId' from ${figures} f cross join lateral jsonb_array_elements(f.spec->'panels') p where f.id = ${figureId} and f.spec is not null
      union select p->>'runId' from ${figureVersions} v cross join lateral jsonb_array_elements(v.spec->'panels') p where v.figure_id = ${figureId}
    ) order by r.id for share`);
  const gone = res.rows.find((r) => r.expired);
  if (gone) throw conflict(`run "${gone.title}" of this figure expired and its arrays and tiles were removed at the end of its retention period; re-run it and compose the figure from the new run`);
}
