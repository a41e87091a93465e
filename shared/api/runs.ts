import { z } from 'zod';
import { newRunSpecSchema, runSpecSchema } from '../run-spec.js';
import { runStatsSchema } from '../run-stats.js';
import { idSchema, isoDateSchema, pageSchema } from './errors.js';

export const RUN_STATUSES = ['queued', 'computing', 'rendering', 'finished', 'failed', 'cancelled'] as const;
export const runStatusSchema = z.enum(RUN_STATUSES);
export type RunStatus = z.infer<typeof runStatusSchema>;
/** A run in one of these states can no longer change. */
export const FINAL_RUN_STATUSES: readonly RunStatus[] = ['finished', 'failed', 'cancelled'];

export const runTitleSchema = z.string().trim().min(1, 'title is required').max(200, 'title must be at most 200 characters');

export const runSchema = z.object({
  id: idSchema,
  labId: idSchema,
  title: z.string(),
  spec: runSpecSchema,
  status: runStatusSchema,
  /** free text from the worker, e.g. "toppling", "writing tiles" */
  stage: z.string().nullable(),
  progress: z.number().min(0).max(1),
  /** the statistics written by the worker (JSON form of shared/run-stats.ts), null until computed */
  stats: runStatsSchema.nullable(),
  error: z.string().nullable(),
  author: z.object({ id: idSchema, name: z.string() }),
  createdAt: isoDateSchema,
  startedAt: isoDateSchema.nullable(),
  finishedAt: isoDateSchema.nullable(),
  /** the series this run belongs to (POST /api/series), null for a single run */
  seriesId: idSchema.nullable().default(null),
  /** set when the retention rule removed the run's arrays and tiles (shared/api/admin.ts RETENTION_RULE); the statistics stay */
  artifactsExpiredAt: isoDateSchema.nullable().default(null),
});
export type Run = z.infer<typeof runSchema>;

export const RUN_SORT_KEYS = ['createdAt', 'finishedAt', 'title', 'status', 'chips'] as const;

/** GET /api/runs query string; labId defaults to the caller's active lab. */
export const listRunsQuerySchema = z.strictObject({
  labId: idSchema.optional(),
  status: runStatusSchema.optional(),
  /** a lattice preset name (shared/run-spec.ts LATTICE_PRESETS) or "periodic" */
  lattice: z.string().min(1).max(64).optional(),
  /** author user id */
  author: idSchema.optional(),
  sort: z.enum(RUN_SORT_KEYS).default('createdAt'),
  order: z.enum(['asc', 'desc']).default('desc'),
  page: pageSchema,
  pageSize: z.coerce.number<number | string>().int().min(1).max(100).default(25),
});
export type ListRunsQuery = z.infer<typeof listRunsQuerySchema>;
export type ListRunsQueryInput = z.input<typeof listRunsQuerySchema>;

export const listRunsResponseSchema = z.object({
  runs: z.array(runSchema),
  total: z.number().int().min(0),
  page: z.number().int().min(1),
  pageSize: z.number().int().min(1),
});
export type ListRunsResponse = z.infer<typeof listRunsResponseSchema>;

export const runParamsSchema = z.strictObject({ id: idSchema });

export const createRunRequestSchema = z.strictObject({
  labId: idSchema,
  title: runTitleSchema,
  spec: newRunSpecSchema,
});
export type CreateRunRequest = z.infer<typeof createRunRequestSchema>;
export type CreateRunRequestInput = z.input<typeof createRunRequestSchema>;

/** GET /api/runs/:id, POST /api/runs (201), POST /api/runs/:id/cancel */
export const runResponseSchema = z.object({ run: runSchema });
export type RunResponse = z.infer<typeof runResponseSchema>;

/** POST /api/runs/:id/rerun: a new run with the same specification; the title defaults to the old one. */
export const rerunRequestSchema = z.strictObject({ title: runTitleSchema.optional() });
export type RerunRequest = z.infer<typeof rerunRequestSchema>;

/**
 * GET /api/runs/:id/events (text/event-stream): an `run` event carrying `{ run }` whenever the run
 * changes (and once at the start), then an `end` event once it is finished, failed or cancelled.
 */
export const RUN_EVENT_NAMES = { change: 'run', end: 'end' } as const;
export const runEventSchema = runResponseSchema;
