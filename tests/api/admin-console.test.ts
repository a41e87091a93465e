import { eq } from 'drizzle-orm';
import { Queue, Worker, UnrecoverableError } from 'bullmq';
import { Redis } from 'ioredis';
import supertest from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { auditEvents, labs, runs } from '../../drizzle/schema.js';
import {
  adminLabStateResponseSchema,
  adminStorageResponseSchema,
  adminUsageResponseSchema,
  auditResponseSchema,
  farmHealthResponseSchema,
  heartbeatKey,
  RETENTION_RULE,
  type LabUsage,
} from '../../shared/api/admin.js';
import { creditAdjustmentResponseSchema } from '../../shared/api/credits.js';
import { estimateRun } from '../../shared/estimate.js';
import { JOB_NAMES, QUEUE_NAMES, jobIdFor } from '../../shared/jobs.js';
import { runSpecSchema } from '../../shared/run-spec.js';
import { createApp } from '../../api/src/app.js';
import { bookOfflinePurchase } from '../../api/src/billing/adjustments.js';
import { ensureAllowance, labBalance } from '../../api/src/billing/ledger.js';
import { issueLabAllowance } from '../../api/src/services/admin-allowance.js';
import type { AppDeps } from '../../api/src/deps.js';
import { createFarmHealth, type FarmHealth } from '../../api/src/queue/farm-health.js';
import { startFarmWorker } from '../../renderer/src/farm/farm-worker.js';
import { hostname } from 'node:os';
import { as, createLab, createUser, signIn, startHarness, TEST_PASSWORD, type Harness, type Session } from './support/harness.js';
import { waitForMail } from './support/outbox.js';

/**
 * The admin console's API against the real PostgreSQL, Redis (BullMQ under this file's prefix),
 * the S3 fake and the SMTP fake: a lab over quota, a grant that lifts it, suspension, the farm's
 * queues and failed jobs, storage per lab with the retention notice, and the filtered audit trail.
 */

let h: Harness;
let http: ReturnType<typeof supertest>;
let farm: FarmHealth;
let redis: Redis;
const people = {} as Record<'admin' | 'manager' | 'author' | 'outsider', { id: string; email: string; name: string }>;
const s = {} as Record<keyof typeof people, Session>;
let labId: string;
let otherLabId: string;

const SPEC = { lattice: { preset: 'square' as const }, chips: 5 };
/** what the gate reserves for SPEC: the shared estimator's price (the same function the API uses) */
const PRICE = estimateRun(runSpecSchema.parse(SPEC)).credits;

const usageOf = async (id: string): Promise<LabUsage> => {
  const res = await as(http.get('/api/admin/usage?months=3'), s.admin);
  expect(res.status).toBe(200);
  const body = adminUsageResponseSchema.parse(res.body);
  return body.labs.find((l) => l.labId === id)!;
};

beforeAll(async () => {
  h = await startHarness('admin-console');
  farm = createFarmHealth(h.env.REDIS_URL, { prefix: h.queuePrefix });
  redis = new Redis(h.env.REDIS_URL, { maxRetriesPerRequest: null });
  // the same app as everywhere, reading the farm under this file's BullMQ prefix
  http = supertest(createApp({ ...h.deps, farm } as AppDeps, { distDir: '/nonexistent' }));
  people.admin = await createUser(h, 'Console Admin', { isAdmin: true });
  people.manager = await createUser(h, 'Console Manager');
  people.author = await createUser(h, 'Console Author');
  people.outsider = await createUser(h, 'Console Outsider');
  labId = await createLab(h, 'Quota Lab', [
    { userId: people.manager.id, role: 'manager' },
    { userId: people.author.id, role: 'author' },
  ]);
  otherLabId = await createLab(h, 'Roomy Lab', [{ userId: people.outsider.id, role: 'manager' }]);
  for (const k of Object.keys(people) as (keyof typeof people)[]) s[k] = await signIn(h, people[k].email, TEST_PASSWORD);
});
afterAll(async () => {
  await farm?.close();
  await redis?.quit();
  await h?.close();
});

