import { and, eq } from 'drizzle-orm';
import { Queue, QueueEvents } from 'bullmq';
import { Redis } from 'ioredis';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { auditEvents, figureVersions, figures, runs } from '../../drizzle/schema.js';
import { RETENTION_RULE } from '../../shared/api/admin.js';
import { runResponseSchema } from '../../shared/api/runs.js';
import { QUEUE_NAMES } from '../../shared/jobs.js';
import { figureSpecSchema } from '../../shared/print-spec.js';
import { connectDatabase } from '../../api/src/db/client.js';
import { clearExpiredRun, removalDateOf, sweepRetention, type RetentionDeps } from '../../api/src/services/admin-retention.js';
import { createFarmHealth } from '../../api/src/queue/farm-health.js';
import { startRetentionSweep } from '../../renderer/src/farm/retention-sweep.js';
import { finishedRun, markReady } from './figures-fixtures.js';
import { printThumbnailKey } from '../../renderer/src/farm/artifacts.js';
import { as, createLab, createUser, signIn, startHarness, TEST_PASSWORD, type Harness, type Session } from './support/harness.js';
import { mailsTo, waitForMail } from './support/outbox.js';

/**
 * The retention sweep against the real PostgreSQL, S3 fake and SMTP fake. The rule under test is the
 * product's own (issue 8: "a retention rule for unpublished artifacts (what is kept, for how long,
 * and what happens at the end — mail the lab first)", RETENTION_RULE in shared/api/admin.ts).
 * Every sweep here is limited to this file's labs, so other test files' fixtures are never touched.
 */

const DAY = 86400_000;
let h: Harness;
let deps: RetentionDeps;
let manager: { id: string; email: string };
let author: { id: string; email: string };
let s: Session;
let labId: string;

/** A finished run that ended `daysAgo` days ago, with arrays and a tile in the store. */
async function oldRun(title: string, daysAgo: number): Promise<string> {
  const id = await finishedRun(h, labId, author.id, title);
  await h.deps.db.update(runs).set({ finishedAt: new Date(Date.now() - daysAgo * DAY) }).where(eq(runs.id, id));
  await h.deps.blobs.put(`runs/${id}/arrays/heights.npy`, Buffer.alloc(500, 1), 'application/octet-stream');
  await h.deps.blobs.put(`runs/${id}/arrays/run.json`, '{}', 'application/json');
  await h.deps.blobs.put(`runs/${id}/heights/tidewater/iiif/info.json`, '{"tiles":[]}', 'application/json');
  await h.deps.blobs.put(`runs/${id}/heights/tidewater/iiif/0,0,7,7/7,/0/default.png`, Buffer.alloc(64, 2), 'image/png');
  return id;
}

async function figureOf(slug: string, runIds: string[], state: 'draft' | 'published' | 'withdrawn'): Promise<string> {
  const spec = figureSpecSchema.parse({ panels: runIds.map((runId) => ({ runId })), grid: { rows: 1, cols: runIds.length }, size: { kind: 'column', column: 'full' } });
  const [f] = await h.deps.db
    .insert(figures)
    .values({ slug: `${slug}-${h.tag}`, title: slug, runId: runIds[0]!, createdById: author.id, spec, publishedAt: state === 'draft' ? null : new Date(), withdrawnAt: state === 'withdrawn' ? new Date() : null })
    .returning();
  await h.deps.db.insert(figureVersions).values({ figureId: f!.id, number: 1, spec, formats: ['png'] });
  await markReady(h, f!.id, 1);
  return f!.id;
}

const stored = async (runId: string) => (await h.deps.blobs.usage(`runs/${runId}/`)).objects;
const eventsOf = (runId: string, action: string) => h.deps.db.select().from(auditEvents).where(and(eq(auditEvents.subjectId, runId), eq(auditEvents.action, action)));
const rowOf = async (runId: string) => (await h.deps.db.select().from(runs).where(eq(runs.id, runId)))[0]!;
const sweep = (now: Date) => sweepRetention(deps, { now, labIds: [labId] });

