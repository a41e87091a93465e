import { createHash, randomUUID } from 'node:crypto';
import http, { type Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import { Queue } from 'bullmq';
import { and, eq, inArray } from 'drizzle-orm';
import { Redis } from 'ioredis';
import pg from 'pg';
import supertest from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createApp } from '../../api/src/app.js';
import type { Database } from '../../api/src/db/client.js';
import { migrateDatabase } from '../../api/src/db/migrate.js';
import type { AppDeps } from '../../api/src/deps.js';
import { DEMO_FIGURE_SLUG, DEMO_SIGN_INS, seedDemo } from '../../api/src/seed/demo.js';
import { finishDemo } from '../../api/src/seed/demo-finisher.js';
import { ensureBucket } from '../../api/src/storage/s3-blob-store.js';
import { auditEvents, figures, figureVersions, ledgerEntries, runs, users } from '../../drizzle/schema.js';
import { startFarmWorker } from '../../renderer/src/farm/farm-worker.js';
import { figureResponseSchema, listFiguresResponseSchema } from '../../shared/api/figures.js';
import { QUEUE_NAMES } from '../../shared/jobs.js';
import { figureSpecSchema, specWithCaption, startingComposition } from '../../shared/print-spec.js';
import { as, closeAppDeps, connectAppDeps, sessionFrom, testEnv } from './support/harness.js';

/** The demo seed on a database created empty for this test, with the API it is served by. */
const base = testEnv();
const dbName = `tw_seed_${randomUUID().replaceAll('-', '').slice(0, 12)}`;
const url = new URL(base.DATABASE_URL);
url.pathname = `/${dbName}`;
const env = { ...base, DATABASE_URL: url.toString() };
const queuePrefix = `twtest-seed-${randomUUID().slice(0, 8)}`;
const author = DEMO_SIGN_INS.find((d) => d.role === 'author')!;
let database: Database;
let deps: AppDeps;
let api: ReturnType<typeof supertest>;
/** the same app listening on a port, for the finisher, which talks HTTP as `npm start` has it do */
let server: Server;
let baseUrl: string;
let farm: Awaited<ReturnType<typeof startFarmWorker>> | undefined;

async function admin(sql: string) {
  const c = new pg.Client({ connectionString: base.DATABASE_URL });
  await c.connect();
  await c.query(sql).finally(() => c.end());
}

beforeAll(async () => {
  await admin(`create database ${dbName}`);
  await migrateDatabase(env.DATABASE_URL);
  await ensureBucket(env);
  ({ database, deps } = connectAppDeps(env, queuePrefix));
  const app = createApp(deps, { distDir: '/nonexistent' });
  api = supertest(app);
  server = await new Promise<Server>((resolve, reject) => {
    const s = http.createServer(app);
    s.once('error', reject);
    s.listen(0, '127.0.0.1', () => resolve(s));
  });
  baseUrl = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
});
afterAll(async () => {
  await farm?.close();
  if (server) {
    server.closeAllConnections();
    await new Promise<void>((r) => server.close(() => r()));
  }
  const redis = new Redis(env.REDIS_URL, { maxRetriesPerRequest: null });
  for (const name of Object.values(QUEUE_NAMES)) {
    const q = new Queue(name, { connection: redis, prefix: queuePrefix });
    await q.obliterate({ force: true });
    await q.close();
  }
  await redis.quit();
  await closeAppDeps(database, deps);
  await admin(`drop database if exists ${dbName} with (force)`);
});

