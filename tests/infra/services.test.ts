import { HeadBucketCommand, S3Client } from '@aws-sdk/client-s3';
import { Redis } from 'ioredis';
import pg from 'pg';
import { describe, expect, it } from 'vitest';
import { existsSync } from 'node:fs';
import path from 'node:path';
import { portOffset } from '../../infra/lib/profile.js';

/**
 * The services infra/test.ts started for this run answer at the addresses it exported. Runs only
 * under `npm test` (which sets these variables); other test files start their own fakes.
 */
const env = process.env;
const underNpmTest = env.NODE_ENV === 'test' && !!env.PAYMENTS_FAKE_URL && !!env.MAIL_OUTBOX_URL;

describe.runIf(underNpmTest)('services started by npm test', () => {
  it('PostgreSQL answers on the test database, not the dev one', async () => {
    const client = new pg.Client({ connectionString: env.DATABASE_URL });
    await client.connect();
    try {
      const r = await client.query('select current_database() as db, current_setting($$port$$) as port');
      expect(r.rows[0]).toEqual({ db: 'toppleworks_test', port: String(25432 + portOffset()) });
    } finally {
      await client.end();
    }
  });

  it('Redis answers PING', async () => {
    const redis = new Redis(env.REDIS_URL!, { maxRetriesPerRequest: 1, lazyConnect: true });
    await redis.connect();
    try {
      expect(await redis.ping()).toBe('PONG');
    } finally {
      redis.disconnect();
    }
  });

  it('the S3 fake has the bucket', async () => {
    const s3 = new S3Client({
      region: env.S3_REGION,
      endpoint: env.S3_ENDPOINT,
      forcePathStyle: true,
      credentials: { accessKeyId: env.S3_ACCESS_KEY_ID!, secretAccessKey: env.S3_SECRET_ACCESS_KEY! },
    });
    try {
      expect((await s3.send(new HeadBucketCommand({ Bucket: env.S3_BUCKET }))).$metadata.httpStatusCode).toBe(200);
    } finally {
      s3.destroy();
    }
  });

  it('the payments fake and the mail fake answer, and chromium is exported for browser tests', async () => {
    expect(((await (await fetch(`${env.PAYMENTS_FAKE_URL}/_fake/health`)).json()) as { ok: boolean }).ok).toBe(true);
    expect(Array.isArray(((await (await fetch(`${env.MAIL_OUTBOX_URL}/messages`)).json()) as { messages: unknown[] }).messages)).toBe(true);
    expect(env.CHROMIUM_PATH).toMatch(/chromium$/);
  });

  it('the web app was built into the test profile\'s own folder, and the browser tests serve that one', async () => {
    const { profileFor } = await import('../../infra/lib/profile.js');
    const { DIST_DIR } = await import('../e2e/stack.js');
    const own = profileFor('test').webDist;
    expect(env.TW_WEB_DIST).toBe(own);
    expect(DIST_DIR).toBe(own);
    expect(own).not.toBe(profileFor('dev').webDist);
    expect(existsSync(path.join(own, 'index.html'))).toBe(true);
  });
});
