import { z } from 'zod';
import { idSchema, isoDateSchema } from './errors.js';
import { runStatusSchema } from './runs.js';

export const adminLabSchema = z.object({
  id: idSchema,
  name: z.string(),
  /** number of members */
  members: z.number().int().min(0),
  /** number of runs */
  runs: z.number().int().min(0),
  createdAt: isoDateSchema,
});
export type AdminLab = z.infer<typeof adminLabSchema>;
export const adminLabsResponseSchema = z.object({ labs: z.array(adminLabSchema) });
export type AdminLabsResponse = z.infer<typeof adminLabsResponseSchema>;

export const adminUserSchema = z.object({
  id: idSchema,
  email: z.string(),
  name: z.string(),
  isAdmin: z.boolean(),
  /** names of the labs the user belongs to */
  labs: z.array(z.string()),
  createdAt: isoDateSchema,
});
export type AdminUser = z.infer<typeof adminUserSchema>;
export const adminUsersResponseSchema = z.object({ users: z.array(adminUserSchema) });
export type AdminUsersResponse = z.infer<typeof adminUsersResponseSchema>;

/* ---- The admin console (usage and quotas, credits, suspension, farm health, storage, audit trail) ---- */

/** "2026-12": usage is counted per calendar month in UTC. */
const monthText = z.string().regex(/^\d{4}-(0[1-9]|1[0-2])$/, 'month must look like 2026-12');
const dayText = z.string().regex(/^\d{4}-\d{2}-\d{2}$/, 'dates look like 2026-12-02');

/**
 * When a lab or member counts as close to or over quota. A lab's quota is its monthly free
 * allowance; paid or granted credits let it go past that, so a lab is "over" only once it is past
 * the allowance with no paid credits left (its next run would be refused), and "close" once it has
 * used most of the allowance and holds less than one more month of it in paid credits.
 */
export const QUOTA_RULES = { closeShare: 0.8 } as const;
export const STANDINGS = ['ok', 'close', 'over'] as const;
export const standingSchema = z.enum(STANDINGS);
export type Standing = z.infer<typeof standingSchema>;

/** One month of a lab's or a member's use. */
export const usageMonthSchema = z.object({
  month: monthText,
  /** charged for settled runs plus held for open ones, by the month the run was submitted */
  credits: z.number().int().min(0),
  /** measured CPU-seconds of the runs' computations (runs.stats.seconds) */
  cpuSeconds: z.number().min(0),
  runs: z.number().int().min(0),
  /** bytes stored under runs/<id>/ for the runs submitted that month */
  storageBytes: z.number().int().min(0),
  /** credits given (grants less revocations) in the month; labs only */
  granted: z.number().int(),
  /** credits bought in the month; labs only */
  purchased: z.number().int().min(0),
});
export type UsageMonth = z.infer<typeof usageMonthSchema>;

export const memberUsageSchema = z.object({
  memberId: idSchema,
  name: z.string(),
  email: z.string(),
  role: z.enum(['author', 'manager']),
  monthlyQuota: z.number().int().nullable(),
  usedThisMonth: z.number().int().min(0),
  standing: standingSchema,
  months: z.array(usageMonthSchema),
});
export type MemberUsage = z.infer<typeof memberUsageSchema>;

/** The lab's paid balance after each ledger entry that moved it: the balance chart's steps. */
export const balancePointSchema = z.object({ at: isoDateSchema, available: z.number().int(), kind: z.string() });

export const labUsageSchema = z.object({
  labId: idSchema,
  name: z.string(),
  suspendedAt: isoDateSchema.nullable(),
  suspendedReason: z.string().nullable(),
  /** this month's free allowance in credits */
  freeAllowance: z.number().int().min(0),
  /** false when a site admin set the allowance for this lab */
  allowanceIsDefault: z.boolean(),
  available: z.number().int().min(0),
  reserved: z.number().int().min(0),
  freeLeft: z.number().int().min(0),
  usedThisMonth: z.number().int().min(0),
  standing: standingSchema,
  /** one sentence: why the standing is what it is */
  standingNote: z.string(),
  storageBytes: z.number().int().min(0),
  months: z.array(usageMonthSchema),
  members: z.array(memberUsageSchema),
  balanceHistory: z.array(balancePointSchema),
});
export type LabUsage = z.infer<typeof labUsageSchema>;

