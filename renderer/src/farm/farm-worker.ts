import { hostname, totalmem } from 'node:os';
import { DeleteObjectCommand } from '@aws-sdk/client-s3';
import { Queue, Worker, type Job } from 'bullmq';
import { Redis } from 'ioredis';
import { connectDatabase } from '../../../api/src/db/client.js';
import { createS3BlobStore } from '../../../api/src/storage/s3-blob-store.js';
import { refreshRunUsage } from '../../../api/src/storage/run-usage.js';
import { createSmtpMailer } from '../../../api/src/mail/mailer.js';
import type { Env } from '../../../shared/env.js';
import { BYTES_PER_CELL } from '../../../shared/estimate.js';
import { HEARTBEAT_EVERY_MS, HEARTBEAT_TTL_SECONDS, heartbeatKey } from '../../../shared/api/admin.js';
import { JOB_NAMES, QUEUE_NAMES, jobIdFor, queueOf, type JobItem } from '../../../shared/jobs.js';
import { createS3Client } from '../render/index.js';
import { checkpointKey } from './artifacts.js';
import { computeRun } from './compute-run.js';
import { runState } from './run-state.js';
import { renderRun } from './render-run.js';
import { runEnded } from './run-ended.js';
import { printRun } from './print-run.js';
import { sendFigureReadyMail } from '../../../api/src/services/figures-ready-mail.js';
import { startRetentionSweep } from './retention-sweep.js';

export interface FarmWorkerOptions {
  /** BullMQ key prefix (default env.BULLMQ_PREFIX); tests use their own */
  prefix?: string;
  /** runs of the standard compute lane at once (default env.WORKER_COMPUTE_CONCURRENCY) */
  computeConcurrency?: number;
  /** runs of the large compute lane at once, 0 = none (default env.WORKER_LARGE_CONCURRENCY) */
  largeConcurrency?: number;
  /** pyramids drawn at once, 0 = none (default env.WORKER_RENDER_CONCURRENCY) */
  renderConcurrency?: number;
  /** threads per run, for the plain tiled engine and the fast path's strips (default env.WORKER_THREADS, else the engine's own) */
  threads?: number;
  /** seconds between checkpoints (default env.WORKER_CHECKPOINT_SECONDS) */
  checkpointSeconds?: number;
  /**
   * largest domain a run may grow to, in sites (default: this machine's memory over BYTES_PER_CELL,
   * the rule the API admits runs by, so a run it accepts is not refused here after hours of work)
   */
  maxSites?: number;
  /** lock duration and stalled-check interval in seconds (default env.WORKER_LOCK_SECONDS) */
  lockSeconds?: number;
  /** re-deliveries of a compute job whose worker died before BullMQ fails it (default MAX_STALLED.compute) */
  maxStalledCount?: number;
  /** where progress lines go (default: standard output) */
  log?(line: string): void;
  /** take part in the scheduled retention sweep (worker.ts turns it on; tests keep it off so it never sweeps other tests' labs) */
  retentionSweep?: boolean;
}

/**
 * Re-deliveries of a job whose worker died (its lock ran out) before BullMQ fails it. Compute jobs
 * resume from their checkpoint, so a few are harmless; the bound stops a run that kills every
 * worker it lands on (out of memory, say) from going round for ever.
 */
const MAX_STALLED = { compute: 3, other: 2 } as const;

/**
 * The only module of the renderer that talks to BullMQ: one Worker per queue, so a long
 * stabilization never holds back the rendering of a finished run, and one per compute lane, so a
 * small run never waits behind a huge one (shared/jobs.ts, computeLaneOf).
 *
 * A job's lock lasts `lockSeconds` and is renewed every half of it while the job runs (the engine
 * yields to the event loop every 0.1 s, so renewals are never late); every worker checks every
 * `lockSeconds` for jobs whose lock ran out and puts them back on their queue. So a killed worker's
 * run is taken up by another one within about 2 × lockSeconds, and resumes from its last checkpoint.
 */