describe('usage and quotas', () => {
  it('finds a lab over quota, and a grant with a reason lifts it; both show in the trail and the balance history', async () => {
    // an allowance of exactly two runs' price, one run's worth bought, then three runs: all of it held
    const cut = await as(http.put(`/api/admin/labs/${labId}/allowance`), s.admin).send({ freeAllowance: 2 * PRICE, reason: 'pilot: small allowance' });
    expect(cut.status).toBe(200);
    expect(adminLabStateResponseSchema.parse(cut.body).freeAllowance).toBe(2 * PRICE);
    await bookOfflinePurchase(h.deps.db, labId, PRICE, `admin-console-${h.tag}`, people.manager.id);
    for (let k = 0; k < 3; k++) {
      const res = await as(http.post('/api/runs'), s.author).send({ labId, title: `quota run ${k}`, spec: SPEC });
      expect(res.status).toBe(201);
    }
    const refused = await as(http.post('/api/runs'), s.author).send({ labId, title: 'one too many', spec: SPEC });
    expect(refused.status).toBe(402);

    const over = await usageOf(labId);
    expect(over).toMatchObject({ standing: 'over', freeAllowance: 2 * PRICE, allowanceIsDefault: false, available: 0, freeLeft: 0, reserved: 3 * PRICE, usedThisMonth: 3 * PRICE });
    const thisMonth = over.months.at(-1)!;
    expect(thisMonth).toMatchObject({ runs: 3, credits: 3 * PRICE, purchased: PRICE, granted: 0 });
    const author = over.members.find((m) => m.memberId === people.author.id)!;
    expect(author.usedThisMonth).toBe(3 * PRICE);
    expect(author.months.at(-1)!.runs).toBe(3);
    // labs over quota come first in the list
    const all = adminUsageResponseSchema.parse((await as(http.get('/api/admin/usage'), s.admin)).body);
    expect(all.months).toHaveLength(6);
    expect(all.labs.findIndex((l) => l.labId === labId)).toBeLessThan(all.labs.findIndex((l) => l.labId === otherLabId));

    const grant = await as(http.post(`/api/labs/${labId}/credits/adjustments`), s.admin).send({ kind: 'grant', credits: 500, reason: 'farm outage last week' });
    expect(grant.status).toBe(201);
    expect(creditAdjustmentResponseSchema.parse(grant.body).balance.available).toBe(500);

    const after = await usageOf(labId);
    expect(after.standing).toBe('ok');
    expect(after.available).toBe(500);
    expect(after.months.at(-1)!.granted).toBe(500);
    // the balance chart's last step is the grant, at the new balance
    expect(after.balanceHistory.at(-1)).toMatchObject({ kind: 'grant', available: 500 });

    const trail = auditResponseSchema.parse((await as(http.get(`/api/admin/audit?labId=${labId}&kind=credits.grant`), s.admin)).body);
    expect(trail.events).toHaveLength(1);
    expect(trail.events[0]).toMatchObject({ action: 'credits.grant', actorId: people.admin.id, actorName: 'Console Admin', reason: 'farm outage last week', detail: { credits: 500 } });
    const allowanceEvents = auditResponseSchema.parse((await as(http.get(`/api/admin/audit?labId=${labId}&kind=lab.`), s.admin)).body).events;
    expect(allowanceEvents.map((e) => e.action)).toEqual(['lab.allowance']);
    expect(allowanceEvents[0]!.detail).toMatchObject({ to: 2 * PRICE });
  });

  it('gives a lab the allowance an admin set in later months too, before the ledger would issue the default', async () => {
    const lab = await createLab(h, 'Allowance Lab', [{ userId: people.outsider.id, role: 'author' }]);
    expect((await as(http.put(`/api/admin/labs/${lab}/allowance`), s.admin).send({ freeAllowance: 7, reason: 'small lab' })).status).toBe(200);
    expect((await labBalance(h.deps.db, lab)).freeLeft).toBe(7);
    const later = new Date(Date.UTC(new Date().getUTCFullYear(), new Date().getUTCMonth() + 3, 15));
    await issueLabAllowance(h.deps.db, lab, later);
    // the ledger's own issuance that month then books nothing more
    await h.deps.db.transaction((tx) => ensureAllowance(tx, lab, later.toISOString().slice(0, 7)));
    expect((await labBalance(h.deps.db, lab, later)).freeLeft).toBe(7);
  });

  it('exports the usage as CSV with one row per lab and month and per member and month', async () => {
    const res = await as(http.get('/api/admin/usage.csv?months=2'), s.admin);
    expect(res.status).toBe(200);
    expect(res.headers['content-type']).toMatch(/^text\/csv/);
    // RFC 4180 §2: records end in CRLF, the first record is the header
    const lines = res.text.split('\r\n');
    expect(lines[0]).toBe('lab,lab_id,member,member_id,month,credits,cpu_seconds,runs,storage_bytes,granted_credits,purchased_credits,lab_free_allowance,member_monthly_quota,standing_now');
    expect(lines.at(-1)).toBe('');
    const mine = lines.filter((l) => l.includes(labId));
    // 2 months for the lab, 2 for each of its 2 members
    expect(mine).toHaveLength(6);
    const now = new Date().toISOString().slice(0, 7);
    expect(mine.find((l) => l.includes(`${labId},,,${now},`))).toContain(`,${3 * PRICE},`);
  });

  it('refuses a bad allowance, a missing reason or a bad month count with a 400 and changes nothing', async () => {
    const before = await usageOf(labId);
    for (const body of [{ freeAllowance: -1, reason: 'negative' }, { freeAllowance: 10 }, { freeAllowance: 1.5, reason: 'half a credit' }]) {
      const res = await as(http.put(`/api/admin/labs/${labId}/allowance`), s.admin).send(body);
      expect(res.status).toBe(400);
      expect(typeof res.body.error).toBe('string');
    }
    expect((await as(http.get('/api/admin/usage?months=99'), s.admin)).status).toBe(400);
    expect((await usageOf(labId)).freeAllowance).toBe(before.freeAllowance);
    const nobody = await as(http.put('/api/admin/labs/00000000-0000-4000-8000-000000000000/allowance'), s.admin).send({ freeAllowance: 5, reason: 'no such lab' });
    expect(nobody.status).toBe(404);
  });
});

