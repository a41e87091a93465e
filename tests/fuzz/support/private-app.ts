import type { AddressInfo } from 'node:net';
import type { Server } from 'node:http';
import { randomUUID } from 'node:crypto';
import pg from 'pg';
import supertest from 'supertest';
import { Queue } from 'bullmq';
import { Redis } from 'ioredis';
import { loadEnv } from '../../../shared/env.js';
import { QUEUE_NAMES } from '../../../shared/jobs.js';
import { createApp } from '../../../api/src/app.js';
import { migrateDatabase } from '../../../api/src/db/migrate.js';
import { ensureBucket } from '../../../api/src/storage/s3-blob-store.js';
import { connectAppDeps, type Harness } from '../../api/support/harness.js';

/**
 * The API on a database and a bucket of its own, inside the services `npm test` started. Other
 * test files run at the same time; with private storage "nothing was stored" can be checked by
 * counting every table and every object, not just the rows this file knows about.
 */
export type PrivateApp = Harness & {
  server: Server;
  /** row count and content digest of every table, and every object key in the bucket */
  snapshot(): Promise<Snapshot>;
  /** the tables part of a snapshot alone (one query) */
  tables(): Promise<Record<string, string>>;
  /** jobs of every queue under this app's prefix */
  jobCount(): Promise<number>;
};

export type Snapshot = { tables: Record<string, string>; objects: string[] };

function withDatabase(url: string, name: string): string {
  const u = new URL(url);
  u.pathname = `/${name}`;
  return u.toString();
}

export async function startPrivateApp(fileTag: string): Promise<PrivateApp> {
  const id = randomUUID().slice(0, 8);
  const tag = `${fileTag}-${id}`;
  const base = loadEnv({ ...process.env, NODE_ENV: 'test', LOG_LEVEL: process.env.LOG_LEVEL ?? 'silent' });
  const dbName = `tw_${fileTag.replace(/[^a-z0-9]/g, '_')}_${id}`;
  const admin = new pg.Client({ connectionString: withDatabase(base.DATABASE_URL, 'postgres') });
  await admin.connect();
  await admin.query(`create database "${dbName}"`);
  await admin.end();
  const env = { ...base, DATABASE_URL: withDatabase(base.DATABASE_URL, dbName), S3_BUCKET: `tw-${tag}` };
  await migrateDatabase(env.DATABASE_URL);
  await ensureBucket(env);
  const queuePrefix = `twtest-${tag}`;
  const { database, deps } = connectAppDeps(env, queuePrefix);
  const app = createApp(deps, { distDir: '/nonexistent' });
  // one listening server for thousands of requests (supertest(app) would open one per request)
  const server = await new Promise<Server>((resolve) => {
    const s = app.listen(0, '127.0.0.1', () => resolve(s));
  });
  const redis = new Redis(env.REDIS_URL, { maxRetriesPerRequest: null });
  const queues = Object.values(QUEUE_NAMES).map((name) => new Queue(name, { connection: redis, prefix: queuePrefix }));

  const { rows: tableRows } = await database.pool.query<{ t: string }>(
    "select quote_ident(table_name) as t from information_schema.tables where table_schema = 'public' and table_type = 'BASE TABLE' order by 1",
  );
  const names = tableRows.map((r) => r.t);
  const snapshotSql = `select ${names.map((t) => `(select count(*)::text || ':' || coalesce(md5(string_agg(x::text, ',' order by x::text)), '') from ${t} x) as ${t}`).join(', ')}`;

  const tables = async () => (await database.pool.query<Record<string, string>>(snapshotSql)).rows[0]!;

  return {
    env,
    deps,
    database,
    app,
    server,
    http: supertest(server),
    tag,
    queuePrefix,
    email: (name) => `${name.toLowerCase().replace(/[^a-z0-9]+/g, '.')}.${tag}@test.toppleworks.local`,
    tables,
    async snapshot() {
      return { tables: await tables(), objects: (await deps.blobs.list('')).sort() };
    },
    async jobCount() {
      let n = 0;
      for (const q of queues) {
        const counts = await q.getJobCounts();
        n += Object.values(counts).reduce((a, b) => a + b, 0);
      }
      return n;
    },
    async close() {
      await new Promise<void>((resolve) => server.close(() => resolve()));
      for (const q of queues) await q.obliterate({ force: true }).catch(() => undefined);
      await Promise.all(queues.map((q) => q.close()));
      await redis.quit();
      await deps.queue.close();
      deps.mailer.close();
      // empty and drop the private bucket and database
      for (const key of await deps.blobs.list('')) await deps.blobs.delete(key);
      deps.blobs.close();
      await database.close();
      const again = new pg.Client({ connectionString: withDatabase(base.DATABASE_URL, 'postgres') });
      await again.connect();
      await again.query(`drop database if exists "${dbName}" with (force)`);
      await again.end();
    },
  };
}

export const serverUrl = (s: Server) => `http://127.0.0.1:${(s.address() as AddressInfo).port}`;
