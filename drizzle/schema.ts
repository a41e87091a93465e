import { sql } from 'drizzle-orm';
import {
  bigint,
  boolean,
  index,
  integer,
  jsonb,
  pgEnum,
  pgTable,
  primaryKey,
  real,
  text,
  timestamp,
  uniqueIndex,
  uuid,
} from 'drizzle-orm/pg-core';
import type { RunSpec } from '../shared/run-spec.js';
import type { RunStatsJson } from '../shared/run-stats.js';
import type { FigureSpec } from '../shared/print-spec.js';

/**
 * The database schema. Migrations are generated from this file with `npx drizzle-kit generate`
 * and committed next to it; never edit an applied migration, add a new one.
 */

const id = () => uuid('id').primaryKey().defaultRandom();
const createdAt = () => timestamp('created_at', { withTimezone: true }).notNull().defaultNow();
const at = (name: string) => timestamp(name, { withTimezone: true });

export const labRole = pgEnum('lab_role', ['author', 'manager']);
export const runStatus = pgEnum('run_status', ['queued', 'computing', 'rendering', 'finished', 'failed', 'cancelled']);
export const emailTokenPurpose = pgEnum('email_token_purpose', ['verify_email', 'reset_password']);

export const labs = pgTable('labs', {
  id: id(),
  name: text('name').notNull(),
  createdAt: createdAt(),
  /** set by a site admin: members cannot submit and queued jobs stop; nothing is deleted (api/src/services/admin-suspension.ts) */
  suspendedAt: at('suspended_at'),
  suspendedReason: text('suspended_reason'),
  /** credits of free allowance per month set by a site admin; null = FREE_MONTHLY_ALLOWANCE */
  freeAllowance: integer('free_allowance'),
}, (t) => [uniqueIndex('labs_name_lower_idx').on(sql`lower(${t.name})`)]);

export const users = pgTable('users', {
  id: id(),
  /** stored lower-cased; unique */
  email: text('email').notNull().unique(),
  name: text('name').notNull(),
  /** argon2id PHC string (api/src/auth/passwords.ts) */
  passwordHash: text('password_hash').notNull(),
  emailVerifiedAt: at('email_verified_at'),
  isAdmin: boolean('is_admin').notNull().default(false),
  activeLabId: uuid('active_lab_id').references(() => labs.id, { onDelete: 'set null' }),
  createdAt: createdAt(),
});

/** One row per signed-in browser; the session JWT's jti is this id, so revoking the row ends the session. */
export const sessions = pgTable('sessions', {
  id: id(),
  userId: uuid('user_id').notNull().references(() => users.id, { onDelete: 'cascade' }),
  createdAt: createdAt(),
  expiresAt: at('expires_at').notNull(),
  revokedAt: at('revoked_at'),
}, (t) => [index('sessions_user_idx').on(t.userId)]);

/** Mailed single-use tokens; only the sha256 of the token is kept. */
export const emailTokens = pgTable('email_tokens', {
  id: id(),
  userId: uuid('user_id').notNull().references(() => users.id, { onDelete: 'cascade' }),
  purpose: emailTokenPurpose('purpose').notNull(),
  tokenHash: text('token_hash').notNull().unique(),
  createdAt: createdAt(),
  expiresAt: at('expires_at').notNull(),
  usedAt: at('used_at'),
});

/** Personal API tokens (`Authorization: Bearer tw_...`); only the sha256 of the secret is kept. */
export const apiTokens = pgTable('api_tokens', {
  id: id(),
  userId: uuid('user_id').notNull().references(() => users.id, { onDelete: 'cascade' }),
  label: text('label').notNull(),
  tokenHash: text('token_hash').notNull().unique(),
  prefix: text('prefix').notNull(),
  createdAt: createdAt(),
  lastUsedAt: at('last_used_at'),
  revokedAt: at('revoked_at'),
}, (t) => [index('api_tokens_user_idx').on(t.userId)]);

export const memberships = pgTable('memberships', {
  labId: uuid('lab_id').notNull().references(() => labs.id, { onDelete: 'cascade' }),
  userId: uuid('user_id').notNull().references(() => users.id, { onDelete: 'cascade' }),
  role: labRole('role').notNull(),
  /** credits per calendar month; null = no personal limit */
  monthlyQuota: integer('monthly_quota'),
  joinedAt: at('joined_at').notNull().defaultNow(),
}, (t) => [primaryKey({ columns: [t.labId, t.userId] }), index('memberships_user_idx').on(t.userId)]);