describe('suspension', () => {
  it('stops the lab\'s queued jobs and its submissions, deletes nothing, and reinstating puts the jobs back', async () => {
    const q = new Queue(QUEUE_NAMES.compute, { connection: redis, prefix: h.queuePrefix });
    const queued = await h.deps.db.select().from(runs).where(eq(runs.labId, labId));
    expect(queued.length).toBe(3);
    const jobOf = (r: (typeof queued)[number]) => q.getJob(jobIdFor({ name: JOB_NAMES.computeRun, data: { runId: r.id, spec: r.spec } }));
    for (const r of queued) expect(await jobOf(r)).toBeDefined();

    const res = await as(http.post(`/api/admin/labs/${labId}/suspension`), s.admin).send({ reason: 'unpaid invoice' });
    expect(res.status).toBe(200);
    expect(adminLabStateResponseSchema.parse(res.body)).toMatchObject({ suspendedReason: 'unpaid invoice', jobsAffected: 3 });
    for (const r of queued) expect(await jobOf(r)).toBeUndefined();
    const refused = await as(http.post('/api/runs'), s.author).send({ labId, title: 'while suspended', spec: SPEC });
    expect(refused.status).toBe(403);
    expect(refused.body.error).toMatch(/suspended.*unpaid invoice/);
    // nothing deleted: the runs are still there, still queued
    const still = await h.deps.db.select().from(runs).where(eq(runs.labId, labId));
    expect(still.map((r) => r.status)).toEqual(['queued', 'queued', 'queued']);
    expect((await as(http.post(`/api/admin/labs/${labId}/suspension`), s.admin).send({ reason: 'again' })).status).toBe(409);
    expect((await usageOf(labId)).suspendedReason).toBe('unpaid invoice');

    const back = await as(http.post(`/api/admin/labs/${labId}/reinstatement`), s.admin).send({ reason: 'invoice paid' });
    expect(back.status).toBe(200);
    expect(adminLabStateResponseSchema.parse(back.body)).toMatchObject({ suspendedAt: null, jobsAffected: 3 });
    for (const r of queued) expect(await jobOf(r)).toBeDefined();
    expect((await as(http.post('/api/runs'), s.author).send({ labId, title: 'after reinstatement', spec: SPEC })).status).toBe(201);
    const trail = auditResponseSchema.parse((await as(http.get(`/api/admin/audit?labId=${labId}&kind=lab.`), s.admin)).body).events;
    expect(trail.map((e) => [e.action, e.reason])).toEqual([['lab.reinstate', 'invoice paid'], ['lab.suspend', 'unpaid invoice'], ['lab.allowance', 'pilot: small allowance']]);
    await q.close();
  });
});

