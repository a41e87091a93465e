import { and, eq, inArray } from 'drizzle-orm';
import type { Db } from '../../../api/src/db/client.js';
import { runs } from '../../../drizzle/schema.js';
import type { RunStatsJson } from '../../../shared/run-stats.js';

type Status = (typeof runs.$inferSelect)['status'];

/**
 * PostgreSQL is the source of truth of a run's state; the worker writes it only through these calls.
 * Each write names the states it may leave, so a run cancelled meanwhile is never revived.
 */
export function runState(db: Db, runId: string) {
  const move = async (from: Status[], values: Partial<typeof runs.$inferInsert>) => {
    const rows = await db
      .update(runs)
      .set({ ...values, updatedAt: new Date() })
      .where(and(eq(runs.id, runId), inArray(runs.status, from)))
      .returning({ id: runs.id });
    return rows.length > 0;
  };
  return {
    async current(): Promise<Status | null> {
      const [row] = await db.select({ status: runs.status }).from(runs).where(eq(runs.id, runId));
      return row?.status ?? null;
    },
    /** false when the run is no longer waiting (cancelled, or finished by another worker) */
    started: (stage: string) => move(['queued', 'computing'], { status: 'computing', stage, progress: 0, error: null, startedAt: new Date() }),
    progress: (stage: string, progress: number) => move(['computing', 'rendering'], { stage, progress }),
    computed: (stats: RunStatsJson) => move(['computing'], { status: 'rendering', stage: 'drawing tiles', progress: 0, stats }),
    finished: () => move(['rendering'], { status: 'finished', stage: null, progress: 1, finishedAt: new Date() }),
    failed: (error: string) => move(['queued', 'computing', 'rendering'], { status: 'failed', error, finishedAt: new Date() }),
  };
}
