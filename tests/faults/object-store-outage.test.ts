import { eq } from 'drizzle-orm';
import sharp from 'sharp';
import { Queue } from 'bullmq';
import { Redis } from 'ioredis';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { backgroundUploads, ledgerEntries } from '../../drizzle/schema.js';
import { runResponseSchema, type Run } from '../../shared/api/runs.js';
import { JOB_NAMES, QUEUE_NAMES, jobIdFor } from '../../shared/jobs.js';
import { startFarmWorker } from '../../renderer/src/farm/farm-worker.js';
import { as, runSettled, type Session } from '../api/support/harness.js';
import { faultEnv, fundedAuthor, startApi } from './support/app.js';
import { expectCompletePyramids } from './support/pyramid.js';
import { privateS3, sleep, until } from './support/services.js';

/**
 * The object store (its own s3rver) unreachable for a while, during a run's rendering and during an
 * upload. The render job fails against the outage and is retried by the queue until the store is
 * back; the run is never shown finished before every view is whole; the upload answers 503 with a
 * message and records nothing, and succeeds when sent again.
 */

const BUCKET = 'tw-faults-store';
let s3: Awaited<ReturnType<typeof privateS3>>;
let api: Awaited<ReturnType<typeof startApi>>;
let farm: Awaited<ReturnType<typeof startFarmWorker>>;
let author: Session;
let labId: string;

beforeAll(async () => {
  s3 = await privateS3('store-outage', BUCKET);
  api = await startApi('storefault', faultEnv({ S3_ENDPOINT: s3.endpoint, S3_BUCKET: BUCKET }));
  ({ author, labId } = await fundedAuthor(api, 'Store'));
  farm = await startFarmWorker(api.env, { prefix: api.queuePrefix, threads: 1 });
}, 120_000);
afterAll(async () => {
  await farm?.close();
  await api?.close();
  await s3?.close();
});

const runOf = async (id: string): Promise<Run> => runResponseSchema.parse((await as(api.http.get(`/api/runs/${id}`), author).expect(200)).body).run;
const infoJsons = async (id: string) => (await api.deps.blobs.list(`runs/${id}/`)).filter((k) => k.endsWith('/iiif/info.json')).length;

describe('the object store unavailable for a while', () => {
  it('during rendering: the job retries until the store is back, and no half-drawn view is ever shown as finished', { timeout: 240_000 }, async () => {
    // The store goes down before the render job can start, whatever the machine's speed: the render
    // queue is paused (BullMQ's own pause, which every worker honours) until the store is stopped.
    const connection = new Redis(api.env.REDIS_URL, { maxRetriesPerRequest: null });
    const renderQueue = new Queue(QUEUE_NAMES.render, { connection, prefix: api.queuePrefix });
    let id = '';
    let stopped = false;
    try {
      await renderQueue.pause();
      const res = await as(api.http.post('/api/runs'), author).send({ labId, title: 'through a store outage', spec: { lattice: { preset: 'square' }, chips: 100_000 } });
      expect(res.status, JSON.stringify(res.body)).toBe(201);
      id = runResponseSchema.parse(res.body).run.id;
      const jobId = jobIdFor({ name: JOB_NAMES.renderRun, data: { runId: id } });
      await until('the arrays stored and the render job queued', async () => (await runOf(id)).status === 'rendering' && (await renderQueue.getJob(jobId)) !== undefined, 120_000, 100);
      await s3.stop();
      stopped = true;
      await renderQueue.resume();

      // while the store is away: the render job fails against it and waits to be retried, the run is
      // not finished, and its tiles answer 503, not 500
      const statuses = new Set<string>();
      const since = Date.now();
      await until('the render job to fail against the outage', async () => {
        statuses.add((await runOf(id)).status);
        const job = await renderQueue.getJob(jobId);
        return (job?.attemptsMade ?? 0) >= 1 && Date.now() - since > 1000;
      }, 60_000, 200);
      const job = (await renderQueue.getJob(jobId))!;
      expect(await job.getState()).toMatch(/^(delayed|waiting|active)$/);
      expect(job.failedReason).toMatch(/ECONNREFUSED/);
      expect([...statuses]).toEqual(['rendering']);
      const tile = await as(api.http.get(`/api/runs/${id}/views/heights/tidewater/iiif/info.json`), author);
      expect(tile.status).toBe(503);
      expect(tile.body.error).toMatch(/object store is not answering/);
    } finally {
      await renderQueue.resume().catch(() => undefined);
      if (stopped) await s3.start();
      await renderQueue.close();
      await connection.quit();
    }

    // watch until the end: whenever the run says finished, all three views must be complete
    let run: Run;
    const t0 = Date.now();
    for (;;) {
      run = await runOf(id);
      if (run.status === 'finished') {
        expect(await infoJsons(id)).toBeGreaterThanOrEqual(3);
        break;
      }
      expect(run.status, run.error ?? '').toBe('rendering');
      if (Date.now() - t0 > 60_000) throw new Error('still rendering a minute after the store came back');
      await sleep(100);
    }
    run = await runSettled(api, author, id);
    expect(run.stats).toMatchObject({ grainsIn: '100000', grainsOut: '100000', certificate: { passed: true } });
    const tiles = await expectCompletePyramids(api, author, id, ['heights', 'toppled', 'odometer']);
    const closing = await api.deps.db.select().from(ledgerEntries).where(eq(ledgerEntries.idempotencyKey, `close:${id}`));
    expect(closing.map((e) => e.kind)).toEqual(['settlement']);
    console.log(`object store outage during rendering: run finished after the store came back; ${tiles} tiles checked; one settlement`);
  });

  it('during an upload: 503 with a message and nothing recorded, then the same upload succeeds', { timeout: 60_000 }, async () => {
    const png = await sharp(Buffer.from(Array.from({ length: 24 * 24 }, (_, k) => (k * 7) % 4)), { raw: { width: 24, height: 24, channels: 1 } }).toColourspace('b-w').png().toBuffer();
    const send = () => as(api.http.post(`/api/uploads/background?labId=${labId}`), author).set('Content-Type', 'image/png').send(png);
    const rows = async () => (await api.deps.db.select().from(backgroundUploads)).length;
    const before = await rows();
    await s3.stop();
    try {
      const res = await send();
      expect(res.status, JSON.stringify(res.body)).toBe(503);
      expect(res.body.error).toMatch(/object store is not answering/);
      expect(res.headers['retry-after']).toBe('5');
      expect(await rows()).toBe(before);
    } finally {
      await s3.start();
    }
    const again = await send();
    expect(again.status, JSON.stringify(again.body)).toBe(201);
    expect(await rows()).toBe(before + 1);
    const key = `uploads/${again.body.upload.sha256}.npy`;
    expect(await api.deps.blobs.exists(key)).toBe(true);
    expect(await api.deps.db.select().from(backgroundUploads).where(eq(backgroundUploads.sha256, again.body.upload.sha256))).toHaveLength(1);
  });
});