describe('farm health', () => {
  it('shows queue depths, heartbeats, running runs and failed jobs, and retries a failed job', async () => {
    const [run] = await h.deps.db.insert(runs).values({ labId: otherLabId, authorId: people.outsider.id, title: 'doomed', spec: runSpecSchema.parse(SPEC) }).returning();
    const [working] = await h.deps.db
      .insert(runs)
      .values({ labId: otherLabId, authorId: people.outsider.id, title: 'busy', spec: runSpecSchema.parse(SPEC), status: 'computing', stage: 'toppling', progress: 0.4, startedAt: new Date() })
      .returning();
    const q = new Queue(QUEUE_NAMES.render, { connection: redis, prefix: h.queuePrefix });
    const item = { name: JOB_NAMES.renderRun, data: { runId: run!.id } } as const;
    await q.add(item.name, item.data, { jobId: jobIdFor(item) });
    // a worker on this file's prefix that fails every render job at once
    const worker = new Worker(QUEUE_NAMES.render, async () => { throw new UnrecoverableError('tile store refused the write'); }, { connection: new Redis(h.env.REDIS_URL, { maxRetriesPerRequest: null }), prefix: h.queuePrefix });
    await new Promise<void>((resolve) => worker.once('failed', () => resolve()));
    await worker.close();
    await h.deps.db.update(runs).set({ status: 'failed', error: 'tile store refused the write' }).where(eq(runs.id, run!.id));
    await redis.set(heartbeatKey(h.queuePrefix, 'farm-a', 4242), JSON.stringify({ host: 'farm-a', pid: 4242, startedAt: new Date().toISOString(), at: new Date().toISOString(), queues: [QUEUE_NAMES.compute], active: [{ queue: QUEUE_NAMES.compute, jobId: 'x', runId: working!.id, since: new Date().toISOString() }] }), 'EX', 60);

    const res = await as(http.get('/api/admin/farm'), s.admin);
    expect(res.status).toBe(200);
    const body = farmHealthResponseSchema.parse(res.body);
    const compute = body.queues.find((x) => x.queue === QUEUE_NAMES.compute)!;
    // the four runs of Quota Lab are waiting, with no priority given
    expect(compute.waiting).toBe(4);
    expect(compute.byPriority).toEqual([{ priority: 0, jobs: 4 }]);
    expect(body.queues.find((x) => x.queue === QUEUE_NAMES.render)!.failed).toBe(1);
    expect(body.workers.map((w) => `${w.host}:${w.pid}`)).toEqual(['farm-a:4242']);
    expect(body.running.find((r) => r.runId === working!.id)).toMatchObject({ progress: 0.4, stage: 'toppling', worker: 'farm-a:4242', labName: expect.stringContaining('Roomy Lab') });
    expect(body.failed).toHaveLength(1);
    expect(body.failed[0]).toMatchObject({ queue: QUEUE_NAMES.render, runId: run!.id, runTitle: 'doomed', error: 'tile store refused the write' });

    const retry = await as(http.post(`/api/admin/farm/jobs/${QUEUE_NAMES.render}/${body.failed[0]!.jobId}/retry`), s.admin);
    expect(retry.status).toBe(200);
    const job = await q.getJob(jobIdFor(item));
    expect(await job!.getState()).toBe('waiting');
    const [again] = await h.deps.db.select().from(runs).where(eq(runs.id, run!.id));
    expect(again).toMatchObject({ status: 'rendering', error: null });
    expect((await as(http.post(`/api/admin/farm/jobs/${QUEUE_NAMES.render}/${body.failed[0]!.jobId}/retry`), s.admin)).status).toBe(404);
    expect((await as(http.post(`/api/admin/farm/jobs/no-such-queue/1/retry`), s.admin)).status).toBe(404);
    const [event] = await h.deps.db.select().from(auditEvents).where(eq(auditEvents.subjectId, `${QUEUE_NAMES.render}/${body.failed[0]!.jobId}`));
    expect(event).toMatchObject({ action: 'farm.retry', actorId: people.admin.id });
    await q.close();
  });
});

