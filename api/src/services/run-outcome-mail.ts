import { and, eq, inArray, isNull } from 'drizzle-orm';
import { runs, users } from '../../../drizzle/schema.js';
import type { Env } from '../../../shared/env.js';
import type { Db } from '../db/client.js';
import type { Mailer } from '../mail/mailer.js';
import { runOutcomeMail } from '../mail/run-outcome-mail.js';
import { latticeOfSpec } from '../../../shared/lattice-names.js';

/** Runs that took at least this long from submission to their end get a mail; shorter ones are watched live. */
export const LONG_RUN_SECONDS = 60;

export type OutcomeMailResult = 'sent' | 'short' | 'not-final' | 'already-sent' | 'missing';

/**
 * Mail the author of a run that has finished or failed, linking to its page. Call it after the
 * state change is committed (the renderer's worker does, after `finished()` or `failed()`); calling
 * it twice, or from two workers, sends one mail: the row is claimed before sending and released if
 * the SMTP server refuses.
 * @example await sendRunOutcomeMail({ db, mailer, env }, runId)
 */
export async function sendRunOutcomeMail(
  deps: { db: Db; mailer: Mailer; env: Pick<Env, 'PUBLIC_URL'> },
  runId: string,
  options: { minSeconds?: number } = {},
): Promise<OutcomeMailResult> {
  const [row] = await deps.db.select({ run: runs, email: users.email }).from(runs).innerJoin(users, eq(users.id, runs.authorId)).where(eq(runs.id, runId));
  if (!row) return 'missing';
  const { run } = row;
  if ((run.status !== 'finished' && run.status !== 'failed') || !run.finishedAt) return 'not-final';
  if (run.outcomeMailedAt) return 'already-sent';
  const seconds = (run.finishedAt.getTime() - run.createdAt.getTime()) / 1000;
  if (seconds < (options.minSeconds ?? LONG_RUN_SECONDS)) return 'short';
  const claimed = await deps.db
    .update(runs)
    .set({ outcomeMailedAt: new Date() })
    .where(and(eq(runs.id, runId), isNull(runs.outcomeMailedAt), inArray(runs.status, ['finished', 'failed'])))
    .returning({ id: runs.id });
  if (claimed.length === 0) return 'already-sent';
  try {
    await deps.mailer.send(
      runOutcomeMail(deps.env.PUBLIC_URL, row.email, {
        id: run.id,
        title: run.title,
        status: run.status,
        chips: run.spec.chips,
        lattice: latticeOfSpec(run.spec.lattice),
        error: run.error,
        seconds,
        farmSeconds: run.startedAt ? (run.finishedAt.getTime() - run.startedAt.getTime()) / 1000 : null,
      }),
    );
  } catch (err) {
    await deps.db.update(runs).set({ outcomeMailedAt: null }).where(eq(runs.id, runId));
    throw err;
  }
  return 'sent';
}
