import { Queue } from 'bullmq';
import { Redis } from 'ioredis';
import { QUEUE_NAMES, QUEUE_PREFIX, type QueueName } from '../../../shared/jobs.js';
import { closeConnection, withinBudget } from './redis-ready.js';
import { workerHeartbeatSchema, type WorkerHeartbeat } from '../../../shared/api/admin.js';

/**
 * What the admin console reads from the farm: queue depths, worker heartbeats, active and failed
 * jobs, through BullMQ's Queue API (read-only, plus retrying a failed job). One connection per
 * reader, opened lazily, so a process that never shows the farm page never connects.
 */
export interface FarmSnapshot {
  queues: { queue: QueueName; waiting: number; byPriority: { priority: number; jobs: number }[]; active: number; delayed: number; failed: number; completed: number; paused: boolean }[];
  workers: WorkerHeartbeat[];
  bullWorkers: number;
  failed: { queue: QueueName; jobId: string; name: string; runId: string | null; error: string; attemptsMade: number; failedAt: Date | null }[];
}

export interface FarmHealth {
  snapshot(): Promise<FarmSnapshot>;
  /** move a failed job back to waiting; null when the queue has no such failed job */
  retry(queue: string, jobId: string): Promise<{ name: string; runId: string | null } | null>;
  close(): Promise<void>;
}

/** the snapshot reads every queue (a few dozen commands): more than one call's budget, still prompt */
const SNAPSHOT_MS = 5000;

const runIdOf = (data: unknown) => (data && typeof data === 'object' && typeof (data as { runId?: unknown }).runId === 'string' ? (data as { runId: string }).runId : null);

export function createFarmHealth(redisUrl: string, options: { prefix?: string } = {}): FarmHealth {
  const prefix = options.prefix ?? QUEUE_PREFIX;
  let connection: Redis | null = null;
  const queues = new Map<QueueName, Queue>();
  // errors reach the caller through withinBudget; without a listener ioredis prints each reconnect failure
  const conn = () => (connection ??= new Redis(redisUrl, { maxRetriesPerRequest: null }).on('error', () => {}));
  const queueFor = (name: QueueName) => {
    let q = queues.get(name);
    if (!q) queues.set(name, (q = new Queue(name, { connection: conn(), prefix })));
    return q;
  };
  const names = Object.values(QUEUE_NAMES);

  async function heartbeats(): Promise<WorkerHeartbeat[]> {
    const redis = conn();
    const keys: string[] = [];
    let cursor = '0';
    do {
      const [next, batch] = await redis.scan(cursor, 'MATCH', `${prefix}:workers:*`, 'COUNT', 200);
      keys.push(...batch);
      cursor = next;
    } while (cursor !== '0');
    if (keys.length === 0) return [];
    const values = await redis.mget(...keys);
    return values
      .map((v) => (v ? workerHeartbeatSchema.safeParse(JSON.parse(v)) : null))
      .flatMap((p) => (p?.success ? [p.data] : []))
      .sort((a, b) => a.host.localeCompare(b.host) || a.pid - b.pid);
  }

  return {
    // within a budget each (redis-ready.ts): the admin page and a retry answer 503 while Redis is away
    snapshot: () => withinBudget(conn(), async () => {
      const out: FarmSnapshot = { queues: [], workers: await heartbeats(), bullWorkers: 0, failed: [] };
      for (const name of names) {
        const q = queueFor(name);
        const c = await q.getJobCounts('waiting', 'prioritized', 'active', 'delayed', 'failed', 'completed');
        const byPriority = new Map<number, number>();
        if ((c.waiting ?? 0) > 0) byPriority.set(0, c.waiting ?? 0);
        for (const job of await q.getPrioritized(0, 999)) byPriority.set(job.opts.priority ?? 0, (byPriority.get(job.opts.priority ?? 0) ?? 0) + 1);
        out.queues.push({
          queue: name,
          waiting: (c.waiting ?? 0) + (c.prioritized ?? 0),
          byPriority: [...byPriority.entries()].sort((a, b) => a[0] - b[0]).map(([priority, jobs]) => ({ priority, jobs })),
          active: c.active ?? 0,
          delayed: c.delayed ?? 0,
          failed: c.failed ?? 0,
          completed: c.completed ?? 0,
          paused: await q.isPaused(),
        });
        out.bullWorkers += await q.getWorkersCount();
        for (const job of await q.getFailed(0, 49)) {
          out.failed.push({
            queue: name,
            jobId: job.id ?? '',
            name: job.name,
            runId: runIdOf(job.data),
            error: job.failedReason || 'failed without a message',
            attemptsMade: job.attemptsMade,
            failedAt: job.finishedOn ? new Date(job.finishedOn) : null,
          });
        }
      }
      out.failed.sort((a, b) => (b.failedAt?.getTime() ?? 0) - (a.failedAt?.getTime() ?? 0));
      return out;
    }, SNAPSHOT_MS),
    async retry(queue, jobId) {
      const name = names.find((n) => n === queue);
      if (!name) return null;
      return withinBudget(conn(), async () => {
        const job = await queueFor(name).getJob(jobId);
        if (!job || !(await job.isFailed())) return null;
        await job.retry('failed');
        return { name: job.name, runId: runIdOf(job.data) };
      });
    },
    async close() {
      await Promise.all([...queues.values()].map((q) => q.close()));
      queues.clear();
      if (connection) await closeConnection(connection);
      connection = null;
    },
  };
}
