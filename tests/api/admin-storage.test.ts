import { eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runs } from '../../drizzle/schema.js';
import { adminStorageResponseSchema, adminUsageResponseSchema, RETENTION_RULE } from '../../shared/api/admin.js';
import { runSpecSchema } from '../../shared/run-spec.js';
import { sweepRetention } from '../../api/src/services/admin-retention.js';
import { recordRunUsage, runPrefix } from '../../api/src/storage/run-usage.js';
import { startFarmWorker } from '../../renderer/src/farm/farm-worker.js';
import { as, createLab, createUser, runSettled, signIn, startHarness, TEST_PASSWORD, type Harness, type Session } from './support/harness.js';

/**
 * The admin's storage report reads each run's stored size from its row (runs.stored_bytes and
 * stored_objects), written by whoever writes or deletes under runs/<id>/. Checked against a real
 * listing of the S3 fake: after a run the real farm worker computed and drew, after the retention
 * sweep deleted its artifacts, and for a row from before the columns (null: listed once, then kept).
 * Every assertion is scoped to this file's lab; the report itself covers every lab.
 */

const DAY = 86400_000;
let h: Harness;
let admin: Session;
let author: Session;
let authorId: string;
let labId: string;
let farm: Awaited<ReturnType<typeof startFarmWorker>>;

const listing = (runId: string) => h.deps.blobs.usage(runPrefix(runId));
const rowOf = async (runId: string) => (await h.deps.db.select().from(runs).where(eq(runs.id, runId)))[0]!;
const sizeInRow = async (runId: string) => {
  const r = await rowOf(runId);
  return { bytes: r.storedBytes, objects: r.storedObjects };
};
async function report() {
  const res = await as(h.http.get('/api/admin/storage'), admin);
  expect(res.status).toBe(200);
  return adminStorageResponseSchema.parse(res.body).labs.find((l) => l.labId === labId)!;
}
async function usageBytes() {
  const res = await as(h.http.get('/api/admin/usage?months=1'), admin);
  expect(res.status).toBe(200);
  return adminUsageResponseSchema.parse(res.body).labs.find((l) => l.labId === labId)!.storageBytes;
}

beforeAll(async () => {
  h = await startHarness('admin-storage');
  const a = await createUser(h, 'Storage Admin', { isAdmin: true });
  const w = await createUser(h, 'Storage Author');
  authorId = w.id;
  labId = await createLab(h, `Storage Lab ${h.tag}`, [{ userId: w.id, role: 'manager' }]);
  admin = await signIn(h, a.email, TEST_PASSWORD);
  author = await signIn(h, w.email, TEST_PASSWORD);
  farm = await startFarmWorker(h.env, { prefix: h.queuePrefix, threads: 1 });
}, 60_000);
afterAll(async () => {
  await farm?.close();
  await h?.close();
});

