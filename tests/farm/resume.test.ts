/**
 * A renderer worker killed (SIGKILL) in the middle of a computation loses no finished work: a new
 * worker takes the job up once the lock of the dead one runs out, resumes from the checkpoint in
 * the object store; stopped with SIGTERM, that worker hands the job straight back, and a third one
 * resumes it again and stores the same arrays as an uninterrupted run; the lab is charged once.
 * Both paths of the engine: the seeded fast path and the plain tiled engine (two sources).
 */
import { createHash } from 'node:crypto';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { Queue } from 'bullmq';
import { Redis } from 'ioredis';
import { eq } from 'drizzle-orm';
import { ledgerEntries, runs } from '../../drizzle/schema.js';
import type { Run } from '../../shared/api/runs.js';
import { JOB_NAMES, jobIdFor, queueOf, type JobItem } from '../../shared/jobs.js';
import { readNpy } from '../../renderer/src/npy/index.js';
import { arrayKeys, checkpointKey } from '../../renderer/src/farm/artifacts.js';
import { decodeSnapshot, resolveProblem, stabilize } from '../../renderer/src/engine/index.js';
import { arrayHash, heightsForExport, odometerForExport } from '../../renderer/src/cli/export-arrays.js';
import { authorOfNewLab, runSettled, startHarness, submitRun, type Harness, type Session } from '../api/support/harness.js';
import { startWorkerProcess, type WorkerProcess } from './worker-process.js';

let h: Harness;
let author: Session;
let labId: string;
let redis: Redis;
const workers: WorkerProcess[] = [];

/** short lock and checkpoint period so the test takes seconds; production defaults are 30 s and 60 s */
const workerEnv = () => ({ BULLMQ_PREFIX: h.queuePrefix, WORKER_CHECKPOINT_SECONDS: '0.3', WORKER_LOCK_SECONDS: '2', WORKER_THREADS: '1' });

beforeAll(async () => {
  h = await startHarness('resume');
  ({ labId, session: author } = await authorOfNewLab(h, 'Resume'));
  redis = new Redis(h.env.REDIS_URL, { maxRetriesPerRequest: null });
});
afterAll(async () => {
  for (const w of workers) await w.kill();
  await redis?.quit();
  await h?.close();
});

const submit = (title: string, spec: unknown): Promise<Run> => submitRun(h, author, labId, title, spec);

/** the checkpoint in the store, read with the engine's own reader; null while there is none */
async function storedCheckpoint(runId: string) {
  const bytes = await h.deps.blobs.get(checkpointKey(runId));
  return bytes ? decodeSnapshot(new Uint8Array(bytes)) : null;
}
async function storedCheckpointLevel(runId: string): Promise<number | null> {
  const s = await storedCheckpoint(runId);
  return s?.kind === 'seeded' ? s.level : null;
}

const sha256 = (b: Uint8Array) => createHash('sha256').update(b).digest('hex');

/** a plain-engine checkpoint of one run, kept for the next test to plant under another run */
let foreignCheckpoint: Buffer | null = null;

/** The stored arrays equal those of an uninterrupted in-process run of the same spec (sha256 of heights and odometer). */
async function expectUninterruptedArrays(runId: string, spec: Run['spec']) {
  const keys = arrayKeys(runId);
  const sidecar = JSON.parse((await h.deps.blobs.get(keys.sidecar))!.toString('utf8'));
  const heightsNpy = readNpy(new Uint8Array((await h.deps.blobs.get(keys.heights))!));
  const odometerNpy = readNpy(new Uint8Array((await h.deps.blobs.get(keys.odometer))!));
  const straight = await stabilize(resolveProblem(spec));
  const heights = heightsForExport(straight.heights);
  const odometer = odometerForExport(straight.odometer, 'int64');
  expect(heightsNpy.shape).toEqual(straight.shape);
  expect(sha256(new Uint8Array(heightsNpy.data.buffer, heightsNpy.data.byteOffset, heightsNpy.data.byteLength))).toBe(arrayHash(heights));
  expect(sha256(new Uint8Array(odometerNpy.data.buffer, odometerNpy.data.byteOffset, odometerNpy.data.byteLength))).toBe(arrayHash(odometer));
  expect(sidecar.heights.sha256).toBe(arrayHash(heights));
  expect(sidecar.odometer.sha256).toBe(arrayHash(odometer));
  return { straight, heightsNpy };
}