export async function startFarmWorker(env: Env, options: FarmWorkerOptions = {}) {
  const prefix = options.prefix ?? env.BULLMQ_PREFIX;
  const log = options.log ?? ((line: string) => console.log(line));
  const connection = new Redis(env.REDIS_URL, { maxRetriesPerRequest: null });
  const database = connectDatabase(env.DATABASE_URL, 4);
  const store = createS3BlobStore(env);
  const s3 = createS3Client({ endpoint: env.S3_ENDPOINT, region: env.S3_REGION, accessKeyId: env.S3_ACCESS_KEY_ID, secretAccessKey: env.S3_SECRET_ACCESS_KEY });
  const renderQueue = new Queue(QUEUE_NAMES.render, { connection, prefix });
  const enqueue = async (item: JobItem) => {
    if (queueOf(item) !== QUEUE_NAMES.render) throw new Error(`the worker does not enqueue ${item.name}`);
    // drawing only reads and writes the store: six attempts ride out an outage of about a minute (2+4+8+16+32 s)
    await renderQueue.add(item.name, item.data, { jobId: jobIdFor(item), attempts: 6, backoff: { type: 'exponential', delay: 2000 } });
  };
  const mailer = createSmtpMailer(env.SMTP_URL, env.MAIL_FROM);
  const notifyOutcome = runEnded({ db: database.db, mailer, env });
  const concurrency = {
    compute: options.computeConcurrency ?? env.WORKER_COMPUTE_CONCURRENCY,
    large: options.largeConcurrency ?? env.WORKER_LARGE_CONCURRENCY,
    render: options.renderConcurrency ?? env.WORKER_RENDER_CONCURRENCY,
  };
  const threads = options.threads ?? env.WORKER_THREADS;
  const checkpointSeconds = options.checkpointSeconds ?? env.WORKER_CHECKPOINT_SECONDS;
  const maxSites = options.maxSites ?? Math.floor(totalmem() / BYTES_PER_CELL);
  const lockMs = Math.round((options.lockSeconds ?? env.WORKER_LOCK_SECONDS) * 1000);
  const held = (maxStalledCount: number) => ({ connection, prefix, lockDuration: lockMs, stalledInterval: lockMs, maxStalledCount });
  const notifyPrintReady = async (versionId: string) => {
    // as above: the print is stored and ready even if its mail cannot go out now
    await sendFigureReadyMail({ db: database.db, mailer, blobs: store, env }, versionId).catch((err: Error) => console.error(`print-ready mail for version ${versionId}: ${err.message}`));
  };
  // asked to stop: running computations go back to their queue at their last checkpoint
  const shutdown = new AbortController();
  const computeDeps = {
    db: database.db,
    store,
    s3,
    bucket: env.S3_BUCKET,
    threads,
    checkpointSeconds,
    maxSites,
    shutdown: shutdown.signal,
    log,
    notifyOutcome,
    enqueueRender: (runId: string) => enqueue({ name: JOB_NAMES.renderRun, data: { runId } }),
  };

  const farmWorkers: Worker[] = [];
  const lane = (queue: string, n: number) => {
    // a lane with no slots is not served by this process (WORKER_LARGE_CONCURRENCY=0 leaves large runs to bigger machines)
    if (n <= 0) return;
    const w = new Worker(queue, (job: Job, token?: string, lockLost?: AbortSignal) => computeRun(job, computeDeps, token, lockLost), {
      ...held(options.maxStalledCount ?? MAX_STALLED.compute),
      concurrency: n,
    });
    w.on('failed', (job, err) => {
      if (job && /stalled more than allowable limit/.test(err.message)) void giveUp(job);
    });
    w.on('error', (err) => {
      // this process was too late renewing a lock (starved of CPU): the job may be another worker's
      // by now, so stop computing it (BullMQ aborts the signal it handed the processor)
      const lost = /could not renew lock for job (\S+)/.exec(err.message);
      if (lost && w.cancelJob(lost[1]!, 'this worker lost its hold on the job')) log(`job ${lost[1]} lost its lock; stopped here (another worker resumes it)`);
    });
    farmWorkers.push(w);
  };
  /**
   * A job whose workers died more than maxStalledCount times is failed by BullMQ when a worker next
   * takes it, without our processor running: end its run here, or it would stay "computing" for ever.
   */
  async function giveUp(job: Job) {
    const runId = typeof job.data?.runId === 'string' ? job.data.runId : null;
    if (!runId) return;
    try {
      if (!(await runState(database.db, runId).failed('every farm worker that took this run stopped before it finished (out of memory, or the machine went down); it was given up after several attempts'))) return;
      log(`run ${runId}: given up, its workers died before it finished`);
      await s3.send(new DeleteObjectCommand({ Bucket: env.S3_BUCKET, Key: checkpointKey(runId) })).catch(() => {});
      await refreshRunUsage(database.db, store, runId, (line) => log(`run ${runId}: ${line}`));
      await notifyOutcome(runId);
    } catch (err) {
      console.error(`after run ${runId} was given up: ${(err as Error).message}`);
    }
  }
  lane(QUEUE_NAMES.compute, concurrency.compute);
  lane(QUEUE_NAMES.computeLarge, concurrency.large);
  if (concurrency.render > 0) {
    farmWorkers.push(new Worker(
      QUEUE_NAMES.render,
      (job: Job) => renderRun(job, { db: database.db, store, s3, bucket: env.S3_BUCKET, notifyOutcome }),
      { ...held(MAX_STALLED.other), concurrency: concurrency.render },
    ));
  }
  // print orders hold a page strip and the runs' arrays: one at a time per worker process
  farmWorkers.push(new Worker(
    QUEUE_NAMES.print,
    (job: Job) => printRun(job, { db: database.db, store, s3, bucket: env.S3_BUCKET, notifyReady: notifyPrintReady }),
    { ...held(MAX_STALLED.other), concurrency: 1 },
  ));
  const sweep = options.retentionSweep ? await startRetentionSweep({ connection, prefix, db: database.db, blobs: store, mailer, env }) : null;
  for (const w of farmWorkers) {
    w.on('failed', (job, err) => console.error(`job ${job?.id} failed (attempt ${job?.attemptsMade}): ${err.message}`));
    w.on('error', (err) => console.error(`${w.name}: ${err.message}`));
    w.on('stalled', (jobId) => log(`job ${jobId} lost its worker; back on ${w.name} (it resumes from its last checkpoint)`));
  }

  // Heartbeat for the admin console's farm page: who is alive and which jobs each holds; the key expires if the process dies.
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
    settings: { prefix, threads: threads ?? null, checkpointSeconds, lockSeconds: lockMs / 1000, queues: farmWorkers.map((w) => w.name) },
    /** stop taking jobs; running computations go back to their queue at their last checkpoint, renders and prints finish */
    async close() {
      clearInterval(heartbeat);
      shutdown.abort();
      await connection.del(beatKey).catch(() => {});
      await Promise.all([...farmWorkers.map((w) => w.close()), sweep?.close()]);
      await renderQueue.close();
      store.close();
      mailer.close();
      s3.destroy();
      await database.close();
      await connection.quit().catch(() => connection.disconnect());
    },
  };
}
