import { randomUUID } from 'node:crypto';
import { eq } from 'drizzle-orm';
import supertest from 'supertest';
import { CSRF_COOKIE, CSRF_HEADER, SESSION_COOKIE } from '../../../shared/api/auth.js';
import { runResponseSchema, type Run } from '../../../shared/api/runs.js';
import { loadEnv, type Env } from '../../../shared/env.js';
import { memberships, labs, users } from '../../../drizzle/schema.js';
import { createApp } from '../../../api/src/app.js';
import { hashPassword } from '../../../api/src/auth/passwords.js';
import { connectDatabase, type Database } from '../../../api/src/db/client.js';
import { migrateDatabase } from '../../../api/src/db/migrate.js';
import type { AppDeps } from '../../../api/src/deps.js';
import { createLogger } from '../../../api/src/logger.js';
import { createSmtpMailer } from '../../../api/src/mail/mailer.js';
import { createJobQueue } from '../../../api/src/queue/job-queue.js';
import { createS3BlobStore, ensureBucket } from '../../../api/src/storage/s3-blob-store.js';

/**
 * The API under test, wired to the real services named by the environment that `npm test`
 * (infra/test.ts) exports, falling back to the shared/env.ts defaults. Each test file gets a unique
 * tag for its e-mails, lab names and BullMQ prefix, so files never see each other's data.
 */
export function testEnv(): Env {
  return loadEnv({ ...process.env, NODE_ENV: 'test', LOG_LEVEL: process.env.LOG_LEVEL ?? 'silent' });
}

export type Harness = {
  env: Env;
  deps: AppDeps;
  database: Database;
  app: ReturnType<typeof createApp>;
  http: ReturnType<typeof supertest>;
  tag: string;
  queuePrefix: string;
  /** a unique address in this file's namespace */
  email(name: string): string;
  close(): Promise<void>;
};

export async function startHarness(fileTag: string): Promise<Harness> {
  const env = testEnv();
  await migrateDatabase(env.DATABASE_URL);
  await ensureBucket(env);
  const tag = `${fileTag}-${randomUUID().slice(0, 8)}`;
  const queuePrefix = `twtest-${tag}`;
  const { database, deps } = connectAppDeps(env, queuePrefix);
  const app = createApp(deps, { distDir: '/nonexistent' });
  return {
    env,
    deps,
    database,
    app,
    http: supertest(app),
    tag,
    queuePrefix,
    email: (name) => `${name.toLowerCase().replace(/[^a-z0-9]+/g, ".")}.${tag}@test.toppleworks.local`,
    close: () => closeAppDeps(database, deps),
  };
}

/** The API's dependencies as api/src/server.ts builds them, on the services `env` names; jobs under `queuePrefix`. */
export function connectAppDeps(env: Env, queuePrefix: string): { database: Database; deps: AppDeps } {
  const database = connectDatabase(env.DATABASE_URL, 5);
  const deps: AppDeps = {
    env,
    db: database.db,
    log: createLogger(env.LOG_LEVEL),
    mailer: createSmtpMailer(env.SMTP_URL, env.MAIL_FROM),
    blobs: createS3BlobStore(env),
    queue: createJobQueue(env.REDIS_URL, { prefix: queuePrefix }),
  };
  return { database, deps };
}

export async function closeAppDeps(database: Database, deps: AppDeps): Promise<void> {
  await deps.queue.close();
  deps.mailer.close();
  deps.blobs.close();
  await database.close();
}

/** A signed-in browser: the session and CSRF cookies, plus the header our web app would send. */
export type Session = { cookie: string; csrf: string };

export function sessionFrom(res: supertest.Response): Session {
  const raw = res.headers['set-cookie'] as unknown as string[] | undefined;
  const jar = new Map<string, string>();
  for (const c of raw ?? []) {
    const [pair] = c.split(';');
    const i = pair!.indexOf('=');
    jar.set(pair!.slice(0, i), decodeURIComponent(pair!.slice(i + 1)));
  }
  const jwt = jar.get(SESSION_COOKIE);
  const csrf = jar.get(CSRF_COOKIE);
  if (!jwt || !csrf) throw new Error(`no session cookies in answer ${res.status}: ${JSON.stringify(res.body)}`);
  return { cookie: `${SESSION_COOKIE}=${jwt}; ${CSRF_COOKIE}=${csrf}`, csrf };
}

