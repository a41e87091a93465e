import { Queue, Worker, type Job } from 'bullmq';
import { Redis } from 'ioredis';
import { connectDatabase } from '../../../api/src/db/client.js';
import { createS3BlobStore } from '../../../api/src/storage/s3-blob-store.js';
import { createSmtpMailer } from '../../../api/src/mail/mailer.js';
import { sendRunOutcomeMail } from '../../../api/src/services/run-outcome-mail.js';
import type { Env } from '../../../shared/env.js';
import { JOB_NAMES, JOBS_TO_QUEUE, QUEUE_NAMES, jobIdFor, type JobItem } from '../../../shared/jobs.js';
import { createS3Client } from '../render/index.js';
import { computeRun } from './compute-run.js';
import { renderRun } from './render-run.js';

export interface FarmWorkerOptions {
  /** BullMQ key prefix; tests use their own */
  prefix?: string;
  /** concurrent stabilizations per worker process; each already uses both cores */
  computeConcurrency?: number;
  renderConcurrency?: number;
  threads?: number;
}

/**
 * The only module of the renderer that talks to BullMQ: one Worker per queue, so a long
 * stabilization never holds back the rendering of a finished run.
 */
export async function startFarmWorker(env: Env, options: FarmWorkerOptions = {}) {
  const prefix = options.prefix ?? 'tw';
  const connection = new Redis(env.REDIS_URL, { maxRetriesPerRequest: null });
  const database = connectDatabase(env.DATABASE_URL, 4);
  const store = createS3BlobStore(env);
  const s3 = createS3Client({ endpoint: env.S3_ENDPOINT, region: env.S3_REGION, accessKeyId: env.S3_ACCESS_KEY_ID, secretAccessKey: env.S3_SECRET_ACCESS_KEY });
  const renderQueue = new Queue(QUEUE_NAMES.render, { connection, prefix });
  const enqueue = async (item: JobItem) => {
    const queue = JOBS_TO_QUEUE[item.name] === QUEUE_NAMES.render ? renderQueue : null;
    if (!queue) throw new Error(`the worker does not enqueue ${item.name}`);
    await queue.add(item.name, item.data, { jobId: jobIdFor(item), attempts: 3, backoff: { type: 'exponential', delay: 2000 } });
  };
  const mailer = createSmtpMailer(env.SMTP_URL, env.MAIL_FROM);
  const notifyOutcome = async (runId: string) => {
    // a mail that cannot be sent must not fail a finished run
    await sendRunOutcomeMail({ db: database.db, mailer, env }, runId).catch((err: Error) => console.error(`outcome mail for run ${runId}: ${err.message}`));
  };
  const concurrency = { compute: options.computeConcurrency ?? 1, render: options.renderConcurrency ?? 1 };

  const compute = new Worker(
    QUEUE_NAMES.compute,
    (job: Job) => computeRun(job, {
      db: database.db,
      store,
      threads: options.threads,
      notifyOutcome,
      enqueueRender: (runId) => enqueue({ name: JOB_NAMES.renderRun, data: { runId } }),
    }),
    { connection, prefix, concurrency: concurrency.compute },
  );
  const render = new Worker(
    QUEUE_NAMES.render,
    (job: Job) => renderRun(job, { db: database.db, store, s3, bucket: env.S3_BUCKET, notifyOutcome }),
    { connection, prefix, concurrency: concurrency.render },
  );
  for (const w of [compute, render]) w.on('failed', (job, err) => console.error(`job ${job?.id} failed: ${err.message}`));

  return {
    concurrency,
    async close() {
      await Promise.all([compute.close(), render.close()]);
      await renderQueue.close();
      store.close();
      mailer.close();
      s3.destroy();
      await database.close();
      await connection.quit().catch(() => connection.disconnect());
    },
  };
}
