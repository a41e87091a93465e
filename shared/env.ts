import { z } from 'zod';

/**
 * Every setting comes from the environment, with loopback defaults for a developer's machine.
 * Pointing the product at hosted PostgreSQL, Redis, S3, Stripe and SMTP changes only these variables.
 */
export const envSchema = z.object({
  NODE_ENV: z.enum(['development', 'test', 'production']).default('development'),
  HOST: z.string().default('127.0.0.1'),
  PORT: z.coerce.number().int().min(1).max(65535).default(5180),
  /** the address users reach the web app at; used in mailed links */
  PUBLIC_URL: z.url().default('http://127.0.0.1:5180'),
  DATABASE_URL: z.string().default('postgres://postgres@127.0.0.1:15432/toppleworks'),
  REDIS_URL: z.string().default('redis://127.0.0.1:16379'),
  S3_ENDPOINT: z.url().default('http://127.0.0.1:14569'),
  S3_REGION: z.string().default('us-east-1'),
  S3_BUCKET: z.string().min(3).default('toppleworks'),
  S3_ACCESS_KEY_ID: z.string().default('S3RVER'),
  S3_SECRET_ACCESS_KEY: z.string().default('S3RVER'),
  STRIPE_SECRET_KEY: z.string().default('sk_test_toppleworks_local'),
  /** the payments provider's API; unset, the local payments fake's address (production sets https://api.stripe.com) */
  STRIPE_API_BASE: z.url().optional().default('http://127.0.0.1:14570'),
  STRIPE_WEBHOOK_SECRET: z.string().default('whsec_toppleworks_local'),
  SMTP_URL: z.string().default('smtp://127.0.0.1:14525'),
  MAIL_FROM: z.string().default('Toppleworks <press@toppleworks.local>'),
  /** development only: the mail fake's HTTP listing of captured mails, shown at /dev/outbox */
  MAIL_OUTBOX_URL: z.url().optional(),
  /** HS256 key for session JWTs; at least 32 characters */
  SESSION_SECRET: z.string().min(32).default('development-only-session-secret-change-me'),
  LOG_LEVEL: z.enum(['debug', 'info', 'warn', 'error', 'silent']).default('info'),
  /** BullMQ key prefix in Redis: the API and every worker of one deployment must agree (tests use their own) */
  BULLMQ_PREFIX: z.string().regex(/^[A-Za-z0-9_-]{1,64}$/, 'letters, digits, "-" and "_" only').default('tw'),

  // Renderer workers (renderer/src/worker.ts); documented in infra/README.md and infra/deploy/.
  /** runs of the standard compute lane (tw-compute) one worker process computes at once */
  WORKER_COMPUTE_CONCURRENCY: z.coerce.number().int().min(0).max(64).default(1),
  /** runs of the large compute lane (tw-compute-large) at once; 0 = this worker leaves large runs to others */
  WORKER_LARGE_CONCURRENCY: z.coerce.number().int().min(0).max(64).default(1),
  /** runs whose tile pyramids one worker draws at once */
  WORKER_RENDER_CONCURRENCY: z.coerce.number().int().min(0).max(64).default(1),
  /** threads per run, main thread included: the plain tiled engine, and the seeded fast path on large grids (unset: min(2, cores)) */
  WORKER_THREADS: z.coerce.number().int().min(1).max(16).optional(),
  /** seconds between checkpoints of a long computation, kept in the object store until its arrays are */
  WORKER_CHECKPOINT_SECONDS: z.coerce.number().positive().max(86_400).default(60),
  /**
   * seconds a worker's hold on a job lasts without renewal (renewed every half of it), and the interval
   * of the check that hands the jobs of a dead worker to another one: a killed worker's run resumes
   * elsewhere within about twice this
   */
  WORKER_LOCK_SECONDS: z.coerce.number().min(1).max(3600).default(30),
});
export type Env = z.infer<typeof envSchema>;

/** Parse the environment once at start-up; a bad value stops the process with a clear message. */
export function loadEnv(source: NodeJS.ProcessEnv = process.env): Env {
  const parsed = envSchema.safeParse(source);
  if (!parsed.success) {
    const lines = parsed.error.issues.map((i) => `  ${i.path.join('.')}: ${i.message}`);
    throw new Error(`invalid environment:\n${lines.join('\n')}`);
  }
  return parsed.data;
}