/** GET /api/admin/usage?months=6 (and usage.csv): every lab with its members, oldest month first */
export const adminUsageQuerySchema = z.strictObject({
  months: z.coerce.number<number | string>().int().min(1, 'months must be 1 to 24').max(24, 'months must be 1 to 24').default(6),
});
export type AdminUsageQueryInput = z.input<typeof adminUsageQuerySchema>;
export const adminUsageResponseSchema = z.object({ month: monthText, months: z.array(monthText), labs: z.array(labUsageSchema) });
export type AdminUsageResponse = z.infer<typeof adminUsageResponseSchema>;

const reasonSchema = z.string().trim().min(3, 'give a reason of at least 3 characters').max(500);

/** PUT /api/admin/labs/:labId/allowance */
export const allowanceRequestSchema = z.strictObject({
  freeAllowance: z.number().int('the allowance is a whole number of credits').min(0, 'the allowance cannot be negative').max(1_000_000),
  reason: reasonSchema,
});
export type AllowanceRequest = z.infer<typeof allowanceRequestSchema>;

/** POST /api/admin/labs/:labId/suspension (suspend) and /reinstatement */
export const suspensionRequestSchema = z.strictObject({ reason: reasonSchema });
export type SuspensionRequest = z.infer<typeof suspensionRequestSchema>;
export const adminLabStateResponseSchema = z.object({
  labId: idSchema,
  suspendedAt: isoDateSchema.nullable(),
  suspendedReason: z.string().nullable(),
  freeAllowance: z.number().int().min(0),
  /** queued runs whose jobs were taken off the queue (suspension) or put back (reinstatement) */
  jobsAffected: z.number().int().min(0),
});
export type AdminLabStateResponse = z.infer<typeof adminLabStateResponseSchema>;

/* ---- farm health ---- */

/** Redis key a farm worker refreshes while it lives (expires HEARTBEAT_TTL_SECONDS after it stops). */
export const heartbeatKey = (prefix: string, host: string, pid: number) => `${prefix}:workers:${host}:${pid}`;
export const HEARTBEAT_EVERY_MS = 5000;
export const HEARTBEAT_TTL_SECONDS = 20;
export const workerHeartbeatSchema = z.object({
  host: z.string(),
  pid: z.number().int(),
  startedAt: isoDateSchema,
  at: isoDateSchema,
  queues: z.array(z.string()),
  active: z.array(z.object({ queue: z.string(), jobId: z.string(), runId: z.string().nullable(), since: isoDateSchema })),
});
export type WorkerHeartbeat = z.infer<typeof workerHeartbeatSchema>;

export const queueDepthSchema = z.object({
  queue: z.string(),
  waiting: z.number().int().min(0),
  /** waiting jobs by priority (0 = none given, higher numbers run later) */
  byPriority: z.array(z.object({ priority: z.number().int().min(0), jobs: z.number().int().min(0) })),
  active: z.number().int().min(0),
  delayed: z.number().int().min(0),
  failed: z.number().int().min(0),
  completed: z.number().int().min(0),
  paused: z.boolean(),
});
export const runningJobSchema = z.object({
  runId: idSchema,
  title: z.string(),
  labId: idSchema,
  labName: z.string(),
  status: runStatusSchema,
  stage: z.string().nullable(),
  progress: z.number().min(0).max(1),
  startedAt: isoDateSchema.nullable(),
  /** "host:pid" of the worker whose heartbeat names this run, when known */
  worker: z.string().nullable(),
});
export const failedJobSchema = z.object({
  queue: z.string(),
  jobId: z.string(),
  name: z.string(),
  runId: z.string().nullable(),
  runTitle: z.string().nullable(),
  labName: z.string().nullable(),
  error: z.string(),
  attemptsMade: z.number().int().min(0),
  failedAt: isoDateSchema.nullable(),
});
export type FailedJob = z.infer<typeof failedJobSchema>;
/** GET /api/admin/farm */
export const farmHealthResponseSchema = z.object({
  at: isoDateSchema,
  queues: z.array(queueDepthSchema),
  workers: z.array(workerHeartbeatSchema),
  /** BullMQ connections registered as workers (counted even if a worker sends no heartbeat) */
  bullWorkers: z.number().int().min(0),
  running: z.array(runningJobSchema),
  failed: z.array(failedJobSchema),
});
export type FarmHealthResponse = z.infer<typeof farmHealthResponseSchema>;
export const farmJobParamsSchema = z.strictObject({ queue: z.string().min(1).max(100), jobId: z.string().min(1).max(200) });
/** POST /api/admin/farm/jobs/:queue/:jobId/retry */
export const retryJobResponseSchema = z.object({ queue: z.string(), jobId: z.string(), runId: z.string().nullable() });