describe('demo seed', () => {
  it('seeds an empty database exactly once, even when two starts race', async () => {
    const results = await Promise.all([seedDemo(env, { queuePrefix }), seedDemo(env, { queuePrefix })]);
    expect(results.filter((r) => r === null)).toHaveLength(1);
    expect(results.find((r) => r !== null)).toEqual({ signIns: [...DEMO_SIGN_INS] });
    expect(await seedDemo(env, { queuePrefix })).toBeNull();
    expect(await database.db.$count(users)).toBe(DEMO_SIGN_INS.length);
  });

  it('queues its runs without invented statistics and composes one figure as the compose page starts one', async () => {
    const rows = await database.db.select().from(runs);
    expect(rows.length).toBeGreaterThanOrEqual(3);
    expect(rows.every((r) => r.status === 'queued' && r.stats === null && r.finishedAt === null)).toBe(true);
    expect(new Set(rows.map((r) => JSON.stringify(r.spec.lattice))).size).toBeGreaterThanOrEqual(3);
    const redis = new Redis(env.REDIS_URL, { maxRetriesPerRequest: null });
    const q = new Queue(QUEUE_NAMES.compute, { connection: redis, prefix: queuePrefix });
    expect((await q.getJobCounts('wait')).wait).toBe(rows.length);
    await q.close();
    await redis.quit();
    const composed = await database.db.select().from(figures);
    const first = rows.find((r) => r.title.startsWith('One hundred thousand grains'))!;
    expect(composed.map((f) => [f.slug, f.runId])).toEqual([[DEMO_FIGURE_SLUG, first.id]]);
    // one journal column at 300 DPI with a scale bar, its caption printed under the pile
    expect(composed[0]!.spec).toEqual(specWithCaption(figureSpecSchema.parse(startingComposition(first.id)), composed[0]!.caption));
  });

  it('has every run hold its credits against its author, as a submitted run does, so the credits pages count them', async () => {
    // a lab with four finished runs once read "No usage yet" and a whole free allowance left
    const rows = await database.db.select().from(runs);
    const held = await database.db.select().from(ledgerEntries).where(eq(ledgerEntries.kind, 'reservation'));
    expect(held.map((e) => [e.runId, e.memberId, e.labId]).sort()).toEqual(rows.map((r) => [r.id, r.authorId, r.labId]).sort());
    expect(held.every((e) => (e.detail as { credits: number }).credits >= 1)).toBe(true);
    // the author's own view of the month: the credits of her runs, held until the farm settles them
    const who = sessionFrom(await api.post('/api/auth/sign-in').send({ email: author.email, password: author.password }));
    const me = (await as(api.get('/api/me'), who)).body as { activeLabId: string; user: { id: string } };
    const mine = held.filter((e) => e.memberId === me.user.id).reduce((s, e) => s + (e.detail as { credits: number }).credits, 0);
    expect(mine).toBeGreaterThan(0);
    const credits = (await as(api.get(`/api/labs/${me.activeLabId}/credits`), who).expect(200)).body as { me: { usedThisMonth: number } };
    expect(credits.me.usedThisMonth).toBe(mine);
    const usage = (await as(api.get(`/api/labs/${me.activeLabId}/credits/usage`), who).expect(200)).body as { rows: { memberId: string; runs: number }[] };
    expect(usage.rows.find((r) => r.memberId === me.user.id)?.runs).toBe(rows.filter((r) => r.authorId === me.user.id).length);
  });

  it('publishes no figure without a print, as the publish route requires of everyone', async () => {
    // readers download the printed files of a published figure; the demo's has none until the farm prints it
    const [figure] = await database.db.select().from(figures).where(eq(figures.slug, DEMO_FIGURE_SLUG));
    expect(figure!.publishedAt).toBeNull();
    expect(await database.db.$count(figureVersions, eq(figureVersions.figureId, figure!.id))).toBe(0);
    // a reader finds nothing published, and the figure's link is not public
    expect((await api.get('/api/figures')).body.figures).toEqual([]);
    expect((await api.get(`/api/figures/${DEMO_FIGURE_SLUG}`)).status).toBe(404);
    // its author sees the draft and is told by the route what publishing needs
    const who = sessionFrom(await api.post('/api/auth/sign-in').send({ email: author.email, password: author.password }));
    expect((await as(api.get(`/api/figures/${DEMO_FIGURE_SLUG}`), who)).status).toBe(200);
    const publish = await as(api.post(`/api/figures/${DEMO_FIGURE_SLUG}/publish`), who);
    expect(publish.status).toBe(409);
    expect(publish.body.error).toMatch(/^order a print and wait until it is ready before publishing/);
    const [after] = await database.db.select().from(figures).where(eq(figures.slug, DEMO_FIGURE_SLUG));
    expect(after!.publishedAt).toBeNull();
  });

  it('lets every printed demo sign-in sign in, with the role it claims', async () => {
    for (const s of DEMO_SIGN_INS) {
      expect(s.password.length).toBeGreaterThanOrEqual(10);
      const who = sessionFrom(await api.post('/api/auth/sign-in').send({ email: s.email, password: s.password }).expect(200));
      const me = (await as(api.get('/api/me'), who)).body;
      expect(me.user.isAdmin).toBe(s.role === 'admin');
      if (s.role === 'author' || s.role === 'manager') expect(me.labs.map((l: { role: string }) => l.role)).toEqual([s.role]);
      if (s.role === 'other lab') expect(me.labs).toHaveLength(1);
    }
  });

  it('gives up with a reason, touching nothing, while no worker has computed the figure\'s run', async () => {
    const result = await finishDemo(baseUrl, { runTimeoutMs: 300, pollMs: 100 });
    expect(result).toEqual({ outcome: 'gave-up', reason: 'its run was still queued after 0.3 s' });
    const [figure] = await database.db.select().from(figures).where(eq(figures.slug, DEMO_FIGURE_SLUG));
    expect(figure!.publishedAt).toBeNull();
    expect(await database.db.$count(figureVersions, eq(figureVersions.figureId, figure!.id))).toBe(0);
  });

  it('the finisher of `npm start` has the farm print the figure and publishes it as its author; readers then see it; a second pass does nothing', { timeout: 240_000 }, async () => {
    farm = await startFarmWorker(env, { prefix: queuePrefix, threads: 2, log: () => {} });
    const result = await finishDemo(baseUrl, { pollMs: 250, runTimeoutMs: 180_000, printTimeoutMs: 120_000 });
    expect(result).toEqual({ outcome: 'published', slug: DEMO_FIGURE_SLUG, url: `${baseUrl}/f/${DEMO_FIGURE_SLUG}`, version: 1 });

    // stored as the routes store it: one ready version of the three formats, ordered and published by the author
    const [figure] = await database.db.select().from(figures).where(eq(figures.slug, DEMO_FIGURE_SLUG));
    expect(figure!.publishedAt).not.toBeNull();
    expect(figure!.withdrawnAt).toBeNull();
    const [me] = await database.db.select().from(users).where(eq(users.email, author.email));
    const versions = await database.db.select().from(figureVersions).where(eq(figureVersions.figureId, figure!.id));
    expect(versions.map((v) => [v.number, v.status, v.orderedById, v.formats])).toEqual([[1, 'ready', me!.id, ['png', 'tiff', 'pdf']]]);
    expect(versions[0]!.spec).toEqual(figure!.spec);
    const actions = await database.db
      .select({ action: auditEvents.action, actorId: auditEvents.actorId })
      .from(auditEvents)
      .where(and(eq(auditEvents.subjectId, figure!.id), inArray(auditEvents.action, ['figure.order', 'figure.publish'])));
    expect(actions.map((a) => a.action).sort()).toEqual(['figure.order', 'figure.publish']);
    expect(actions.every((a) => a.actorId === me!.id)).toBe(true);
    const [run] = await database.db.select().from(runs).where(eq(runs.id, figure!.runId));
    expect(run!.status).toBe('finished');

    // an anonymous reader: in the index, on the permanent link, and the PNG downloads with the listed checksum
    const index = listFiguresResponseSchema.parse((await api.get('/api/figures').expect(200)).body);
    expect(index.figures.map((f) => f.slug)).toEqual([DEMO_FIGURE_SLUG]);
    const page = figureResponseSchema.parse((await api.get(`/api/figures/${DEMO_FIGURE_SLUG}`).expect(200)).body);
    if (page.withdrawn) throw new Error('the demo figure reads as withdrawn');
    expect(page.figure.canEdit).toBe(false);
    expect(page.figure.latestVersion).toBe(1);
    const png = page.figure.versions[0]!.files.find((f) => f.format === 'png')!;
    const link = await api.get(png.href).expect(302);
    const bytes = Buffer.from(await (await fetch(link.headers.location!)).arrayBuffer());
    expect(bytes.subarray(1, 4).toString('latin1')).toBe('PNG');
    expect(createHash('sha256').update(bytes).digest('hex')).toBe(png.sha256);

    // idempotent: the published figure is left as it is, with no second print
    expect(await finishDemo(baseUrl, { pollMs: 250 })).toEqual({ outcome: 'left', reason: 'the demo figure is already published' });
    expect(await database.db.$count(figureVersions, eq(figureVersions.figureId, figure!.id))).toBe(1);
  });
});