/** Attach a session (cookie + CSRF header) or a bearer token to a supertest request. */
export function as<T extends supertest.Test>(req: T, who: Session | { bearer: string } | null): T {
  if (!who) return req;
  if ('bearer' in who) return req.set('Authorization', `Bearer ${who.bearer}`) as T;
  return req.set('Cookie', who.cookie).set(CSRF_HEADER, who.csrf) as T;
}

export async function signIn(h: Harness, email: string, password: string): Promise<Session> {
  const res = await h.http.post('/api/auth/sign-in').send({ email, password });
  if (res.status !== 200) throw new Error(`sign-in of ${email} failed: ${res.status} ${JSON.stringify(res.body)}`);
  return sessionFrom(res);
}

export const TEST_PASSWORD = 'correct-horse-sandpile';
let cachedHash: Promise<string> | null = null;

/** A user inserted directly (fixtures for authorization tests; the sign-up flow has its own test). */
export async function createUser(
  h: Harness,
  name: string,
  opts: { verified?: boolean; isAdmin?: boolean } = {},
): Promise<{ id: string; email: string; name: string }> {
  cachedHash ??= hashPassword(TEST_PASSWORD);
  const email = h.email(name);
  const [u] = await h.deps.db
    .insert(users)
    .values({ email, name, passwordHash: await cachedHash, emailVerifiedAt: opts.verified === false ? null : new Date(), isAdmin: opts.isAdmin ?? false })
    .returning();
  return { id: u!.id, email, name };
}

export async function createLab(h: Harness, name: string, members: { userId: string; role: 'author' | 'manager' }[]): Promise<string> {
  const [lab] = await h.deps.db.insert(labs).values({ name: `${name} ${h.tag}` }).returning();
  if (members.length) await h.deps.db.insert(memberships).values(members.map((m) => ({ ...m, labId: lab!.id })));
  return lab!.id;
}

export async function userByEmail(h: Harness, email: string) {
  const [u] = await h.deps.db.select().from(users).where(eq(users.email, email));
  return u ?? null;
}

/** A new user who is the only author of a new lab, signed in: where most tests of runs start. */
export async function authorOfNewLab(h: Harness, name: string): Promise<{ user: { id: string; email: string }; labId: string; session: Session }> {
  const user = await createUser(h, `${name} Author`);
  const labId = await createLab(h, `${name} Lab`, [{ userId: user.id, role: 'author' }]);
  return { user, labId, session: await signIn(h, user.email, TEST_PASSWORD) };
}

/** Submits a run through the API; anything but 201 fails the test with the API's answer. */
export async function submitRun(h: Harness, who: Session, labId: string, title: string, spec: unknown): Promise<Run> {
  const res = await as(h.http.post('/api/runs'), who).send({ labId, title, spec });
  if (res.status !== 201) throw new Error(`submitting '${title}' answered ${res.status}: ${JSON.stringify(res.body)}`);
  return runResponseSchema.parse(res.body).run;
}

/** Poll a run through the API until it has finished, failed or been cancelled. */
export async function runSettled(h: Harness, who: Session, id: string, timeoutMs = 60_000): Promise<Run> {
  const until = Date.now() + timeoutMs;
  for (;;) {
    const { run } = runResponseSchema.parse((await as(h.http.get(`/api/runs/${id}`), who).expect(200)).body);
    if (['finished', 'failed', 'cancelled'].includes(run.status)) return run;
    if (Date.now() > until) throw new Error(`run ${id} still ${run.status} (${run.stage}) after ${timeoutMs} ms`);
    await new Promise((r) => setTimeout(r, 200));
  }
}