/** Charged exactly once: one reservation at submission, one settlement at the end, no release. */
async function expectChargedOnce(runId: string) {
  const entries = await h.deps.db.select({ kind: ledgerEntries.kind }).from(ledgerEntries).where(eq(ledgerEntries.runId, runId));
  expect(entries.map((e) => e.kind).sort()).toEqual(['reservation', 'settlement']);
}

describe('a worker killed mid-run', () => {
  it('hands the run to a new worker, which resumes from the checkpoint (and hands it back on SIGTERM), and the arrays are those of an uninterrupted run, charged once', { timeout: 150_000 }, async () => {
    // folded onto an eighth of the plane, 10^6 finishes in under a second: too soon to kill it midway
    const spec = { lattice: { preset: 'square' }, chips: 10_000_000 } as const;
    const t0 = Date.now();
    const phases: string[] = [];
    const phase = (what: string) => phases.push(`${what} ${((Date.now() - t0) / 1000).toFixed(1)} s`);
    const first = startWorkerProcess(workerEnv());
    workers.push(first);
    await first.waitFor(/renderer worker ready/);
    const run = await submit('Killed midway', spec);

    // kill it as soon as a checkpoint of the finest level (where nearly all the work is) is stored
    await first.waitFor(/checkpoint \d+ stored \(level 0,/, 60_000);
    await first.kill();
    phase('killed');
    expect(first.child.signalCode).toBe('SIGKILL');
    // the store holds that checkpoint, readable by the engine's own reader
    expect(await storedCheckpointLevel(run.id)).toBe(0);

    // really interrupted: no arrays yet, the run still computing in PostgreSQL
    expect(await h.deps.blobs.exists(arrayKeys(run.id).sidecar)).toBe(false);
    const [mid] = await h.deps.db.select({ status: runs.status }).from(runs).where(eq(runs.id, run.id));
    expect(mid!.status).toBe('computing');

    // two fresh workers (started together to save a start-up): one takes the job once the dead one's
    // lock runs out, and resumes it
    const fresh = [startWorkerProcess(workerEnv()), startWorkerProcess(workerEnv())];
    workers.push(...fresh);
    const resuming = new RegExp(`run ${run.id}: resuming from its checkpoint .*level 0`);
    const deadline = Date.now() + 60_000;
    let second: WorkerProcess | undefined;
    while (!(second = fresh.find((w) => resuming.test(w.output())))) {
      if (Date.now() > deadline) throw new Error(`no worker resumed the run:\n${fresh.map((w) => w.output()).join('\n---\n')}`);
      await new Promise((r) => setTimeout(r, 50));
    }
    const third = fresh.find((w) => w !== second)!;
    phase('resumed by the second worker');
    // stopped politely at once (SIGTERM, as systemd stops a unit): it hands the job straight back
    second.child.kill('SIGTERM');
    const stopped = await second.exited;
    expect(stopped.code, second.output()).toBe(0);
    expect(second.output()).toMatch(new RegExp(`run ${run.id}: the worker is stopping: back to the queue`));
    phase('second worker stopped');
    const [handedBack] = await h.deps.db.select({ status: runs.status, stage: runs.stage }).from(runs).where(eq(runs.id, run.id));
    // (the other worker may have taken it up already)
    expect(handedBack!.status).toBe('computing');

    const done = await runSettled(h, author, run.id, 90_000);
    expect(done.status, `${done.error}\n${third.output()}`).toBe('finished');
    phase('finished by the third worker');

    // the logs say it resumed, twice: the workers' output and the job's own BullMQ log
    expect(third.output()).toMatch(new RegExp(`run ${run.id}: resuming from its checkpoint .*level 0`));
    const item: JobItem = { name: JOB_NAMES.computeRun, data: { runId: run.id, spec: done.spec } };
    const queue = new Queue(queueOf(item), { connection: redis, prefix: h.queuePrefix });
    const { logs } = await queue.getJobLogs(jobIdFor(item));
    await queue.close();
    expect(logs.some((l) => /checkpoint \d+ stored/.test(l))).toBe(true);
    // at least twice (a loaded machine can make a worker miss a 2 s lock renewal: BullMQ then hands
    // the job out once more, and it resumes again, which changes nothing in the result)
    expect(logs.filter((l) => /resuming from its checkpoint/.test(l)).length, logs.join('\n')).toBeGreaterThanOrEqual(2);
    expect(logs.some((l) => /back to the queue/.test(l))).toBe(true);
    expect(logs.some((l) => /arrays stored/.test(l))).toBe(true);

    // the checkpoint is gone once the arrays are stored
    expect(await h.deps.blobs.exists(checkpointKey(run.id))).toBe(false);

    // the stored arrays are those of an uninterrupted run of the same spec (computed here, in-process)
    const { straight, heightsNpy } = await expectUninterruptedArrays(run.id, done.spec);
    phase('uninterrupted reference computed');
    expect(done.stats!.totalTopplings).toBe(straight.stats.totalTopplings.toString());
    // grains are conserved on the infinite lattice (common practice: a toppling moves grains, never loses them)
    let grains = 0;
    for (let i = 0; i < heightsNpy.data.length; i++) grains += Number(heightsNpy.data[i]!);
    expect(grains).toBe(spec.chips);
    await expectChargedOnce(run.id);
    console.info(`kill and resume: ${phases.join(', ')}`);
  });

  it('resumes a run of the plain tiled engine (two sources) from its checkpoint to the arrays of an uninterrupted run, charged once', { timeout: 60_000 }, async () => {
    // two sources: the fast path does not apply, the plain engine computes it (about 3 s on one thread)
    const spec = { lattice: { preset: 'square' }, chips: 50_000, sources: [{ at: [60, 0], chips: 25_000 }] } as const;
    // workers left from the test above would take the job: this one must be the first to compute it
    for (const w of workers.splice(0)) await w.kill();
    const first = startWorkerProcess(workerEnv());
    workers.push(first);
    await first.waitFor(/renderer worker ready/);
    const run = await submit('Plain engine killed midway', spec);
    await first.waitFor(new RegExp(`run ${run.id}: checkpoint \\d+ stored \\(tiled state, plain engine or line path,`), 30_000);
    await first.kill();
    expect(first.child.signalCode).toBe('SIGKILL');

    // the store holds a snapshot of the plain engine, midway: some topplings done
    const snap = await storedCheckpoint(run.id);
    foreignCheckpoint = await h.deps.blobs.get(checkpointKey(run.id));
    expect(snap?.kind).toBe('tiled');
    expect(snap?.kind === 'tiled' && snap.od.some((u) => u > 0)).toBe(true);
    expect(await h.deps.blobs.exists(arrayKeys(run.id).sidecar)).toBe(false);
    const [mid] = await h.deps.db.select({ status: runs.status }).from(runs).where(eq(runs.id, run.id));
    expect(mid!.status).toBe('computing');

    const second = startWorkerProcess(workerEnv());
    workers.push(second);
    const done = await runSettled(h, author, run.id, 45_000);
    expect(done.status, `${done.error}\n${second.output()}`).toBe('finished');
    expect(second.output()).toMatch(new RegExp(`run ${run.id}: resuming from its checkpoint .*\\(tiled state, plain engine or line path,`));
    expect(await h.deps.blobs.exists(checkpointKey(run.id))).toBe(false);

    const { straight } = await expectUninterruptedArrays(run.id, done.spec);
    expect(done.stats!.totalTopplings).toBe(straight.stats.totalTopplings.toString());
    expect(done.stats!.grainsIn).toBe('75000');
    await expectChargedOnce(run.id);
  });

  it('refuses a checkpoint of another run found under its key, starts over and stores the right arrays', { timeout: 60_000 }, async () => {
    expect(foreignCheckpoint, 'the test above keeps a checkpoint').not.toBeNull();
    for (const w of workers.splice(0)) await w.kill();
    // no worker runs: the job waits while a checkpoint of another specification is planted under its key
    const spec = { lattice: { preset: 'square' }, chips: 20_000, sources: [{ at: [40, 0], chips: 10_000 }] } as const;
    const run = await submit('Foreign checkpoint', spec);
    await h.deps.blobs.put(checkpointKey(run.id), foreignCheckpoint!, 'application/octet-stream');
    const worker = startWorkerProcess(workerEnv());
    workers.push(worker);
    const done = await runSettled(h, author, run.id, 45_000);
    expect(done.status, `${done.error}\n${worker.output()}`).toBe('finished');
    expect(worker.output()).toMatch(new RegExp(`run ${run.id}: the checkpoint was refused \\(the checkpoint belongs to a different run specification\\); starting from the beginning`));
    expect(await h.deps.blobs.exists(checkpointKey(run.id))).toBe(false);
    await expectUninterruptedArrays(run.id, done.spec);
    await expectChargedOnce(run.id);
  });
});
