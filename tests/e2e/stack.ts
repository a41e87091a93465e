import { cpSync, existsSync, mkdtempSync, rmSync } from 'node:fs';
import os from 'node:os';
import type { AddressInfo } from 'node:net';
import http, { type Server } from 'node:http';
import path from 'node:path';
import { randomBytes } from 'node:crypto';
import pg from 'pg';
import { loadEnv, type Env } from '../../shared/env.js';
import { createApp } from '../../api/src/app.js';
import { connectDatabase } from '../../api/src/db/client.js';
import { migrateDatabase } from '../../api/src/db/migrate.js';
import type { AppDeps } from '../../api/src/deps.js';
import { createLogger } from '../../api/src/logger.js';
import { createSmtpMailer } from '../../api/src/mail/mailer.js';
import { createJobQueue } from '../../api/src/queue/job-queue.js';
import { createS3BlobStore, ensureBucket } from '../../api/src/storage/s3-blob-store.js';
import { ROOT } from './browser.js';

/** The web app the browser tests serve: npm test builds it into a folder of its own (TW_WEB_DIST); dist/ is npm start's. */
export const DIST_DIR = process.env.TW_WEB_DIST ?? path.join(ROOT, 'dist');

export interface Stack {
  /** http://127.0.0.1:<port>, the API serving the built web app */
  url: string;
  env: Env;
  deps: AppDeps;
  /** the BullMQ key prefix the API enqueues under; a farm worker started with it receives this stack's jobs */
  queuePrefix: string;
  close(): Promise<void>;
}

/** A database of its own per test file, so seeding the demo never collides with other test files. */
async function createScratchDatabase(baseUrl: string): Promise<{ url: string; drop(): Promise<void> }> {
  const name = `tw_e2e_${randomBytes(6).toString('hex')}`;
  const admin = new URL(baseUrl);
  admin.pathname = '/postgres';
  const client = new pg.Client({ connectionString: admin.toString() });
  await client.connect();
  await client.query(`create database ${name}`);
  await client.end();
  const url = new URL(baseUrl);
  url.pathname = `/${name}`;
  return {
    url: url.toString(),
    async drop() {
      const c = new pg.Client({ connectionString: admin.toString() });
      await c.connect();
      await c.query(`drop database if exists ${name} with (force)`);
      await c.end();
    },
  };
}

/**
 * The real API in-process (PostgreSQL, Redis, S3 fake, SMTP fake from the environment `npm test`
 * exports), listening on a free port and serving a copy of dist/. Mailed links point back at this server.
 */
export async function startStack(): Promise<Stack> {
  if (!existsSync(path.join(DIST_DIR, 'index.html'))) {
    throw new Error(`${path.join(DIST_DIR, 'index.html')} is missing: run the tests through npm test, or build the web app first (npx vite build)`);
  }
  const base = loadEnv({ ...process.env, NODE_ENV: 'test', LOG_LEVEL: process.env.LOG_LEVEL ?? 'warn' });
  if (!base.MAIL_OUTBOX_URL) throw new Error('MAIL_OUTBOX_URL is not set: the e2e tests read mails from the SMTP fake');

  // Everything acquired so far, released in reverse order on close or when start-up fails half-way.
  const cleanups: (() => Promise<unknown> | unknown)[] = [];
  const release = async () => {
    for (const c of cleanups.reverse()) await Promise.resolve().then(c).catch(() => {});
  };
  try {
    // Serve a private copy: another `vite build` in the same tree empties dist/ while it writes.
    const served = mkdtempSync(path.join(os.tmpdir(), 'tw-e2e-dist-'));
    cleanups.push(() => rmSync(served, { recursive: true, force: true }));
    cpSync(DIST_DIR, served, { recursive: true });

    const scratch = await createScratchDatabase(base.DATABASE_URL);
    cleanups.push(() => scratch.drop());
    await migrateDatabase(scratch.url);
    const database = connectDatabase(scratch.url, 5);
    cleanups.push(() => database.close());

    // The port is known only after listen, and PUBLIC_URL must name it; so listen first, then build the app.
    const server: Server = await new Promise((resolve, reject) => {
      const s = http.createServer();
      s.once('error', reject);
      s.listen(0, '127.0.0.1', () => resolve(s));
    });
    cleanups.push(() => {
      server.closeAllConnections();
      return new Promise<void>((r) => server.close(() => r()));
    });
    const port = (server.address() as AddressInfo).port;
    const url = `http://127.0.0.1:${port}`;
    const env = loadEnv({ ...process.env, NODE_ENV: 'test', LOG_LEVEL: base.LOG_LEVEL, DATABASE_URL: scratch.url, PORT: String(port), PUBLIC_URL: url });
    await ensureBucket(env);
    const queuePrefix = `tw-e2e-${randomBytes(4).toString('hex')}`;
    const deps: AppDeps = {
      env,
      log: createLogger(env.LOG_LEVEL),
      db: database.db,
      mailer: createSmtpMailer(env.SMTP_URL, env.MAIL_FROM),
      blobs: createS3BlobStore(env),
      // a key prefix of its own, so jobs of this file never reach a worker or another test
      queue: createJobQueue(env.REDIS_URL, { prefix: queuePrefix }),
    };
    cleanups.push(() => deps.queue.close(), () => deps.mailer.close(), () => deps.blobs.close());
    server.on('request', createApp(deps, { distDir: served }));
    return { url, env, deps, queuePrefix, close: release };
  } catch (err) {
    await release();
    throw err;
  }
}