describe('stored sizes in the database', () => {
  let real: string;

  it('a run computed and drawn by the real worker: its row holds what a listing of runs/<id>/ finds, and the report says the same', { timeout: 120_000 }, async () => {
    const res = await as(h.http.post('/api/runs'), author).send({ labId, title: 'Measured pile', spec: { lattice: { preset: 'square' }, chips: 2000 } }).expect(201);
    real = res.body.run.id;
    const settled = await runSettled(h, author, real, 90_000);
    expect(settled.status).toBe('finished');

    const listed = await listing(real);
    // the arrays (heights, odometer, run.json) and the default views' pyramids; the checkpoint is gone
    expect(listed.objects).toBeGreaterThan(3);
    expect(await h.deps.blobs.exists(`${runPrefix(real)}checkpoint/state.twckpt`)).toBe(false);
    expect(await sizeInRow(real)).toEqual(listed);

    const lab = await report();
    expect(lab.runs.find((r) => r.runId === real)).toMatchObject({ bytes: listed.bytes, objects: listed.objects, published: false, artifactsExpiredAt: null });
    expect(lab.bytes).toBe(listed.bytes);
    expect(lab.unpublishedBytes).toBe(listed.bytes);
    expect(await usageBytes()).toBe(listed.bytes);
  });

  it('answers from the rows: an object put behind the writers\' backs shows only once a writer records the run again', async () => {
    const before = await listing(real);
    const stray = `${runPrefix(real)}stray.bin`;
    await h.deps.blobs.put(stray, Buffer.alloc(777, 7), 'application/octet-stream');
    try {
      // the report did not list the prefix: it still says what the row says
      expect((await report()).runs.find((r) => r.runId === real)).toMatchObject({ bytes: before.bytes, objects: before.objects });
      // what every writer calls after writing or deleting under runs/<id>/
      expect(await recordRunUsage(h.deps.db, h.deps.blobs, real)).toEqual({ bytes: before.bytes + 777, objects: before.objects + 1 });
      expect((await report()).runs.find((r) => r.runId === real)).toMatchObject({ bytes: before.bytes + 777, objects: before.objects + 1 });
    } finally {
      await h.deps.blobs.delete(stray);
      await recordRunUsage(h.deps.db, h.deps.blobs, real);
    }
    expect(await sizeInRow(real)).toEqual(before);
  });

  it('retention deletes the real run\'s artifacts: its row says nothing is stored, as the listing does', async () => {
    // the run ended past its retention period; the first sweep mails, the one noticeDays later deletes
    const longAgo = new Date(Date.now() - (RETENTION_RULE.keepDays + 1) * DAY);
    await h.deps.db.update(runs).set({ finishedAt: longAgo }).where(eq(runs.id, real));
    const deps = { db: h.deps.db, env: h.env, mailer: h.deps.mailer, blobs: h.deps.blobs };
    const now = new Date();
    expect((await sweepRetention(deps, { now, labIds: [labId] })).noticed).toHaveLength(1);
    // a day past the removal date the notice set (noticeDays after it was mailed)
    const later = new Date(now.getTime() + (RETENTION_RULE.noticeDays + 1) * DAY);
    const held = await sizeInRow(real);
    const swept = await sweepRetention(deps, { now: later, labIds: [labId] });
    // the sweep's record of what went is the row's figure from before
    expect(swept.expired).toEqual([{ runId: real, labId, bytes: held.bytes, objects: held.objects, prints: 0 }]);

    expect(await listing(real)).toEqual({ bytes: 0, objects: 0 });
    expect(await sizeInRow(real)).toEqual({ bytes: 0, objects: 0 });
    const lab = await report();
    expect(lab.runs.find((r) => r.runId === real)).toMatchObject({ bytes: 0, objects: 0, expiresAt: null, artifactsExpiredAt: expect.any(String) });
    expect(lab.bytes).toBe(0);
    expect(await usageBytes()).toBe(0);
  });

  it('a row from before the size columns (null) is listed once by the report, filled in, and read from the row after', async () => {
    const [legacy] = await h.deps.db
      .insert(runs)
      .values({ labId, authorId, title: 'stored before sizes were kept', spec: runSpecSchema.parse({ lattice: { preset: 'square' }, chips: 5 }), status: 'finished', finishedAt: new Date() })
      .returning();
    expect(await sizeInRow(legacy!.id)).toEqual({ bytes: null, objects: null });
    await h.deps.blobs.put(`${runPrefix(legacy!.id)}arrays/heights.npy`, Buffer.alloc(1500, 1), 'application/octet-stream');
    await h.deps.blobs.put(`${runPrefix(legacy!.id)}heights/tidewater/iiif/info.json`, '{"sizes":[]}', 'application/json');
    const listed = await listing(legacy!.id);
    expect(listed).toEqual({ bytes: 1512, objects: 2 });

    const lab = await report();
    expect(lab.runs.find((r) => r.runId === legacy!.id)).toMatchObject({ bytes: 1512, objects: 2 });
    expect(await sizeInRow(legacy!.id)).toEqual(listed);
    expect(lab.bytes).toBe(1512);

    // filled once: an object added behind the writers' backs is not listed again
    await h.deps.blobs.put(`${runPrefix(legacy!.id)}stray.bin`, Buffer.alloc(10), 'application/octet-stream');
    expect((await report()).runs.find((r) => r.runId === legacy!.id)).toMatchObject({ bytes: 1512, objects: 2 });
    expect(await usageBytes()).toBe(1512);
  });

  it('two writers record in the order they listed: a late listing of a worker that lost its job cannot replace a newer figure', async () => {
    const [row] = await h.deps.db
      .insert(runs)
      .values({ labId, authorId, title: 'written by two workers', spec: runSpecSchema.parse({ lattice: { preset: 'square' }, chips: 5 }), storedBytes: 0, storedObjects: 0 })
      .returning();
    const id = row!.id;
    await h.deps.blobs.put(`${runPrefix(id)}checkpoint/state.twckpt`, Buffer.alloc(100), 'application/octet-stream');
    // the first writer's listing is slow to come back (the real store, answered late)
    let answer!: () => void;
    const late = new Promise<void>((resolve) => (answer = resolve));
    let listed!: () => void;
    const listedOnce = new Promise<void>((resolve) => (listed = resolve));
    const slow = Object.create(h.deps.blobs) as typeof h.deps.blobs;
    slow.usage = async (prefix) => {
      const size = await h.deps.blobs.usage(prefix);
      listed();
      await late;
      return size;
    };
    const first = recordRunUsage(h.deps.db, slow, id);
    await listedOnce;
    // meanwhile the second writer stores the arrays and records: it waits for the first to finish
    await h.deps.blobs.put(`${runPrefix(id)}arrays/heights.npy`, Buffer.alloc(2000), 'application/octet-stream');
    const second = recordRunUsage(h.deps.db, h.deps.blobs, id);
    await new Promise((resolve) => setTimeout(resolve, 300));
    answer();
    expect(await first).toEqual({ bytes: 100, objects: 1 });
    expect(await second).toEqual({ bytes: 2100, objects: 2 });
    expect(await sizeInRow(id)).toEqual({ bytes: 2100, objects: 2 });
  });

  it('a new run is never of unknown size: the API writes zero, the worker its listings', { timeout: 90_000 }, async () => {
    const res = await as(h.http.post('/api/runs'), author).send({ labId, title: 'Fresh pile', spec: { lattice: { preset: 'square' }, chips: 10 } }).expect(201);
    const id: string = res.body.run.id;
    // zero as the API stored it, or already what the worker listed: never null, so never listed by the report
    expect((await sizeInRow(id)).bytes).not.toBeNull();
    const done = await runSettled(h, author, id, 60_000);
    expect(done.status).toBe('finished');
    expect(await sizeInRow(id)).toEqual(await listing(id));
  });
});
