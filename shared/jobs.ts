import { z } from 'zod';
import { estimateRun } from './estimate.js';
import { runSpecSchema, type RunSpec } from './run-spec.js';

/**
 * The typed BullMQ job contract shared by the API (producer) and the renderer (consumer).
 * Each job is a `{ name, data }` pair; `JOBS_TO_QUEUE` maps every job to its queue, so adding a
 * job without choosing a queue fails to compile.
 */

/** BullMQ key prefix shared by producer and workers (BullMQ's own default is "bull"); tests use their own. */
export const QUEUE_PREFIX = 'tw';

export const QUEUE_NAMES = {
  /** exact stabilisation of runs predicted to be short (the standard lane): CPU-heavy, few at a time */
  compute: 'tw-compute',
  /** exact stabilisation of runs predicted to hold a worker for long (the large lane, see computeLaneOf) */
  computeLarge: 'tw-compute-large',
  /** deep-zoom tiles and previews from a finished run's arrays (print files have their own queue) */
  render: 'tw-render',
  /** print files of figure versions (renderer/src/farm/print-run.ts): memory-bound, one at a time */
  print: 'tw-print',
  /** housekeeping on a schedule (the retention sweep): one job per interval for the whole farm */
  maintenance: 'tw-maintenance',
} as const;
export type QueueName = (typeof QUEUE_NAMES)[keyof typeof QUEUE_NAMES];

export const JOB_NAMES = {
  /** stabilise a run's spec and store arrays + statistics */
  computeRun: 'run.compute',
  /** render the deep-zoom pyramid and previews of a computed run */
  renderRun: 'run.render',
  /** print one figure version (PNG, TIFF, PDF) and store its files */
  printFigure: 'figure.print',
  /** delete the artifacts of unpublished runs past their retention end, mailing their labs first */
  retentionSweep: 'retention.sweep',
} as const;
export type JobName = (typeof JOB_NAMES)[keyof typeof JOB_NAMES];

/** The spec travels with the job so the worker needs no database read to start (it is also the cache key). */
export const computeRunDataSchema = z.strictObject({ runId: z.uuid(), spec: runSpecSchema });
export const renderRunDataSchema = z.strictObject({ runId: z.uuid() });
/** The version row holds the spec and formats; the worker reads it so a retried job prints the same order. */
export const printFigureDataSchema = z.strictObject({ versionId: z.uuid() });
/** The sweep reads everything it needs from PostgreSQL at the time it runs. */
export const retentionSweepDataSchema = z.strictObject({});

export type JobItem =
  | { name: typeof JOB_NAMES.computeRun; data: z.infer<typeof computeRunDataSchema> }
  | { name: typeof JOB_NAMES.renderRun; data: z.infer<typeof renderRunDataSchema> }
  | { name: typeof JOB_NAMES.printFigure; data: z.infer<typeof printFigureDataSchema> }
  | { name: typeof JOB_NAMES.retentionSweep; data: z.infer<typeof retentionSweepDataSchema> };

export type JobOf<N extends JobName> = Extract<JobItem, { name: N }>['data'];

/** Validators of each job's data, for the worker to parse `job.data` before acting on it. */
export const JOB_DATA_SCHEMAS: { [N in JobName]: z.ZodType<JobOf<N>> } = {
  [JOB_NAMES.computeRun]: computeRunDataSchema,
  [JOB_NAMES.renderRun]: renderRunDataSchema,
  [JOB_NAMES.printFigure]: printFigureDataSchema,
  [JOB_NAMES.retentionSweep]: retentionSweepDataSchema,
};

/** The default queue of each job; a compute job may go to the large lane instead (`queueOf`). */
export const JOBS_TO_QUEUE: Record<JobName, QueueName> = {
  [JOB_NAMES.computeRun]: QUEUE_NAMES.compute,
  [JOB_NAMES.renderRun]: QUEUE_NAMES.render,
  [JOB_NAMES.printFigure]: QUEUE_NAMES.print,
  [JOB_NAMES.retentionSweep]: QUEUE_NAMES.maintenance,
};

/** Every queue a job of each name can be found on: cancelling, suspending and retrying look in all of them. */
export const QUEUES_OF_JOB: Record<JobName, readonly QueueName[]> = {
  [JOB_NAMES.computeRun]: [QUEUE_NAMES.compute, QUEUE_NAMES.computeLarge],
  [JOB_NAMES.renderRun]: [QUEUE_NAMES.render],
  [JOB_NAMES.printFigure]: [QUEUE_NAMES.print],
  [JOB_NAMES.retentionSweep]: [QUEUE_NAMES.maintenance],
};

/**
 * Runs whose predicted farm time (shared/estimate.ts, which knows the seeded fast path's measured
 * curve) is above this go to the large lane. The threshold only has to separate "seconds to
 * minutes" from "many minutes to hours": square n = 10^7 (predicted ~37 s with drawing) stays in
 * the standard lane, 10^8 (~11 min) goes to the large one, as do the other lattices from about 10^7.
 */
export const LARGE_RUN_SECONDS = 300;

/**
 * The compute lane of a run. Two lanes rather than BullMQ priorities: a priority only reorders
 * *waiting* jobs, so once every slot of a worker holds a huge run a small one still waits for hours;
 * each worker takes jobs from both lanes with slots of its own, so a small run always finds a free
 * slot as soon as the small runs before it are done, however many huge runs are computing.
 */
export function computeLaneOf(spec: RunSpec): QueueName {
  let seconds: number;
  try {
    seconds = estimateRun(spec).seconds;
  } catch {
    // the API priced the spec before enqueueing it, so this does not happen; the standard lane is the safe default
    return QUEUE_NAMES.compute;
  }
  return seconds > LARGE_RUN_SECONDS ? QUEUE_NAMES.computeLarge : QUEUE_NAMES.compute;
}

/** The queue a job is added to. */
export function queueOf(item: JobItem): QueueName {
  return item.name === JOB_NAMES.computeRun ? computeLaneOf(item.data.spec) : JOBS_TO_QUEUE[item.name];
}

/** One job per run (or figure version) and kind: the job id makes a repeated enqueue a no-op (BullMQ refuses ":" in custom ids). */
export function jobIdFor(item: JobItem): string {
  const data = item.data as { runId?: string; versionId?: string };
  // the sweep has no subject: one at a time farm-wide
  return `${item.name}--${data.runId ?? data.versionId ?? 'all'}`;
}
