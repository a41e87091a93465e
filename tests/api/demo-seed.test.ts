import { randomUUID } from 'node:crypto';
import { Queue } from 'bullmq';
import { eq } from 'drizzle-orm';
import { Redis } from 'ioredis';
import pg from 'pg';
import supertest from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createApp } from '../../api/src/app.js';
import { connectDatabase, type Database } from '../../api/src/db/client.js';
import { migrateDatabase } from '../../api/src/db/migrate.js';
import { createLogger } from '../../api/src/logger.js';
import { createSmtpMailer } from '../../api/src/mail/mailer.js';
import { createJobQueue } from '../../api/src/queue/job-queue.js';
import { DEMO_FIGURE_SLUG, DEMO_SIGN_INS, seedDemo } from '../../api/src/seed/demo.js';
import { createS3BlobStore } from '../../api/src/storage/s3-blob-store.js';
import { figures, figureVersions, runs, users } from '../../drizzle/schema.js';
import { QUEUE_NAMES } from '../../shared/jobs.js';
import { as, sessionFrom, testEnv } from './support/harness.js';

/** The demo seed on a database created empty for this test. */
const base = testEnv();
const dbName = `tw_seed_${randomUUID().replaceAll('-', '').slice(0, 12)}`;
const url = new URL(base.DATABASE_URL);
url.pathname = `/${dbName}`;
const env = { ...base, DATABASE_URL: url.toString() };
const queuePrefix = `twtest-seed-${randomUUID().slice(0, 8)}`;
let database: Database;

async function admin(sql: string) {
  const c = new pg.Client({ connectionString: base.DATABASE_URL });
  await c.connect();
  await c.query(sql).finally(() => c.end());
}

beforeAll(async () => {
  await admin(`create database ${dbName}`);
  await migrateDatabase(env.DATABASE_URL);
  database = connectDatabase(env.DATABASE_URL, 2);
});
afterAll(async () => {
  const redis = new Redis(env.REDIS_URL, { maxRetriesPerRequest: null });
  const q = new Queue(QUEUE_NAMES.compute, { connection: redis, prefix: queuePrefix });
  await q.obliterate({ force: true });
  await q.close();
  await redis.quit();
  await database.close();
  await admin(`drop database if exists ${dbName} with (force)`);
});

describe('demo seed', () => {
  it('seeds an empty database exactly once, even when two starts race', async () => {
    const results = await Promise.all([seedDemo(env, { queuePrefix }), seedDemo(env, { queuePrefix })]);
    expect(results.filter((r) => r === null)).toHaveLength(1);
    expect(results.find((r) => r !== null)).toEqual({ signIns: [...DEMO_SIGN_INS] });
    expect(await seedDemo(env, { queuePrefix })).toBeNull();
    expect(await database.db.$count(users)).toBe(DEMO_SIGN_INS.length);
  });

  it('queues its runs without invented statistics and composes one figure', async () => {
    const rows = await database.db.select().from(runs);
    expect(rows.length).toBeGreaterThanOrEqual(3);
    expect(rows.every((r) => r.status === 'queued' && r.stats === null && r.finishedAt === null)).toBe(true);
    expect(new Set(rows.map((r) => JSON.stringify(r.spec.lattice))).size).toBeGreaterThanOrEqual(3);
    const redis = new Redis(env.REDIS_URL, { maxRetriesPerRequest: null });
    const q = new Queue(QUEUE_NAMES.compute, { connection: redis, prefix: queuePrefix });
    expect((await q.getJobCounts('wait')).wait).toBe(rows.length);
    await q.close();
    await redis.quit();
    const composed = await database.db.select().from(figures);
    expect(composed.map((f) => [f.slug, f.runId])).toEqual([[DEMO_FIGURE_SLUG, rows.find((r) => r.title.startsWith('One hundred thousand grains'))!.id]]);
  });

  it('publishes no figure without a print, as the publish route requires of everyone', async () => {
    // readers download the printed files of a published figure; the demo's has none until the farm prints it
    const [figure] = await database.db.select().from(figures).where(eq(figures.slug, DEMO_FIGURE_SLUG));
    expect(figure!.publishedAt).toBeNull();
    expect(await database.db.$count(figureVersions, eq(figureVersions.figureId, figure!.id))).toBe(0);
    const deps = {
      env,
      db: database.db,
      log: createLogger('silent'),
      mailer: createSmtpMailer(env.SMTP_URL, env.MAIL_FROM),
      blobs: createS3BlobStore(env),
      queue: createJobQueue(env.REDIS_URL, { prefix: queuePrefix }),
    };
    const http = supertest(createApp(deps, { distDir: '/nonexistent' }));
    try {
      // a reader finds nothing published, and the figure's link is not public
      expect((await http.get('/api/figures')).body.figures).toEqual([]);
      expect((await http.get(`/api/figures/${DEMO_FIGURE_SLUG}`)).status).toBe(404);
      // its author sees the draft and is told by the route what publishing needs
      const author = DEMO_SIGN_INS.find((d) => d.role === 'author')!;
      const who = sessionFrom(await http.post('/api/auth/sign-in').send({ email: author.email, password: author.password }));
      expect((await as(http.get(`/api/figures/${DEMO_FIGURE_SLUG}`), who)).status).toBe(200);
      const publish = await as(http.post(`/api/figures/${DEMO_FIGURE_SLUG}/publish`), who);
      expect(publish.status).toBe(409);
      expect(publish.body.error).toMatch(/^order a print and wait until it is ready before publishing/);
      const [after] = await database.db.select().from(figures).where(eq(figures.slug, DEMO_FIGURE_SLUG));
      expect(after!.publishedAt).toBeNull();
    } finally {
      await deps.queue.close();
      deps.mailer.close();
      deps.blobs.close();
    }
  });

  it('lets every printed demo sign-in sign in, with the role it claims', async () => {
    const deps = {
      env,
      db: database.db,
      log: createLogger('silent'),
      mailer: createSmtpMailer(env.SMTP_URL, env.MAIL_FROM),
      blobs: createS3BlobStore(env),
      queue: createJobQueue(env.REDIS_URL, { prefix: queuePrefix }),
    };
    const http = supertest(createApp(deps, { distDir: '/nonexistent' }));
    for (const s of DEMO_SIGN_INS) {
      expect(s.password.length).toBeGreaterThanOrEqual(10);
      const res = await http.post('/api/auth/sign-in').send({ email: s.email, password: s.password });
      expect(res.status).toBe(200);
      const cookie = (res.headers['set-cookie'] as unknown as string[]).map((c) => c.split(';')[0]).join('; ');
      const me = (await http.get('/api/me').set('Cookie', cookie)).body;
      expect(me.user.isAdmin).toBe(s.role === 'admin');
      if (s.role === 'author' || s.role === 'manager') expect(me.labs.map((l: { role: string }) => l.role)).toEqual([s.role]);
      if (s.role === 'other lab') expect(me.labs).toHaveLength(1);
    }
    await deps.queue.close();
    deps.mailer.close();
    deps.blobs.close();
  });
});
