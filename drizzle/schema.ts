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
}, (t) => [index('runs_lab_created_idx').on(t.labId, t.createdAt), index('runs_status_idx').on(t.status)]);

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
}, (t) => [index('figures_published_idx').on(t.publishedAt)]);

/** Credits bought or granted (positive) and spent (negative); a lab's balance is the sum. */
export const creditLedger = pgTable('credit_ledger', {
  id: id(),
  labId: uuid('lab_id').notNull().references(() => labs.id, { onDelete: 'cascade' }),
  credits: bigint('credits', { mode: 'number' }).notNull(),
  kind: text('kind', { enum: ['purchase', 'grant', 'run'] }).notNull(),
  /** payment provider reference (checkout session) or run id; unique so a webhook replay books nothing twice */
  reference: text('reference').unique(),
  actorId: uuid('actor_id').references(() => users.id, { onDelete: 'set null' }),
  createdAt: createdAt(),
}, (t) => [index('credit_ledger_lab_idx').on(t.labId)]);

/**
 * Append-only trail of who did what, when, why and in which lab. No foreign keys, so deleting a user
 * or lab never rewrites history; a trigger (migration 0001) refuses UPDATE and DELETE.
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
}, (t) => [index('audit_events_lab_idx').on(t.labId, t.at)]);