describe('worker heartbeats', () => {
  it('a real farm worker announces itself while it runs and takes its heartbeat away when it closes', async () => {
    const worker = await startFarmWorker(h.env, { prefix: `${h.queuePrefix}-hb` });
    const watch = createFarmHealth(h.env.REDIS_URL, { prefix: `${h.queuePrefix}-hb` });
    try {
      await expect.poll(async () => (await watch.snapshot()).workers.map((w) => `${w.host}:${w.pid}`)).toEqual([`${hostname()}:${process.pid}`]);
      const snap = await watch.snapshot();
      expect(snap.workers[0]!.queues).toEqual(expect.arrayContaining([QUEUE_NAMES.compute, QUEUE_NAMES.render]));
      expect(snap.workers[0]!.active).toEqual([]);
      // BullMQ registers the workers' connections too
      expect(snap.bullWorkers).toBeGreaterThanOrEqual(2);
    } finally {
      await worker.close();
    }
    expect((await watch.snapshot()).workers).toEqual([]);
    await watch.close();
  });
});

describe('storage and retention', () => {
  it('sums the stored bytes per run and lab, and mails the managers once when unpublished runs near their end', async () => {
    const [old] = await h.deps.db
      .insert(runs)
      .values({ labId, authorId: people.author.id, title: 'old unpublished', spec: runSpecSchema.parse(SPEC), status: 'finished', finishedAt: new Date(Date.now() - (RETENTION_RULE.keepDays - 5) * 86400_000) })
      .returning();
    await h.deps.blobs.put(`runs/${old!.id}/arrays/heights.npy`, Buffer.alloc(1000, 1), 'application/octet-stream');
    await h.deps.blobs.put(`runs/${old!.id}/heights/tidewater/iiif/info.json`, 'x'.repeat(234), 'application/json');
    const res = await as(http.get('/api/admin/storage'), s.admin);
    expect(res.status).toBe(200);
    const body = adminStorageResponseSchema.parse(res.body);
    const lab = body.labs.find((l) => l.labId === labId)!;
    const row = lab.runs.find((r) => r.runId === old!.id)!;
    expect(row).toMatchObject({ bytes: 1234, objects: 2, published: false, noticeMailedAt: null });
    expect(Date.parse(row.expiresAt!) - Date.parse(row.finishedAt!)).toBe(RETENTION_RULE.keepDays * 86400_000);
    expect(lab.dueForNotice).toBe(1);
    expect(lab.bytes).toBe(1234);
    expect((await usageOf(labId)).storageBytes).toBe(1234);
    // a row written without its size (as before migration 0013) was listed once and filled in
    const [filled] = await h.deps.db.select({ bytes: runs.storedBytes, objects: runs.storedObjects }).from(runs).where(eq(runs.id, old!.id));
    expect(filled).toEqual({ bytes: 1234, objects: 2 });

    const notice = await as(http.post(`/api/admin/labs/${labId}/retention-notice`), s.admin);
    expect(notice.status).toBe(200);
    expect(notice.body).toEqual({ mailedTo: [people.manager.email], runs: 1 });
    const mail = await waitForMail(h.env, people.manager.email, /unpublished run/);
    expect(mail.text).toContain('old unpublished');
    expect((await as(http.post(`/api/admin/labs/${labId}/retention-notice`), s.admin)).status).toBe(409);
    const after = adminStorageResponseSchema.parse((await as(http.get('/api/admin/storage'), s.admin)).body);
    expect(after.labs.find((l) => l.labId === labId)!.runs.find((r) => r.runId === old!.id)!.noticeMailedAt).not.toBeNull();
  });
});

