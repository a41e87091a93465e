/**
 * A run whose workers keep dying is given up, not left "computing" for ever: once BullMQ's
 * stalled-job check finds it stalled more than maxStalledCount times, the next worker to take the job
 * fails it without computing, and marks the run failed with the reason, gives its credits back and
 * deletes its checkpoint.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import { ledgerEntries } from '../../drizzle/schema.js';
import { runResponseSchema } from '../../shared/api/runs.js';
import { checkpointKey } from '../../renderer/src/farm/artifacts.js';
import { startFarmWorker } from '../../renderer/src/farm/farm-worker.js';
import { as, createLab, createUser, runSettled, signIn, startHarness, TEST_PASSWORD, type Harness } from '../api/support/harness.js';
import { startWorkerProcess, type WorkerProcess } from './worker-process.js';

let h: Harness;
let doomed: WorkerProcess | null = null;
let watcher: Awaited<ReturnType<typeof startFarmWorker>> | null = null;

beforeAll(async () => {
  h = await startHarness('given-up');
});
afterAll(async () => {
  await doomed?.kill();
  await watcher?.close();
  await h?.close();
});

describe('a run whose workers keep dying', () => {
  it('is failed with the reason and its credits released once BullMQ gives its job up', { timeout: 120_000 }, async () => {
    const a = await createUser(h, 'Unlucky Author');
    const labId = await createLab(h, 'Unlucky Lab', [{ userId: a.id, role: 'author' }]);
    const author = await signIn(h, a.email, TEST_PASSWORD);
    doomed = startWorkerProcess({ BULLMQ_PREFIX: h.queuePrefix, WORKER_CHECKPOINT_SECONDS: '0.3', WORKER_LOCK_SECONDS: '2' });
    await doomed.waitFor(/renderer worker ready/);
    const res = await as(h.http.post('/api/runs'), author).send({ labId, title: 'Keeps dying', spec: { lattice: { preset: 'square' }, chips: 1_000_000 } });
    expect(res.status).toBe(201);
    const run = runResponseSchema.parse(res.body).run;
    await doomed.waitFor(/checkpoint \d+ stored/, 60_000);
    await doomed.kill();

    // a worker that allows no re-delivery: its first stalled-job check dooms the job, and taking it fails it
    watcher = await startFarmWorker(h.env, { prefix: h.queuePrefix, lockSeconds: 2, maxStalledCount: 0, log: () => {} });
    const done = await runSettled(h, author, run.id, 60_000);
    expect(done.status).toBe('failed');
    expect(done.error).toMatch(/every farm worker that took this run stopped before it finished/);
    // nothing charged: the reservation is released (the ledger rules of api/src/billing/README.md)
    const kinds = async () => (await h.deps.db.select({ kind: ledgerEntries.kind }).from(ledgerEntries).where(eq(ledgerEntries.runId, run.id))).map((e) => e.kind).sort();
    await expect.poll(kinds, { timeout: 10_000 }).toEqual(['release', 'reservation']);
    await expect.poll(() => h.deps.blobs.exists(checkpointKey(run.id)), { timeout: 10_000 }).toBe(false);
  });
});
