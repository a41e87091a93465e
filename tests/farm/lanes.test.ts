/**
 * Small runs are never stuck behind a huge one: compute jobs go to a standard or a large lane by
 * their estimate (shared/jobs.ts), and each worker serves both lanes with slots of its own.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { Queue } from 'bullmq';
import { Redis } from 'ioredis';
import { runResponseSchema, type Run } from '../../shared/api/runs.js';
import { estimateRun } from '../../shared/estimate.js';
import { JOB_NAMES, LARGE_RUN_SECONDS, QUEUE_NAMES, computeLaneOf, jobIdFor } from '../../shared/jobs.js';
import { runSpecSchema } from '../../shared/run-spec.js';
import { checkpointKey } from '../../renderer/src/farm/artifacts.js';
import { startFarmWorker } from '../../renderer/src/farm/farm-worker.js';
import { as, authorOfNewLab, runSettled, startHarness, submitRun, type Harness, type Session } from '../api/support/harness.js';

let h: Harness;
let author: Session;
let labId: string;
let redis: Redis;
let farm: Awaited<ReturnType<typeof startFarmWorker>> | null = null;

beforeAll(async () => {
  h = await startHarness('lanes');
  ({ labId, session: author } = await authorOfNewLab(h, 'Lane'));
  redis = new Redis(h.env.REDIS_URL, { maxRetriesPerRequest: null });
});
afterAll(async () => {
  await farm?.close();
  await redis?.quit();
  await h?.close();
});

const submit = (title: string, spec: unknown): Promise<Run> => submitRun(h, author, labId, title, spec);

/** A run the estimator sends to the large lane; it computes for minutes, far longer than the tests wait. */
const BIG = 100_000_000;
const spec = (chips: number) => runSpecSchema.parse({ lattice: { preset: 'square' }, chips });
const jobOf = (queue: string, run: Run) => new Queue(queue, { connection: redis, prefix: h.queuePrefix }).getJob(jobIdFor({ name: JOB_NAMES.computeRun, data: { runId: run.id, spec: run.spec } }));

describe('compute lanes', () => {
  it('choose the lane from the estimate', () => {
    // 10^6 grains on Z^2 stays in the standard lane, 10^8 goes to the large one (the threshold's own comment)
    expect(estimateRun(spec(1_000_000)).seconds).toBeLessThan(LARGE_RUN_SECONDS);
    expect(computeLaneOf(spec(1_000_000))).toBe(QUEUE_NAMES.compute);
    expect(estimateRun(spec(BIG)).seconds).toBeGreaterThan(LARGE_RUN_SECONDS);
    expect(computeLaneOf(spec(BIG))).toBe(QUEUE_NAMES.computeLarge);
    expect(computeLaneOf(spec(1000))).toBe(QUEUE_NAMES.compute);
  });

  it('a cancelled run waiting in the large lane leaves the queue', async () => {
    const big = await submit('Waiting big one', { lattice: { preset: 'square' }, chips: BIG });
    const job = await jobOf(QUEUE_NAMES.computeLarge, big);
    expect(job?.data.runId).toBe(big.id);
    expect(await jobOf(QUEUE_NAMES.compute, big)).toBeUndefined();
    await as(h.http.post(`/api/runs/${big.id}/cancel`), author).expect(200);
    expect(await jobOf(QUEUE_NAMES.computeLarge, big)).toBeUndefined();
  });

  it('a small run finishes while a big one computes, on a worker with one slot per lane', { timeout: 120_000 }, async () => {
    farm = await startFarmWorker(h.env, { prefix: h.queuePrefix, computeConcurrency: 1, largeConcurrency: 1, threads: 1, checkpointSeconds: 0.5, log: () => {} });
    const big = await submit('Big one', { lattice: { preset: 'square' }, chips: BIG });
    expect(await jobOf(QUEUE_NAMES.computeLarge, big)).toBeDefined();
    // the big run holds the worker's large-lane slot
    await expect.poll(async () => (await runSettledOrCurrent(big.id)).status, { timeout: 30_000, interval: 100 }).toBe('computing');

    const small = await submit('Small one', { lattice: { preset: 'square' }, chips: 1000 });
    const done = await runSettled(h, author, small.id, 60_000);
    expect(done.status).toBe('finished');
    // 18,226 topplings for n = 1000 on Z^2: regression value from an independent computation (an independent numpy run, computed only)
    expect(done.stats?.totalTopplings).toBe('18226');
    // and the big one is still at work: the small one did not wait for it
    expect((await runSettledOrCurrent(big.id)).status).toBe('computing');

    // the author cancels the big one: the worker stops it and keeps nothing of it
    await as(h.http.post(`/api/runs/${big.id}/cancel`), author).expect(200);
    await expect.poll(async () => (await (await jobOf(QUEUE_NAMES.computeLarge, big))?.getState()) ?? 'gone', { timeout: 20_000, interval: 200 }).toMatch(/completed|gone/);
    expect(await h.deps.blobs.exists(checkpointKey(big.id))).toBe(false);
    expect((await runSettledOrCurrent(big.id)).status).toBe('cancelled');
  });
});

async function runSettledOrCurrent(id: string): Promise<Run> {
  return runResponseSchema.parse((await as(h.http.get(`/api/runs/${id}`), author).expect(200)).body).run;
}
