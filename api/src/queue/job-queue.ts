import { Queue } from 'bullmq';
import { Redis } from 'ioredis';
import { QUEUE_NAMES, QUEUE_PREFIX, QUEUES_OF_JOB, jobIdFor, queueOf, type JobItem, type QueueName } from '../../../shared/jobs.js';
import { closeConnection, withinBudget } from './redis-ready.js';

/**
 * The producer side of shared/jobs.ts. With farm-health.ts the only modules in api/ that import
 * bullmq. Every call answers within QUEUE_CALL_MS or throws QueueUnavailableError (redis-ready.ts),
 * so a Redis outage never holds a request; routes record jobs in the outbox (outbox.ts) instead of
 * calling enqueue themselves.
 */
export interface JobQueue {
  /** the BullMQ key prefix this producer adds under: the outbox keeps each farm's jobs apart by it */
  readonly prefix: string;
  /** idempotent: the job id is the run's (or version's), so adding the same job again is a no-op */
  enqueue(item: JobItem): Promise<void>;
  /** drop a job that has not started (cancelled runs, suspended labs), from whichever lane holds it; a running job sees the run's status instead */
  remove(item: JobItem): Promise<void>;
  ping(): Promise<boolean>;
  close(): Promise<void>;
}

export type JobQueueOptions = {
  /** BullMQ key prefix; tests use a unique one per file so they never see each other's jobs */
  prefix?: string;
};

export function createJobQueue(redisUrl: string, options: JobQueueOptions = {}): JobQueue {
  // BullMQ needs maxRetriesPerRequest: null on connections it blocks on (stack notes §4).
  const connection = new Redis(redisUrl, { maxRetriesPerRequest: null, lazyConnect: false });
  // an outage reaches callers as QueueUnavailableError (and /api/health/ready); without a listener ioredis prints every reconnect failure
  connection.on('error', () => {});
  const queues = new Map<QueueName, Queue>();
  const queueFor = (name: QueueName) => {
    let q = queues.get(name);
    if (!q) {
      q = new Queue(name, { connection, prefix: options.prefix ?? QUEUE_PREFIX });
      queues.set(name, q);
    }
    return q;
  };
  return {
    prefix: options.prefix ?? QUEUE_PREFIX,
    async enqueue(item) {
      // compute jobs go to the standard or the large lane by their estimate (shared/jobs.ts, computeLaneOf)
      await withinBudget(connection, () => queueFor(queueOf(item)).add(item.name, item.data, {
        jobId: jobIdFor(item),
        // Exact runs are deterministic: a failure with the same spec fails again, so retry only for crashes.
        attempts: 2,
        backoff: { type: 'exponential', delay: 5000 },
        removeOnComplete: { age: 7 * 24 * 3600 },
        removeOnFail: { age: 30 * 24 * 3600 },
      }));
    },
    async remove(item) {
      // every lane the job could be on, so a changed lane threshold never strands a job
      await withinBudget(connection, async () => {
        for (const name of QUEUES_OF_JOB[item.name]) {
          const job = await queueFor(name).getJob(jobIdFor(item));
          if (job && (await job.isWaiting() || await job.isDelayed())) await job.remove();
        }
      });
    },
    async ping() {
      // with maxRetriesPerRequest: null a command waits for Redis to come back: a readiness probe must not
      if (connection.status !== 'ready') return false;
      let timer: NodeJS.Timeout | undefined;
      const late = new Promise<'late'>((resolve) => (timer = setTimeout(() => resolve('late'), 1000)));
      try {
        return (await Promise.race([connection.ping(), late])) === 'PONG';
      } catch {
        return false;
      } finally {
        clearTimeout(timer);
      }
    },
    async close() {
      await Promise.all([...queues.values()].map((q) => q.close()));
      await closeConnection(connection);
    },
  };
}

export { QUEUE_NAMES };
