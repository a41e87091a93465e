import { and, eq, inArray } from 'drizzle-orm';
import { Queue } from 'bullmq';
import { Redis } from 'ioredis';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { figureVersions, jobOutbox, labs, ledgerEntries } from '../../drizzle/schema.js';
import { figureResponseSchema, figureVersionResponseSchema, type FigureDetail } from '../../shared/api/figures.js';
import { runResponseSchema, type Run } from '../../shared/api/runs.js';
import { seriesResponseSchema } from '../../shared/api/series.js';
import { QUEUE_NAMES, QUEUES_OF_JOB, JOB_NAMES } from '../../shared/jobs.js';
import { WAITING_FOR_QUEUE_STAGE } from '../../api/src/queue/outbox.js';
import { startFarmWorker } from '../../renderer/src/farm/farm-worker.js';
import { as, createUser, runSettled, signIn, TEST_PASSWORD, type Session } from '../api/support/harness.js';
import { faultEnv, fundedAuthor, startApi } from './support/app.js';
import { privateRedis, until } from './support/services.js';

/**
 * Runs submitted while Redis (its own redis-server) is down: the API answers at once from
 * PostgreSQL, recording the runs, their reservations and their jobs in the outbox in one
 * transaction; the outbox dispatcher sends the jobs when Redis is back. Each run then has exactly
 * one job, one reservation and one settlement; a run cancelled during the outage gets no job.
 * Routes that need Redis itself (suspending a lab, the admin's farm page and retry) answer 503 at
 * once and record nothing. The transactional outbox and its idempotent relay are common practice.
 */

// "~2 s" in the brief; the queue call budget is 1.5 s (api/src/queue/redis-ready.ts) and an outage
// is known at once from the lost connection, so this leaves room for a loaded machine
const PROMPT_MS = 2500;

let redis: Awaited<ReturnType<typeof privateRedis>>;
let api: Awaited<ReturnType<typeof startApi>>;
let farm: Awaited<ReturnType<typeof startFarmWorker>> | undefined;
let author: Session;
let admin: Session;
let labId: string;
/** a run the first test finished, for the print order */
let finishedRunId = '';

beforeAll(async () => {
  redis = await privateRedis('redis-down-submit');
  api = await startApi('redisdown', faultEnv({ REDIS_URL: redis.url }));
  ({ author, labId } = await fundedAuthor(api, 'Outbox'));
  const a = await createUser(api, 'Outbox Site Admin', { isAdmin: true });
  admin = await signIn(api, a.email, TEST_PASSWORD);
}, 120_000);
afterAll(async () => {
  await farm?.close();
  await api?.close();
  await redis?.close();
});

const timed = async <T>(call: () => Promise<T>): Promise<{ value: T; ms: number }> => {
  const t0 = Date.now();
  const value = await call();
  return { value, ms: Date.now() - t0 };
};
const runOf = async (id: string): Promise<Run> => runResponseSchema.parse((await as(api.http.get(`/api/runs/${id}`), author).expect(200)).body).run;
const detail = (body: unknown): FigureDetail => {
  const parsed = figureResponseSchema.parse(body);
  if (parsed.withdrawn) throw new Error('figure withdrawn');
  return parsed.figure;
};
const spec = (chips: number) => ({ lattice: { preset: 'square' }, chips });
const outboxOf = async () => api.deps.db.select().from(jobOutbox).where(eq(jobOutbox.queuePrefix, api.queuePrefix));

/** Every compute job of this file's farm, in every state, by the run it is for. */
async function computeJobsByRun(): Promise<Map<string, number>> {
  const connection = new Redis(redis.url, { maxRetriesPerRequest: null });
  const byRun = new Map<string, number>();
  try {
    for (const name of QUEUES_OF_JOB[JOB_NAMES.computeRun]) {
      const q = new Queue(name, { connection, prefix: api.queuePrefix });
      for (const job of await q.getJobs(['waiting', 'active', 'delayed', 'completed', 'failed', 'prioritized'])) {
        const runId = (job.data as { runId: string }).runId;
        byRun.set(runId, (byRun.get(runId) ?? 0) + 1);
      }
      await q.close();
    }
  } finally {
    await connection.quit();
  }
  return byRun;
}

