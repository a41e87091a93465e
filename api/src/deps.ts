import type { Env } from '../../shared/env.js';
import type { Db } from './db/client.js';
import type { Logger } from './logger.js';
import type { Mailer } from './mail/mailer.js';
import type { JobQueue } from './queue/job-queue.js';
import type { BlobStore } from './storage/blob-store.js';

/**
 * Everything the app talks to, built once in server.ts (and in tests against the same real services),
 * so routes never open connections of their own.
 */
export type AppDeps = {
  env: Env;
  db: Db;
  mailer: Mailer;
  blobs: BlobStore;
  queue: JobQueue;
  log: Logger;
};
