import { hostname } from 'node:os';
import { Queue, Worker, type Job } from 'bullmq';
import { Redis } from 'ioredis';
import { connectDatabase } from '../../../api/src/db/client.js';
import { createS3BlobStore } from '../../../api/src/storage/s3-blob-store.js';
import { createSmtpMailer } from '../../../api/src/mail/mailer.js';
import type { Env } from '../../../shared/env.js';
import { HEARTBEAT_EVERY_MS, HEARTBEAT_TTL_SECONDS, heartbeatKey } from '../../../shared/api/admin.js';
import { JOB_NAMES, JOBS_TO_QUEUE, QUEUE_NAMES, jobIdFor, type JobItem } from '../../../shared/jobs.js';
import { createS3Client } from '../render/index.js';
import { computeRun } from './compute-run.js';
import { renderRun } from './render-run.js';
import { runEnded } from './run-ended.js';
import { printRun } from './print-run.js';
import { sendFigureReadyMail } from '../../../api/src/services/figures-ready-mail.js';
import { startRetentionSweep } from './retention-sweep.js';

export interface FarmWorkerOptions {
  /** BullMQ key prefix; tests use their own */
  prefix?: string;
  /** concurrent stabilizations per worker process; each already uses both cores */
  computeConcurrency?: number;
  renderConcurrency?: number;
  threads?: number;
  /** take part in the scheduled retention sweep (worker.ts turns it on; tests keep it off so it never sweeps other tests' labs) */
  retentionSweep?: boolean;
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
    // drawing only reads and writes the store: six attempts ride out an outage of about a minute (2+4+8+16+32 s)
    await queue.add(item.name, item.data, { jobId: jobIdFor(item), attempts: 6, backoff: { type: 'exponential', delay: 2000 } });
  };
  const mailer = createSmtpMailer(env.SMTP_URL, env.MAIL_FROM);
  const notifyOutcome = runEnded({ db: database.db, mailer, env });
  const concurrency = { compute: options.computeConcurrency ?? 1, render: options.renderConcurrency ?? 1 };
  const notifyPrintReady = async (versionId: string) => {
    // as above: the print is stored and ready even if its mail cannot go out now
    await sendFigureReadyMail({ db: database.db, mailer, blobs: store, env }, versionId).catch((err: Error) => console.error(`print-ready mail for version ${versionId}: ${err.message}`));
  };

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
  // print orders hold a page strip and the runs' arrays: one at a time per worker process
  const print = new Worker(
    QUEUE_NAMES.print,
    (job: Job) => printRun(job, { db: database.db, store, s3, bucket: env.S3_BUCKET, notifyReady: notifyPrintReady }),
    { connection, prefix, concurrency: 1 },
  );
  const sweep = options.retentionSweep ? await startRetentionSweep({ connection, prefix, db: database.db, blobs: store, mailer, env }) : null;
  for (const w of [compute, render, print]) w.on('failed', (job, err) => console.error(`job ${job?.id} failed (attempt ${job?.attemptsMade}): ${err.message}`));

  // Heartbeat for the admin console's farm page: who is alive and which jobs each holds; the key expires if the process dies.
  const farmWorkers = [compute, render, print];
  const startedAt = new Date().toISOString();
  const holding = new Map<string, { queue: string; jobId: string; runId: string | null; since: string }>();
  for (const w of farmWorkers) {
    w.on('active', (job) => holding.set(`${w.name}/${job.id}`, { queue: w.name, jobId: job.id ?? '', runId: typeof job.data?.runId === 'string' ? job.data.runId : null, since: new Date().toISOString() }));
    w.on('completed', (job) => holding.delete(`${w.name}/${job.id}`));
    w.on('failed', (job) => job && holding.delete(`${w.name}/${job.id}`));
  }
  const beatKey = heartbeatKey(prefix, hostname(), process.pid);
  const beat = () =>
    connection
      .set(beatKey, JSON.stringify({ host: hostname(), pid: process.pid, startedAt, at: new Date().toISOString(), queues: farmWorkers.map((w) => w.name), active: [...holding.values()] }), 'EX', HEARTBEAT_TTL_SECONDS)
      .catch(() => {});
  void beat();
  const heartbeat = setInterval(beat, HEARTBEAT_EVERY_MS);
  heartbeat.unref();

  return {
    concurrency,
    async close() {
      clearInterval(heartbeat);
      await connection.del(beatKey).catch(() => {});
      await Promise.all([compute.close(), render.close(), print.close(), sweep?.close()]);
      await renderQueue.close();
      store.close();
      mailer.close();
      s3.destroy();
      await database.close();
      await connection.quit().catch(() => connection.disconnect());
    },
  };
}