/* ---- storage and retention ---- */

/**
 * What happens to the artifacts of runs that no figure publishes: tiles and arrays are kept for
 * `keepDays` after the run ends; `noticeDays` before the end the lab's managers are mailed; at the
 * end (and never sooner than `noticeDays` after the mail) the retention sweep deletes the tiles,
 * arrays and draft prints made from the run, while the run row, its statistics and specification
 * stay (the run can be computed again). Runs of a figure that was ever published (withdrawn ones
 * included) are kept for good. api/src/services/admin-retention.ts applies it.
 */
export const RETENTION_RULE = { keepDays: 180, noticeDays: 14 } as const;

export const storageRunSchema = z.object({
  runId: idSchema,
  title: z.string(),
  bytes: z.number().int().min(0),
  objects: z.number().int().min(0),
  /** used by a figure that was ever published: kept for good */
  published: z.boolean(),
  finishedAt: isoDateSchema.nullable(),
  /** when the artifacts go (the end of retention, later if the notice came late); null while unfinished, published or expired */
  expiresAt: isoDateSchema.nullable(),
  /** when the lab was mailed about it, if it was */
  noticeMailedAt: isoDateSchema.nullable(),
  /** when the sweep removed its artifacts */
  artifactsExpiredAt: isoDateSchema.nullable().default(null),
});
export const labStorageSchema = z.object({
  labId: idSchema,
  name: z.string(),
  bytes: z.number().int().min(0),
  publishedBytes: z.number().int().min(0),
  unpublishedBytes: z.number().int().min(0),
  /** unpublished runs whose end is within the notice period (or past) */
  dueForNotice: z.number().int().min(0),
  runs: z.array(storageRunSchema),
});
/** GET /api/admin/storage */
export const adminStorageResponseSchema = z.object({
  rule: z.object({ keepDays: z.number().int(), noticeDays: z.number().int() }),
  labs: z.array(labStorageSchema),
});
export type AdminStorageResponse = z.infer<typeof adminStorageResponseSchema>;
/** POST /api/admin/labs/:labId/retention-notice: mail the lab's managers about runs due to expire */
export const retentionNoticeResponseSchema = z.object({ mailedTo: z.array(z.string()), runs: z.number().int().min(0) });

/* ---- audit trail ---- */

export const auditQuerySchema = z.strictObject({
  labId: idSchema.optional(),
  /** actor (who did it) */
  actorId: idSchema.optional(),
  /** a person, whether they acted or the event was about them (a role change, a removal) */
  personId: idSchema.optional(),
  /** an action ("credits.grant") or a prefix ending in "." ("credits.") */
  kind: z.string().trim().min(1).max(100).regex(/^[a-z0-9.-]+$/, 'kind is like credits.grant or credits.').optional(),
  from: dayText.optional(),
  to: dayText.optional(),
  limit: z.coerce.number<number | string>().int().min(1).max(1000).default(200),
});
export type AuditQueryInput = z.input<typeof auditQuerySchema>;
export const auditEventSchema = z.object({
  id: z.number().int(),
  at: isoDateSchema,
  actorId: z.string().nullable(),
  actorName: z.string().nullable(),
  labId: z.string().nullable(),
  labName: z.string().nullable(),
  action: z.string(),
  subjectType: z.string().nullable(),
  subjectId: z.string().nullable(),
  /** the subject's name when the event is about a person, or a figure's title */
  subjectName: z.string().nullable().default(null),
  /** where the trail's reader (a site admin) opens the subject in the app: a figure's lab page; null otherwise */
  subjectHref: z.string().nullable().default(null),
  reason: z.string().nullable(),
  detail: z.record(z.string(), z.unknown()).nullable(),
});
export type AuditEvent = z.infer<typeof auditEventSchema>;
/** GET /api/admin/audit (and audit.csv): newest first */
export const auditResponseSchema = z.object({ events: z.array(auditEventSchema), kinds: z.array(z.string()) });
export type AuditResponse = z.infer<typeof auditResponseSchema>;