describe('audit trail', () => {
  it('filters by person and date, exports CSV, and refuses a bad filter', async () => {
    const byAdmin = auditResponseSchema.parse((await as(http.get(`/api/admin/audit?actorId=${people.admin.id}`), s.admin)).body).events;
    expect(byAdmin.length).toBeGreaterThanOrEqual(5);
    expect(byAdmin.every((e) => e.actorId === people.admin.id)).toBe(true);
    expect(auditResponseSchema.parse((await as(http.get(`/api/admin/audit?actorId=${people.admin.id}`), s.admin)).body).kinds).toContain('lab.suspend');
    const today = new Date().toISOString().slice(0, 10);
    const todays = auditResponseSchema.parse((await as(http.get(`/api/admin/audit?actorId=${people.admin.id}&from=${today}&to=${today}`), s.admin)).body).events;
    expect(todays).toHaveLength(byAdmin.length);
    const none = auditResponseSchema.parse((await as(http.get(`/api/admin/audit?actorId=${people.admin.id}&to=2000-01-01`), s.admin)).body).events;
    expect(none).toEqual([]);

    const csv = await as(http.get(`/api/admin/audit.csv?labId=${labId}&kind=credits.grant`), s.admin);
    expect(csv.status).toBe(200);
    const lines = csv.text.split('\r\n');
    expect(lines[0]).toBe('id,at,actor_id,actor,lab_id,lab,action,subject_type,subject_id,subject,reason,detail');
    // RFC 4180 §2.6–2.7: the JSON detail has commas and quotes, so it is quoted with its quotes doubled
    expect(lines[1]).toContain(',credits.grant,lab,');
    expect(lines[1]!.endsWith(',farm outage last week,"{""credits"":500}"')).toBe(true);

    for (const bad of ['kind=DROP TABLE', 'from=yesterday', `labId=not-an-id`, 'limit=0']) {
      const res = await as(http.get(`/api/admin/audit?${bad}`), s.admin);
      expect(res.status).toBe(400);
      expect(res.body.error).toMatch(/invalid request query/);
    }
  });

  it('is append-only: the database refuses to change or delete an event', async () => {
    const [e] = await h.deps.db.select().from(auditEvents).where(eq(auditEvents.labId, labId)).limit(1);
    await expect(h.deps.db.update(auditEvents).set({ reason: 'rewritten' }).where(eq(auditEvents.id, e!.id))).rejects.toThrow();
    await expect(h.deps.db.delete(auditEvents).where(eq(auditEvents.id, e!.id))).rejects.toThrow();
    const [lab] = await h.deps.db.select().from(labs).where(eq(labs.id, labId));
    expect(lab!.suspendedAt).toBeNull();
  });
});

describe('only site admins reach the console', () => {
  it('answers 403 to a lab manager and 401 to a reader', async () => {
    expect((await as(http.get('/api/admin/usage'), s.manager)).status).toBe(403);
    expect((await as(http.get('/api/admin/farm'), s.manager)).status).toBe(403);
    expect((await http.get('/api/admin/audit')).status).toBe(401);
  });
});