beforeAll(async () => {
  h = await startHarness('admin-retention');
  deps = { db: h.deps.db, env: h.env, mailer: h.deps.mailer, blobs: h.deps.blobs };
  manager = await createUser(h, 'Keeper Manager');
  author = await createUser(h, 'Keeper Author');
  labId = await createLab(h, `Retention Lab ${h.tag}`, [
    { userId: manager.id, role: 'manager' },
    { userId: author.id, role: 'author' },
  ]);
  s = await signIn(h, author.email, TEST_PASSWORD);
});
afterAll(async () => {
  await h?.close();
});

describe('the retention sweep', () => {
  let gone: string;
  let panel: string;
  let withdrawn: string;
  let recent: string;
  let draftFigure: string;
  let draftPrintKey: string;

  it('mails the lab first about an unpublished run past its end, and deletes nothing yet', async () => {
    // past its end with no notice ever mailed (say the sweep was off): mailed now, deleted noticeDays later
    gone = await oldRun('past its end', RETENTION_RULE.keepDays + 3);
    // kept: the second panel of a published figure, and the run of a withdrawn one (it may come back)
    panel = await oldRun('second panel', RETENTION_RULE.keepDays + 3);
    const lead = await oldRun('lead panel', RETENTION_RULE.keepDays + 3);
    await figureOf('kept-by-panel', [lead, panel], 'published');
    withdrawn = await oldRun('withdrawn figure', RETENTION_RULE.keepDays + 3);
    await figureOf('withdrawn', [withdrawn], 'withdrawn');
    recent = await oldRun('recent', 10);
    draftFigure = await figureOf('draft', [gone], 'draft');
    draftPrintKey = (await h.deps.db.select().from(figureVersions).where(eq(figureVersions.figureId, draftFigure)))[0]!.files[0]!.key;
    // the page thumbnail the print job stores beside the files
    await h.deps.blobs.put(printThumbnailKey(draftFigure, 1), Buffer.from('page thumbnail'), 'image/jpeg');

    const now = new Date();
    const first = await sweep(now);
    expect(first.noticed).toEqual([{ labId, runs: 1, mailedTo: [manager.email] }]);
    expect(first.expired).toEqual([]);
    const mail = await waitForMail(h.env, manager.email, /unpublished run/);
    expect(mail.text).toContain('past its end');
    expect(mail.text).not.toContain('second panel');
    // the mail names the day it really goes: noticeDays after the notice, since the end has passed
    expect(mail.text).toContain(new Date(now.getTime() + RETENTION_RULE.noticeDays * DAY).toISOString().slice(0, 10));
    const [notice] = await eventsOf(gone, 'retention.notice');
    expect(notice).toMatchObject({ actorId: null, labId, subjectType: 'run' });
    for (const id of [gone, panel, withdrawn, recent]) expect(await stored(id)).toBe(4);

    // a second sweep the same day mails nobody again
    const again = await sweep(new Date(now.getTime() + 60_000));
    expect(again).toEqual({ noticed: [], expired: [], finished: [] });
    expect((await mailsTo(h.env, manager.email)).filter((m) => /unpublished run/.test(m.subject))).toHaveLength(1);
  });

  it('deletes the arrays, tiles and draft prints noticeDays after the notice, marks the run and records it', async () => {
    const [notice] = await eventsOf(gone, 'retention.notice');
    const endOfRun = new Date((await rowOf(gone)).finishedAt!.getTime() + RETENTION_RULE.keepDays * DAY);
    const due = removalDateOf(endOfRun, notice!.at)!;
    // one second early: still there
    expect((await sweep(new Date(due.getTime() - 1000))).expired).toEqual([]);
    expect(await stored(gone)).toBe(4);

    const done = await sweep(due);
    expect(done.expired).toEqual([{ runId: gone, labId, bytes: expect.any(Number), objects: 4, prints: 1 }]);
    expect(await stored(gone)).toBe(0);
    expect(await h.deps.blobs.exists(draftPrintKey)).toBe(false);
    expect(await h.deps.blobs.exists(printThumbnailKey(draftFigure, 1))).toBe(false);
    // published sources, a withdrawn figure's run and a recent run are untouched
    for (const id of [panel, withdrawn, recent]) expect(await stored(id)).toBe(4);
    const row = await rowOf(gone);
    expect(row.artifactsExpiredAt).not.toBeNull();
    expect(row.artifactsClearedAt).not.toBeNull();
    // the stored size the storage report reads agrees with a listing: nothing left
    expect({ bytes: row.storedBytes, objects: row.storedObjects }).toEqual(await h.deps.blobs.usage(`runs/${gone}/`));
    expect(row.storedObjects).toBe(0);
    // the run itself, its statistics and spec stay
    expect(row.status).toBe('finished');
    expect(row.stats).not.toBeNull();
    const [event] = await eventsOf(gone, 'retention.expire');
    expect(event).toMatchObject({ actorId: null, labId, subjectType: 'run' });
    expect(event!.reason).toMatch(/unpublished 180 days after it ended; the lab was mailed on \d{4}-\d{2}-\d{2}/);
    expect(event!.detail).toMatchObject({ objects: 4, noticeMailedAt: notice!.at.toISOString() });
    const [version] = await h.deps.db.select().from(figureVersions).where(eq(figureVersions.figureId, draftFigure));
    expect(version).toMatchObject({ status: 'failed', error: expect.stringContaining('retention period') });

    // idempotent: the next sweep finds nothing to do
    expect(await sweep(new Date(due.getTime() + DAY))).toEqual({ noticed: [], expired: [], finished: [] });
    expect(await eventsOf(gone, 'retention.expire')).toHaveLength(1);
  });

  it('shows the run as expired — not a 500 or a broken viewer — and refuses to build figures on it', async () => {
    const res = await as(h.http.get(`/api/runs/${gone}`), s);
    expect(res.status).toBe(200);
    expect(runResponseSchema.parse(res.body).run.artifactsExpiredAt).not.toBeNull();
    const tile = await as(h.http.get(`/api/runs/${gone}/views/heights/tidewater/iiif/info.json`), s);
    expect(tile.status).toBe(410);
    expect(tile.body.error).toMatch(/^expired — artifacts removed/);
    const array = await as(h.http.get(`/api/runs/${gone}/arrays/heights.npy`), s);
    expect(array.status).toBe(410);
    // strangers still get the same 404 as for any run they may not see
    expect((await h.http.get(`/api/runs/${gone}/arrays/heights.npy`)).status).toBe(404);

    const compose = await as(h.http.post('/api/figures'), s).send({ labId, title: 'from an expired run', spec: { panels: [{ runId: gone }], size: { kind: 'column', column: 'single' } } });
    expect(compose.status).toBe(400);
    expect(compose.body.error).toMatch(/expired and its arrays and tiles were removed/);
    // a draft whose ready print still names the expired run cannot be published
    const late = await figureOf('late-draft', [recent, gone], 'draft');
    const [f] = await h.deps.db.select().from(figures).where(eq(figures.id, late));
    const publish = await as(h.http.post(`/api/figures/${f!.slug}/publish`), s);
    expect(publish.status).toBe(409);
    expect(publish.body.error).toMatch(/expired/);
    expect((await h.deps.db.select().from(figures).where(eq(figures.id, late)))[0]!.publishedAt).toBeNull();
  });

  it('is safe when two sweeps run at once: one notice, one expiry, everything deleted once', async () => {
    const twin = await oldRun('swept twice', RETENTION_RULE.keepDays + 1);
    // two processes with their own connections, as two farm workers would be
    const other = connectDatabase(h.env.DATABASE_URL, 3);
    try {
      const deps2: RetentionDeps = { ...deps, db: other.db };
      const now = new Date();
      const [a, b] = await Promise.all([sweepRetention(deps, { now, labIds: [labId] }), sweepRetention(deps2, { now, labIds: [labId] })]);
      expect(a.noticed.length + b.noticed.length).toBe(1);
      expect(await eventsOf(twin, 'retention.notice')).toHaveLength(1);
      const later = new Date(now.getTime() + (RETENTION_RULE.noticeDays + 1) * DAY);
      const [c, d] = await Promise.all([sweepRetention(deps, { now: later, labIds: [labId] }), sweepRetention(deps2, { now: later, labIds: [labId] })]);
      expect([...c.expired, ...d.expired].filter((e) => e.runId === twin)).toHaveLength(1);
      expect(await eventsOf(twin, 'retention.expire')).toHaveLength(1);
      expect(await stored(twin)).toBe(0);
    } finally {
      await other.close();
    }
  });

  it('finishes the deletion an interrupted sweep left behind', async () => {
    const half = await oldRun('interrupted', RETENTION_RULE.keepDays + 1);
    // as if a worker died after claiming the run: marked expired, nothing deleted yet
    await h.deps.db.update(runs).set({ artifactsExpiredAt: new Date() }).where(eq(runs.id, half));
    expect(await stored(half)).toBe(4);
    const out = await sweep(new Date());
    expect(out.finished).toContain(half);
    expect(await stored(half)).toBe(0);
    expect((await rowOf(half)).artifactsClearedAt).not.toBeNull();
    expect((await rowOf(half)).storedObjects).toBe(0);
    // and clearing again is harmless
    await expect(clearExpiredRun(deps, half, 'interrupted')).resolves.toEqual({ objects: 0, prints: 0 });
  });
});

