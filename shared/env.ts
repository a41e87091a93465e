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
  /** unset means the real Stripe API; locally it points at the payments fake */
  STRIPE_API_BASE: z.url().optional().default('http://127.0.0.1:14570'),
  STRIPE_WEBHOOK_SECRET: z.string().default('whsec_toppleworks_local'),
  SMTP_URL: z.string().default('smtp://127.0.0.1:14525'),
  MAIL_FROM: z.string().default('Toppleworks <press@toppleworks.local>'),
  /** development only: the mail fake's HTTP listing of captured mails, shown at /dev/outbox */
  MAIL_OUTBOX_URL: z.url().optional(),
  /** HS256 key for session JWTs; at least 32 characters */
  SESSION_SECRET: z.string().min(32).default('development-only-session-secret-change-me'),
  LOG_LEVEL: z.enum(['debug', 'info', 'warn', 'error', 'silent']).default('info'),
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
