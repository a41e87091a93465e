import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { Queue } from 'bullmq';
import { Redis } from 'ioredis';
import { eq } from 'drizzle-orm';
import { runs } from '../../drizzle/schema.js';
import { JOB_NAMES, QUEUE_NAMES, jobIdFor } from '../../shared/jobs.js';
import type { Run } from '../../shared/api/runs.js';
import { readNpy } from '../../renderer/src/npy/index.js';
import { arrayKeys } from '../../renderer/src/farm/artifacts.js';
import { startFarmWorker } from '../../renderer/src/farm/farm-worker.js';
import { authorOfNewLab, runSettled, startHarness, submitRun, type Harness, type Session } from '../api/support/harness.js';

let h: Harness;
let author: Session;
let labId: string;
let farm: Awaited<ReturnType<typeof startFarmWorker>>;

beforeAll(async () => {
  h = await startHarness('farm');
  ({ labId, session: author } = await authorOfNewLab(h, 'Farm'));
  farm = await startFarmWorker(h.env, { prefix: h.queuePrefix, threads: 1 });
});
afterAll(async () => {
  await farm?.close();
  await h?.close();
});

const submit = (title: string, spec: unknown): Promise<Run> => submitRun(h, author, labId, title, spec);

const settled = (id: string, timeoutMs = 60_000) => runSettled(h, author, id, timeoutMs);

describe('the renderer worker', () => {
  it('computes a queued run, stores its arrays and statistics, and draws its pyramids', async () => {
    const run = await settled((await submit('A thousand grains', { lattice: { preset: 'square' }, chips: 1000 })).id);
    expect(run.status).toBe('finished');
    // 18,226 topplings over 421 sites for n = 1000 on Z^2: regression values from an independent
    // computation (an independent numpy run, not a published source: computed only)
    expect(run.stats).toMatchObject({ totalTopplings: '18226', toppledSites: 421, grainsIn: '1000', grainsOut: '1000' });

    const keys = arrayKeys(run.id);
    const heights = readNpy(new Uint8Array((await h.deps.blobs.get(keys.heights))!));
    expect(heights.shape).toEqual(run.stats!.shape);
    const sidecar = JSON.parse((await h.deps.blobs.get(keys.sidecar))!.toString('utf8'));
    expect(sidecar.stats.totalTopplings).toBe('18226');
    expect(sidecar.radialProfile.sites.reduce((a: number, b: number) => a + b, 0)).toBe(421);
    // every final height is stable: below the degree 4 of Z^2 (common practice: the threshold rule)
    expect(Math.max(...Array.from(heights.data as Uint8Array))).toBeLessThan(4);

    const info = await h.deps.blobs.list(`runs/${run.id}/heights/`);
    expect(info.some((k) => k.endsWith('iiif/info.json'))).toBe(true);
  });

  it('fails a run whose background can never stabilize at once, with the reason', async () => {
    // rows of 3 between rows of 0: the API accepts it (not every site is at 3; all-3 is refused at
    // submission), but the source sits on an infinite line of maximal sites, so one grain explodes
    // (arXiv:1109.2908, Sadhu & Dhar)
    const run = await settled((await submit('Rows of threes', { lattice: { preset: 'square' }, chips: 1, background: { kind: 'motif', cells: [[3], [0]] } })).id);
    expect(run.status).toBe('failed');
    expect(run.error).toMatch(/never stops/);
    expect(run.error).toMatch(/arXiv:1109\.2908/);
  });

  it('a compute job delivered again after the arrays were stored (its worker died before queueing the render) draws the pyramids', { timeout: 60_000 }, async () => {
    const run = await settled((await submit('Died before the render', { lattice: { preset: 'square' }, chips: 100 })).id);
    expect(run.status).toBe('finished');
    // the state that worker left: arrays stored, run rendering, no render job
    const redis = new Redis(h.env.REDIS_URL, { maxRetriesPerRequest: null });
    const compute = new Queue(QUEUE_NAMES.compute, { connection: redis, prefix: h.queuePrefix });
    const render = new Queue(QUEUE_NAMES.render, { connection: redis, prefix: h.queuePrefix });
    const computeItem = { name: JOB_NAMES.computeRun, data: { runId: run.id, spec: run.spec } } as const;
    await (await render.getJob(jobIdFor({ name: JOB_NAMES.renderRun, data: { runId: run.id } })))?.remove();
    await (await compute.getJob(jobIdFor(computeItem)))?.remove();
    await h.deps.db.update(runs).set({ status: 'rendering', finishedAt: null }).where(eq(runs.id, run.id));
    await h.deps.queue.enqueue(computeItem);
    const again = await settled(run.id);
    expect(again.status).toBe('finished');
    await compute.close();
    await render.close();
    await redis.quit();
  });
});
