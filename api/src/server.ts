import { loadEnv } from '../../shared/env.js';
import { createApp } from './app.js';
import { connectDatabase } from './db/client.js';
import type { AppDeps } from './deps.js';
import { createLogger } from './logger.js';
import { createSmtpMailer } from './mail/mailer.js';
import { createJobQueue } from './queue/job-queue.js';
import { startOutboxDispatcher } from './queue/outbox.js';
import { createS3BlobStore, ensureBucket } from './storage/s3-blob-store.js';

/** The API process: build the real dependencies from the environment, listen, and close cleanly on a signal. */
async function main(): Promise<void> {
  const env = loadEnv();
  const log = createLogger(env.LOG_LEVEL);
  const database = connectDatabase(env.DATABASE_URL);
  await ensureBucket(env).catch((err: unknown) => log.warn('object storage not reachable at start', { err }));
  const deps: AppDeps = {
    env,
    log,
    db: database.db,
    mailer: createSmtpMailer(env.SMTP_URL, env.MAIL_FROM),
    blobs: createS3BlobStore(env),
    queue: createJobQueue(env.REDIS_URL, { prefix: env.BULLMQ_PREFIX }),
  };
  // jobs recorded while Redis was away (or by a process that stopped before sending them) go out from here
  const outbox = startOutboxDispatcher(deps);
  // Express 5 hands listen errors (a port in use) to this callback instead of throwing.
  const server = createApp(deps).listen(env.PORT, env.HOST, (err?: Error) => {
    if (err) {
      log.error(`cannot listen on ${env.HOST}:${env.PORT}`, { err });
      process.exit(1);
    }
    log.info(`API listening on http://${env.HOST}:${env.PORT}`);
  });
  const stop = (signal: string) => {
    log.info(`${signal}: closing`);
    server.close(async () => {
      await outbox.stop();
      await Promise.allSettled([deps.queue.close(), database.close()]);
      deps.mailer.close();
      deps.blobs.close();
      process.exit(0);
    });
    setTimeout(() => process.exit(0), 5000).unref();
  };
  process.on('SIGINT', () => stop('SIGINT'));
  process.on('SIGTERM', () => stop('SIGTERM'));
}

main().catch((err: unknown) => {
  console.error(`API failed to start: ${err instanceof Error ? err.message : String(err)}`);
  process.exit(1);
});