export const invitations = pgTable('invitations', {
  id: id(),
  labId: uuid('lab_id').notNull().references(() => labs.id, { onDelete: 'cascade' }),
  email: text('email').notNull(),
  role: labRole('role').notNull(),
  tokenHash: text('token_hash').notNull().unique(),
  invitedById: uuid('invited_by_id').notNull().references(() => users.id, { onDelete: 'cascade' }),
  createdAt: createdAt(),
  expiresAt: at('expires_at').notNull(),
  acceptedAt: at('accepted_at'),
  acceptedById: uuid('accepted_by_id').references(() => users.id, { onDelete: 'set null' }),
  revokedAt: at('revoked_at'),
}, (t) => [index('invitations_lab_idx').on(t.labId)]);

/** A request for the same specification at several grain counts; its runs point here. */
export const series = pgTable('series', {
  id: id(),
  labId: uuid('lab_id').notNull().references(() => labs.id, { onDelete: 'cascade' }),
  authorId: uuid('author_id').notNull().references(() => users.id),
  title: text('title').notNull(),
  createdAt: createdAt(),
}, (t) => [index('series_lab_idx').on(t.labId)]);

export const runs = pgTable('runs', {
  id: id(),
  labId: uuid('lab_id').notNull().references(() => labs.id, { onDelete: 'cascade' }),
  authorId: uuid('author_id').notNull().references(() => users.id),
  title: text('title').notNull(),
  /** the validated RunSpec (shared/run-spec.ts), defaults filled in */
  spec: jsonb('spec').$type<RunSpec>().notNull(),
  status: runStatus('status').notNull().default('queued'),
  stage: text('stage'),
  progress: real('progress').notNull().default(0),
  /** the worker's statistics (shared/run-stats.ts JSON), null until computed */
  stats: jsonb('stats').$type<RunStatsJson>(),
  error: text('error'),
  createdAt: createdAt(),
  startedAt: at('started_at'),
  finishedAt: at('finished_at'),
  updatedAt: at('updated_at').notNull().defaultNow(),
  seriesId: uuid('series_id').references(() => series.id, { onDelete: 'set null' }),
  /** set when the finished/failed mail went out, so a retried worker never mails twice */
  outcomeMailedAt: at('outcome_mailed_at'),
  /**
   * set when the retention sweep claims an unpublished run past its end (api/src/services/admin-retention.ts):
   * the run, its statistics and spec stay; its arrays, tiles and draft prints are being or have been deleted
   */
  artifactsExpiredAt: at('artifacts_expired_at'),
  /** set once nothing of the expired run is left in the object store (a sweep interrupted midway finishes it later) */
  artifactsClearedAt: at('artifacts_cleared_at'),
  /**
   * What the object store holds under runs/<id>/ (arrays, checkpoint, tile pyramids), from a listing
   * taken by whoever last wrote or deleted there (api/src/storage/run-usage.ts), so the admin's
   * storage report sums rows instead of listing every run. New runs start at 0; null means unknown
   * (rows from before migration 0013): the report lists those once and fills them in.
   */
  storedBytes: bigint('stored_bytes', { mode: 'number' }),
  storedObjects: integer('stored_objects'),
}, (t) => [index('runs_lab_created_idx').on(t.labId, t.createdAt), index('runs_status_idx').on(t.status), index('runs_series_idx').on(t.seriesId)]);

/**
 * Uploaded background arrays, stored by content at uploads/<sha256>.npy (int32, C order). Content
 * addressing makes an upload shared by everyone who sends the same heights; the row keeps what the
 * run form and POST /api/runs need without reading the array back.
 */
export const backgroundUploads = pgTable('background_uploads', {
  sha256: text('sha256').primaryKey(),
  shape: jsonb('shape').$type<number[]>().notNull(),
  minHeight: integer('min_height').notNull(),
  maxHeight: integer('max_height').notNull(),
  meanHeight: real('mean_height').notNull(),
  /** what was sent: an .npy dtype such as "<u2", or "png" */
  source: text('source').notNull(),
  /** PNG uploads: the grey levels that became heights 0, 1, 2, ... */
  levels: jsonb('levels').$type<number[]>(),
  /** counts of heights 0..255 and of all heights above */
  heightCounts: jsonb('height_counts').$type<number[]>().notNull(),
  countAbove: bigint('count_above', { mode: 'number' }).notNull().default(0),
  uploadedById: uuid('uploaded_by_id').references(() => users.id, { onDelete: 'set null' }),
  createdAt: createdAt(),
});

