import { eq } from 'drizzle-orm';
import type { Db } from '../../../api/src/db/client.js';
import { runs } from '../../../drizzle/schema.js';
import type { RunStatsJson } from '../../../shared/run-stats.js';

/** PostgreSQL is the source of truth of a run's state; the worker writes it through these few calls. */
export function runState(db: Db, runId: string) {
  const set = (values: Partial<typeof runs.$inferInsert>) =>
    db.update(runs).set({ ...values, updatedAt: new Date() }).where(eq(runs.id, runId));
  return {
    async current() {
      const [row] = await db.select({ status: runs.status }).from(runs).where(eq(runs.id, runId));
      return row?.status ?? null;
    },
    started: (stage: string) => set({ status: 'computing', stage, progress: 0, error: null, startedAt: new Date() }),
    progress: (stage: string, progress: number) => set({ stage, progress }),
    computed: (stats: RunStatsJson) => set({ status: 'rendering', stage: 'drawing tiles', progress: 0, stats }),
    finished: () => set({ status: 'finished', stage: null, progress: 1, finishedAt: new Date() }),
    failed: (error: string) => set({ status: 'failed', error, finishedAt: new Date() }),
  };
}
