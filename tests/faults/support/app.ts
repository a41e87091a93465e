import http, { type Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import { randomUUID } from 'node:crypto';
import supertest from 'supertest';
import { loadEnv, type Env } from '../../../shared/env.js';
import { createApp } from '../../../api/src/app.js';
import { migrateDatabase } from '../../../api/src/db/migrate.js';
import { ensureBucket } from '../../../api/src/storage/s3-blob-store.js';
import { startOutboxDispatcher, type OutboxDispatcher } from '../../../api/src/queue/outbox.js';
import { as, closeAppDeps, connectAppDeps, createLab, createUser, signIn, TEST_PASSWORD, type Harness, type Session } from '../../api/support/harness.js';

/** The environment npm test exported, with some services swapped for a fault test's private ones. */
export function faultEnv(overrides: Partial<Record<keyof Env, string>>): Env {
  return loadEnv({ ...process.env, NODE_ENV: 'test', LOG_LEVEL: process.env.LOG_LEVEL ?? 'silent', ...overrides });
}

/** The API as server.ts builds it, listening on a real port (given, or free), for tests that break its services. */
export async function startApi(fileTag: string, env: Env, port = 0): Promise<Harness & { server: Server; url: string; outbox: OutboxDispatcher }> {
  await migrateDatabase(env.DATABASE_URL);
  await ensureBucket(env);
  const tag = `${fileTag}-${randomUUID().slice(0, 8)}`;
  const queuePrefix = `twfault-${tag}`;
  const { database, deps } = connectAppDeps(env, queuePrefix);
  const app = createApp(deps, { distDir: '/nonexistent' });
  const server = http.createServer(app);
  await new Promise<void>((resolve) => server.listen(port, '127.0.0.1', () => resolve()));
  const url = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
  // as server.ts does: jobs recorded while Redis is away are sent when it is back
  const outbox = startOutboxDispatcher(deps, { everyMs: 250 });
  return {
    outbox,
    env,
    deps,
    database,
    app,
    server,
    url,
    http: supertest(url),
    tag,
    queuePrefix,
    email: (name) => `${name.toLowerCase().replace(/[^a-z0-9]+/g, '.')}.${tag}@test.toppleworks.local`,
    async close() {
      await outbox.stop();
      server.closeAllConnections();
      await new Promise((r) => server.close(r));
      await closeAppDeps(database, deps);
    },
  };
}

/** A lab with an author (signed in) and 500 credits granted by a site admin, so runs are never gated. */
export async function fundedAuthor(h: Harness, name: string): Promise<{ author: Session; labId: string }> {
  const a = await createUser(h, `${name} Author`);
  const admin = await createUser(h, `${name} Admin`, { isAdmin: true });
  const labId = await createLab(h, `${name} Lab`, [{ userId: a.id, role: 'author' }]);
  const author = await signIn(h, a.email, TEST_PASSWORD);
  const adminSession = await signIn(h, admin.email, TEST_PASSWORD);
  await as(h.http.post(`/api/labs/${labId}/credits/adjustments`), adminSession).send({ kind: 'grant', credits: 500, reason: 'fault test' }).expect(201);
  return { author, labId };
}
