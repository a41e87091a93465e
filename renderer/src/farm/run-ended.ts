import { eq } from 'drizzle-orm';
import { actualUsageOf, releaseRun, settleRun } from '../../../api/src/billing/settle.js';
import type { Db } from '../../../api/src/db/client.js';
import type { Mailer } from '../../../api/src/mail/mailer.js';
import { sendRunOutcomeMail } from '../../../api/src/services/run-outcome-mail.js';
import { runs } from '../../../drizzle/schema.js';
import type { Env } from '../../../shared/env.js';

/**
 * What follows the end of a run, once its final state is committed: close its credit reservation
 * (charge what it used, or give it all back when it failed) and mail its author. Both steps are
 * idempotent, and the API's reconciliation closes the reservation anyway if this never runs
 * (a worker killed at that moment), so a failure here is logged, not thrown.
 */
export function runEnded(deps: { db: Db; mailer: Mailer; env: Pick<Env, 'PUBLIC_URL'> }) {
  return async (runId: string): Promise<void> => {
    try {
      const [run] = await deps.db.select({ status: runs.status, stats: runs.stats }).from(runs).where(eq(runs.id, runId));
      if (run?.status === 'finished' && run.stats) await settleRun(deps.db, runId, actualUsageOf(run.stats));
      else if (run?.status === 'failed') await releaseRun(deps.db, runId, 'the run failed');
      await sendRunOutcomeMail(deps, runId);
    } catch (err) {
      console.error(`after run ${runId} ended: ${(err as Error).message}`);
    }
  };
}