describe('the scheduled sweep in the farm worker', () => {
  it('registers one BullMQ job scheduler on the maintenance queue, and its job sweeps', async () => {
    const lab = await createLab(h, `Scheduled Lab ${h.tag}`, [{ userId: manager.id, role: 'manager' }]);
    const prevLab = labId;
    labId = lab;
    const due = await oldRun('scheduled', RETENTION_RULE.keepDays - 1);
    labId = prevLab;
    const connection = new Redis(h.env.REDIS_URL, { maxRetriesPerRequest: null });
    const prefix = `${h.queuePrefix}-sweep`;
    const events = new QueueEvents(QUEUE_NAMES.maintenance, { connection: new Redis(h.env.REDIS_URL, { maxRetriesPerRequest: null }), prefix });
    await events.waitUntilReady();
    const completed = new Promise<unknown>((resolve) => events.once('completed', ({ returnvalue }) => resolve(typeof returnvalue === 'string' ? JSON.parse(returnvalue) : returnvalue)));
    const sweeper = await startRetentionSweep({ connection, prefix, db: h.deps.db, blobs: h.deps.blobs, mailer: h.deps.mailer, env: h.env }, { everyMs: 1500, labIds: [lab] });
    // a second worker upserting the same scheduler does not add a second one
    const second = await startRetentionSweep({ connection, prefix, db: h.deps.db, blobs: h.deps.blobs, mailer: h.deps.mailer, env: h.env }, { everyMs: 1500, labIds: [lab] });
    try {
      const q = new Queue(QUEUE_NAMES.maintenance, { connection, prefix });
      expect((await q.getJobSchedulers()).map((j) => j.key)).toEqual(['retention-sweep']);
      await q.close();
      expect(await completed).toMatchObject({ noticed: 1 });
      expect(await eventsOf(due, 'retention.notice')).toHaveLength(1);
      // the farm page lists the maintenance queue with the others
      const farm = createFarmHealth(h.env.REDIS_URL, { prefix });
      expect((await farm.snapshot()).queues.map((x) => x.queue)).toContain(QUEUE_NAMES.maintenance);
      await farm.close();
    } finally {
      await sweeper.close();
      await second.close();
      await events.close();
      const q = new Queue(QUEUE_NAMES.maintenance, { connection, prefix });
      await q.obliterate({ force: true });
      await q.close();
      await connection.quit();
    }
  });
});
