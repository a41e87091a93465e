import { Queue, Worker, type ConnectionOptions, type Job } from 'bullmq';
import type { Db } from '../../../api/src/db/client.js';
import type { Mailer } from '../../../api/src/mail/mailer.js';
import { sweepRetention } from '../../../api/src/services/admin-retention.js';
import type { BlobStore } from '../../../api/src/storage/blob-store.js';
import type { Env } from '../../../shared/env.js';
import { JOB_NAMES, QUEUE_NAMES } from '../../../shared/jobs.js';

/** How often the sweep runs: retention is counted in days, so hourly is prompt enough and cheap. */
export const RETENTION_SWEEP_EVERY_MS = 3600_000;
const SCHEDULER_ID = 'retention-sweep';

/**
 * The retention sweep on a BullMQ job scheduler rather than a timer in each worker: one job per
 * interval for the whole farm however many workers run, the schedule lives in Redis across restarts,
 * and a failed sweep shows on the admin console's farm page with its error and a retry button.
 * Every worker upserts the same scheduler (idempotent) and may take the job; the sweep itself is
 * safe to run twice at once anyway (api/src/services/admin-retention.ts).
 */
export async function startRetentionSweep(
  deps: { connection: ConnectionOptions; prefix: string; db: Db; blobs: BlobStore; mailer: Mailer; env: Env },
  /** labIds: sweep only these labs (a staged roll-out, or a test that must not touch other tests' labs) */
  options: { everyMs?: number; labIds?: string[] } = {},
) {
  const queue = new Queue(QUEUE_NAMES.maintenance, { connection: deps.connection, prefix: deps.prefix });
  await queue.upsertJobScheduler(
    SCHEDULER_ID,
    { every: options.everyMs ?? RETENTION_SWEEP_EVERY_MS },
    { name: JOB_NAMES.retentionSweep, data: {}, opts: { attempts: 3, backoff: { type: 'exponential', delay: 60_000 }, removeOnComplete: 50, removeOnFail: 50 } },
  );
  const worker = new Worker(
    QUEUE_NAMES.maintenance,
    async (job: Job) => {
      if (job.name !== JOB_NAMES.retentionSweep) throw new Error(`the maintenance queue does not know ${job.name}`);
      const done = await sweepRetention({ db: deps.db, blobs: deps.blobs, mailer: deps.mailer, env: deps.env }, { labIds: options.labIds });
      // the job's return value is what the farm page and BullMQ keep as its outcome
      return { noticed: done.noticed.length, expired: done.expired.length, finished: done.finished.length };
    },
    { connection: deps.connection, prefix: deps.prefix, concurrency: 1 },
  );
  worker.on('failed', (job, err) => console.error(`retention sweep ${job?.id} failed: ${err.message}`));
  return {
    worker,
    async close() {
      await worker.close();
      await queue.close();
    },
  };
}