describe('submissions while Redis is down', () => {
  it('answer at once, keep the jobs in the outbox, and run each exactly once when Redis is back', { timeout: 180_000 }, async () => {
    await redis.stop();
    await until('the API to see Redis gone', async () => (await api.http.get('/api/health/ready')).status === 503, 10_000);

    const one = await timed(() => as(api.http.post('/api/runs'), author).send({ labId, title: 'submitted during an outage', spec: spec(30_000) }));
    expect(one.value.status, JSON.stringify(one.value.body)).toBe(201);
    expect(one.ms).toBeLessThan(PROMPT_MS);
    const run = runResponseSchema.parse(one.value.body).run;
    expect(run.status).toBe('queued');
    expect(run.stage).toBe(WAITING_FOR_QUEUE_STAGE);

    const series = await timed(() => as(api.http.post('/api/series'), author).send({ labId, title: 'outage series', spec: { lattice: { preset: 'square' } }, chips: [2_000, 4_000] }));
    expect(series.value.status, JSON.stringify(series.value.body)).toBe(201);
    expect(series.ms).toBeLessThan(PROMPT_MS);
    const seriesRuns = seriesResponseSchema.parse(series.value.body).series.runs;
    expect(seriesRuns).toHaveLength(2);

    const again = await timed(() => as(api.http.post(`/api/runs/${run.id}/rerun`), author).send({ title: 'the same, again' }));
    expect(again.value.status, JSON.stringify(again.value.body)).toBe(201);
    expect(again.ms).toBeLessThan(PROMPT_MS);
    const rerun = runResponseSchema.parse(again.value.body).run;

    // a run cancelled while its job waits in the outbox: the cancellation answers at once and no job is ever sent
    const doomed = runResponseSchema.parse((await as(api.http.post('/api/runs'), author).send({ labId, title: 'cancelled during the outage', spec: spec(5_000) }).expect(201)).body).run;
    const cancel = await timed(() => as(api.http.post(`/api/runs/${doomed.id}/cancel`), author).send({}));
    expect(cancel.value.status, JSON.stringify(cancel.value.body)).toBe(200);
    expect(cancel.ms).toBeLessThan(PROMPT_MS);

    const wanted = [run.id, ...seriesRuns.map((r) => r.id), rerun.id];
    const all = [...wanted, doomed.id];
    // everything is in PostgreSQL: the runs, one reservation each, one outbox row each
    const pending = await outboxOf();
    expect(pending.map((r) => r.jobId).sort()).toEqual(all.map((id) => `${JOB_NAMES.computeRun}--${id}`).sort());
    const reservations = await api.deps.db.select().from(ledgerEntries).where(and(inArray(ledgerEntries.runId, all), eq(ledgerEntries.kind, 'reservation')));
    expect(reservations.map((e) => e.runId).sort()).toEqual([...all].sort());

    // what needs Redis itself refuses at once with 503 and records nothing
    const suspend = await timed(() => as(api.http.post(`/api/admin/labs/${labId}/suspension`), admin).send({ reason: 'outage check' }));
    expect(suspend.value.status, JSON.stringify(suspend.value.body)).toBe(503);
    expect(suspend.value.body.error).toMatch(/job queue is not answering/);
    expect(suspend.ms).toBeLessThan(PROMPT_MS);
    const [lab] = await api.deps.db.select({ suspendedAt: labs.suspendedAt }).from(labs).where(eq(labs.id, labId));
    expect(lab!.suspendedAt).toBeNull();
    const farmPage = await timed(() => as(api.http.get('/api/admin/farm'), admin));
    expect(farmPage.value.status).toBe(503);
    expect(farmPage.value.headers['retry-after']).toBe('5');
    expect(farmPage.ms).toBeLessThan(PROMPT_MS);
    const retry = await timed(() => as(api.http.post(`/api/admin/farm/jobs/${QUEUE_NAMES.compute}/${JOB_NAMES.computeRun}--${run.id}/retry`), admin).send({}));
    expect(retry.value.status, JSON.stringify(retry.value.body)).toBe(503);
    expect(retry.ms).toBeLessThan(PROMPT_MS);

    // Redis back, and a worker: the dispatcher sends the kept jobs, each run computes and settles once
    await redis.start();
    farm = await startFarmWorker(api.env, { prefix: api.queuePrefix, threads: 1 });
    for (const id of wanted) {
      const done = await runSettled(api, author, id, 120_000);
      expect(done.status, done.error ?? '').toBe('finished');
    }
    expect((await runOf(doomed.id)).status).toBe('cancelled');
    expect(await outboxOf()).toEqual([]);
    const jobs = await computeJobsByRun();
    expect(Object.fromEntries(jobs)).toEqual(Object.fromEntries(wanted.map((id) => [id, 1])));
    const entries = await api.deps.db.select().from(ledgerEntries).where(inArray(ledgerEntries.runId, wanted));
    for (const id of wanted) {
      const kinds = entries.filter((e) => e.runId === id).map((e) => e.kind).sort();
      expect(kinds, `ledger of ${id}`).toEqual(['reservation', 'settlement']);
    }
    // on the infinite lattice no grain is lost (mass conservation); the engine's own certificate passed
    expect((await runOf(rerun.id)).stats).toMatchObject({ grainsIn: '30000', grainsOut: '30000', certificate: { passed: true } });
    finishedRunId = run.id;
    console.log(`redis down: ${wanted.length} runs answered in ≤ ${Math.max(one.ms, series.ms, again.ms)} ms, sent from the outbox after the restart, one job and one settlement each`);
  });

  it('a print order answers at once and is printed once Redis is back', { timeout: 120_000 }, async () => {
    expect(finishedRunId, 'the first test left a finished run').not.toBe('');
    const spec = { panels: [{ runId: finishedRunId, layer: 'heights' }], size: { kind: 'column', column: 'single' }, dpi: 150 };
    const created = await as(api.http.post('/api/figures'), author).send({ labId, title: 'printed after an outage', spec });
    expect(created.status, JSON.stringify(created.body)).toBe(201);
    const figure = detail(created.body);
    await redis.stop();
    await until('the API to see Redis gone', async () => (await api.http.get('/api/health/ready')).status === 503, 10_000);
    const order = await timed(() => as(api.http.post(`/api/figures/${figure.slug}/versions`), author).send({ formats: ['png'] }));
    expect(order.value.status, JSON.stringify(order.value.body)).toBe(202);
    expect(order.ms).toBeLessThan(PROMPT_MS);
    const version = figureVersionResponseSchema.parse(order.value.body).version;
    expect(version.status).toBe('queued');
    const [row] = await api.deps.db.select({ id: figureVersions.id }).from(figureVersions).where(and(eq(figureVersions.figureId, figure.id), eq(figureVersions.number, version.number)));
    expect((await outboxOf()).map((r) => r.jobId)).toEqual([`${JOB_NAMES.printFigure}--${row!.id}`]);

    await redis.start();
    const ready = await until('the version to be printed', async () => {
      const v = detail((await as(api.http.get(`/api/figures/${figure.slug}`), author).expect(200)).body).versions.find((x) => x.number === version.number);
      if (v?.status === 'failed') throw new Error(`print failed: ${v.error}`);
      return v?.status === 'ready' ? v : null;
    }, 90_000, 200);
    expect(ready.files.map((f) => f.format)).toEqual(['png']);
    expect(await outboxOf()).toEqual([]);
    const connection = new Redis(redis.url, { maxRetriesPerRequest: null });
    try {
      const q = new Queue(QUEUE_NAMES.print, { connection, prefix: api.queuePrefix });
      expect((await q.getJobs(['waiting', 'active', 'delayed', 'completed', 'failed'])).map((j) => j.id)).toEqual([`${JOB_NAMES.printFigure}--${row!.id}`]);
      await q.close();
    } finally {
      await connection.quit();
    }
  });
});