export const figures = pgTable('figures', {
  id: id(),
  slug: text('slug').notNull().unique(),
  title: text('title').notNull(),
  caption: text('caption').notNull().default(''),
  runId: uuid('run_id').notNull().references(() => runs.id, { onDelete: 'restrict' }),
  createdById: uuid('created_by_id').notNull().references(() => users.id),
  createdAt: createdAt(),
  publishedAt: at('published_at'),
  /** a withdrawn figure keeps its slug (permanent links never point at something else) but is no longer shown */
  withdrawnAt: at('withdrawn_at'),
  /** the composition the next print order uses (shared/print-spec.ts FigureSpec); null: one panel of runId */
  spec: jsonb('spec').$type<FigureSpec>(),
  updatedAt: at('updated_at').notNull().defaultNow(),
}, (t) => [index('figures_published_idx').on(t.publishedAt)]);

export const figureVersionStatus = pgEnum('figure_version_status', ['queued', 'printing', 'ready', 'failed']);

/** One printed file of a figure version, as stored (api/src/services/figures.ts turns it into a download). */
export type FigureFileRecord = { format: 'png' | 'tiff' | 'pdf'; key: string; name: string; bytes: number; sha256: string; widthPx: number; heightPx: number };

/**
 * Print orders of a figure: each order is a new numbered version with the title, caption and spec
 * it printed, so a re-rendered figure keeps its history. Publishing marks one ready version; the
 * permanent link shows the newest published one, frozen, while the figure row holds the lab's draft.
 */
export const figureVersions = pgTable('figure_versions', {
  id: id(),
  figureId: uuid('figure_id').notNull().references(() => figures.id, { onDelete: 'cascade' }),
  number: integer('number').notNull(),
  /** the validated FigureSpec (shared/print-spec.ts), defaults filled in */
  spec: jsonb('spec').$type<FigureSpec>().notNull(),
  /** the figure's title when ordered; null only for rows written without one (the figure's title stands in) */
  title: text('title'),
  /** the figure's caption when ordered (printed under the panels); null: the spec's printed caption */
  caption: text('caption'),
  /** when this version became what readers see; null: never published */
  publishedAt: at('published_at'),
  formats: jsonb('formats').$type<('png' | 'tiff' | 'pdf')[]>().notNull(),
  status: figureVersionStatus('status').notNull().default('queued'),
  stage: text('stage'),
  files: jsonb('files').$type<FigureFileRecord[]>().notNull().default([]),
  error: text('error'),
  orderedById: uuid('ordered_by_id').references(() => users.id, { onDelete: 'set null' }),
  createdAt: createdAt(),
  startedAt: at('started_at'),
  finishedAt: at('finished_at'),
  /** set when the "print ready" mail went out, so a retried job never mails twice */
  mailedAt: at('mailed_at'),
}, (t) => [uniqueIndex('figure_versions_number_idx').on(t.figureId, t.number)]);

/**
 * Compute credits as a double-entry journal (api/src/billing/README.md). An entry is one event
 * (a purchase, a reservation, a settlement, ...); its lines move credits between accounts such as
 * `lab:<id>:available`, `lab:<id>:reserved`, `stripe:clearing`, `grants`, `spent`, and always sum to
 * zero. Balances are SUMs over lines, never stored. Triggers (migration 0005) refuse UPDATE/DELETE,
 * an entry whose lines do not sum to zero, and a lab account that would go below zero.
 */
export const ledgerEntryKind = pgEnum('ledger_entry_kind', ['purchase', 'allowance', 'reservation', 'settlement', 'release', 'grant', 'revocation']);

export const ledgerEntries = pgTable('ledger_entries', {
  id: id(),
  labId: uuid('lab_id').notNull().references(() => labs.id),
  kind: ledgerEntryKind('kind').notNull(),
  /** what makes the entry happen at most once: purchase:<checkout session>, reservation:<run>, close:<run>, allowance:<lab>:<month>, ... */
  idempotencyKey: text('idempotency_key').notNull().unique(),
  /** the run a reservation, settlement or release belongs to (no foreign key: history outlives rows) */
  runId: uuid('run_id'),
  /** the member a run's credits count against (their monthly quota) */
  memberId: uuid('member_id'),
  purchaseId: uuid('purchase_id'),
  actorId: uuid('actor_id'),
  reason: text('reason'),
  /** e.g. the estimate behind a reservation, the measured usage behind a settlement */
  detail: jsonb('detail'),
  createdAt: createdAt(),
}, (t) => [index('ledger_entries_lab_idx').on(t.labId, t.createdAt), index('ledger_entries_run_idx').on(t.runId)]);

