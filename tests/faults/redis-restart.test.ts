import { eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { ledgerEntries } from '../../drizzle/schema.js';
import { runResponseSchema, type Run } from '../../shared/api/runs.js';
import { startFarmWorker } from '../../renderer/src/farm/farm-worker.js';
import { as, runSettled, type Session } from '../api/support/harness.js';
import { faultEnv, fundedAuthor, startApi } from './support/app.js';
import { expectCompletePyramids } from './support/pyramid.js';
import { privateRedis, sleep, until } from './support/services.js';

/**
 * Redis (its own redis-server, with an append-only file as a production queue runs) stopped and
 * started again while the farm worker computes a run: the queue keeps the job, API and worker
 * reconnect, the job completes, its pyramids are whole, and the run is charged exactly once.
 */

let redis: Awaited<ReturnType<typeof privateRedis>>;
let api: Awaited<ReturnType<typeof startApi>>;
let farm: Awaited<ReturnType<typeof startFarmWorker>>;
let author: Session;
let labId: string;

beforeAll(async () => {
  redis = await privateRedis('redis-restart');
  api = await startApi('redisfault', faultEnv({ REDIS_URL: redis.url }));
  ({ author, labId } = await fundedAuthor(api, 'Queue'));
  farm = await startFarmWorker(api.env, { prefix: api.queuePrefix, threads: 1 });
}, 120_000);
afterAll(async () => {
  await farm?.close();
  await api?.close();
  await redis?.close();
});

const runOf = async (id: string): Promise<Run> => runResponseSchema.parse((await as(api.http.get(`/api/runs/${id}`), author).expect(200)).body).run;

describe('Redis restarted during a run', () => {
  it('the job survives in the queue, retries if it must, and completes, charged once', { timeout: 240_000 }, async () => {
    // 10^7 grains take 15–30 s to compute on this machine (10^6, folded, under a second): long enough to restart Redis under it
    const res = await as(api.http.post('/api/runs'), author).send({ labId, title: 'through a Redis restart', spec: { lattice: { preset: 'square' }, chips: 10_000_000 } });
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    const id = runResponseSchema.parse(res.body).run.id;
    await until('the run to be computing', async () => (await runOf(id)).status === 'computing', 60_000);
    await redis.stop();
    // while Redis is down the API still answers from PostgreSQL, and its readiness says what is missing
    const ready = await api.http.get('/api/health/ready');
    expect(ready.status).toBe(503);
    expect(ready.body).toMatchObject({ postgres: true, redis: false });
    expect((await as(api.http.get(`/api/runs/${id}`), author)).status).toBe(200);
    await sleep(2000);
    await redis.start();
    await until('readiness again', async () => (await api.http.get('/api/health/ready')).status === 200, 30_000);

    const run = await runSettled(api, author, id, 200_000);
    expect(run.status, run.error ?? '').toBe('finished');
    // the engine's own certificate (stable, non-negative, mass conserved, minimal odometer) and the mass balance
    expect(run.stats).toMatchObject({ grainsIn: '10000000', grainsOut: '10000000', symmetric: true, certificate: { passed: true } });
    const tiles = await expectCompletePyramids(api, author, id, ['heights', 'toppled', 'odometer']);
    expect(tiles).toBeGreaterThan(3);
    const closing = await api.deps.db.select().from(ledgerEntries).where(eq(ledgerEntries.idempotencyKey, `close:${id}`));
    expect(closing).toHaveLength(1);
    expect(closing[0]!.kind).toBe('settlement');
    console.log(`redis restart: run finished after the restart; ${tiles} tiles checked; one settlement entry`);
  });
});