export const ledgerLines = pgTable('ledger_lines', {
  id: bigint('id', { mode: 'number' }).primaryKey().generatedAlwaysAsIdentity(),
  entryId: uuid('entry_id').notNull().references(() => ledgerEntries.id),
  account: text('account').notNull(),
  /** whole credits; positive adds to the account, negative takes from it */
  amount: bigint('amount', { mode: 'number' }).notNull(),
}, (t) => [index('ledger_lines_account_idx').on(t.account), index('ledger_lines_entry_idx').on(t.entryId)]);

/** open: checkout not paid yet; expired: its checkout lapsed unpaid; abandoned: a manager gave it up */
export const purchaseStatus = pgEnum('purchase_status', ['open', 'paid', 'expired', 'abandoned']);

/** A credit pack a manager started to buy: one Checkout Session. The credits themselves are ledger lines. */
export const creditPurchases = pgTable('credit_purchases', {
  id: id(),
  labId: uuid('lab_id').notNull().references(() => labs.id),
  buyerId: uuid('buyer_id').references(() => users.id, { onDelete: 'set null' }),
  pack: text('pack').notNull(),
  credits: integer('credits').notNull(),
  /** in the currency's minor unit (cents) */
  amount: integer('amount').notNull(),
  currency: text('currency').notNull(),
  checkoutSessionId: text('checkout_session_id').notNull().unique(),
  status: purchaseStatus('status').notNull().default('open'),
  /** when its checkout stops taking payment (the session's expires_at); null for offline purchases */
  expiresAt: at('expires_at'),
  /** the card's refusal of the last attempt, shown until a later attempt pays */
  lastError: text('last_error'),
  /** printed on the receipt: TW-000001, ... */
  receiptNumber: integer('receipt_number').generatedAlwaysAsIdentity(),
  createdAt: createdAt(),
  paidAt: at('paid_at'),
  receiptMailedAt: at('receipt_mailed_at'),
}, (t) => [index('credit_purchases_lab_idx').on(t.labId, t.createdAt)]);

/** Payment provider events already handled, by event id: a replay or duplicate delivery finds its row and does nothing. */
export const paymentEvents = pgTable('payment_events', {
  id: text('id').primaryKey(),
  type: text('type').notNull(),
  /** what handling it did, e.g. "credited 500", "ignored: unknown checkout session" */
  outcome: text('outcome').notNull(),
  receivedAt: at('received_at').notNull().defaultNow(),
});

/**
 * Append-only trail of who did what, when, why and in which lab. No foreign keys, so deleting a user
 * or lab never rewrites history; triggers refuse UPDATE and DELETE (migration 0001) and TRUNCATE (0009).
 */
export const auditEvents = pgTable('audit_events', {
  id: bigint('id', { mode: 'number' }).primaryKey().generatedAlwaysAsIdentity(),
  at: at('at').notNull().defaultNow(),
  actorId: uuid('actor_id'),
  labId: uuid('lab_id'),
  action: text('action').notNull(),
  subjectType: text('subject_type'),
  subjectId: text('subject_id'),
  reason: text('reason'),
  detail: jsonb('detail'),
}, (t) => [
  index('audit_events_lab_idx').on(t.labId, t.at),
  // the retention sweep and the storage page look up notices per run
  index('audit_events_action_subject_idx').on(t.action, t.subjectId),
]);

/**
 * The transactional outbox of farm jobs (api/src/queue/outbox.ts): a route records the job in the
 * same transaction as the run (or figure version) it is for, so a job is never lost while Redis is
 * away; the dispatcher adds it to BullMQ under its own job id (a repeat is a no-op) and deletes the
 * row. One pending row per farm and job id.
 */
export const jobOutbox = pgTable('job_outbox', {
  id: bigint('id', { mode: 'number' }).primaryKey().generatedAlwaysAsIdentity(),
  /** the BullMQ key prefix of the farm it is for (BULLMQ_PREFIX): dispatchers send only their own farm's jobs */
  queuePrefix: text('queue_prefix').notNull(),
  /** shared/jobs.ts jobIdFor: the BullMQ job id the dispatcher adds it under */
  jobId: text('job_id').notNull(),
  /** shared/jobs.ts JOB_NAMES */
  name: text('name').notNull(),
  /** the job's data, parsed with JOB_DATA_SCHEMAS before it is sent */
  data: jsonb('data').notNull(),
  createdAt: createdAt(),
  /** failed dispatch attempts (Redis away) and the last reason, for the admin and the logs */
  attempts: integer('attempts').notNull().default(0),
  lastError: text('last_error'),
}, (t) => [uniqueIndex('job_outbox_job_idx').on(t.queuePrefix, t.jobId)]);
