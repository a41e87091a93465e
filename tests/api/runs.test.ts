import { totalmem } from 'node:os';
import { Queue } from 'bullmq';
import { Redis } from 'ioredis';
import { eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { ledgerEntries, memberships, runs } from '../../drizzle/schema.js';
import { CREDIT_CHECK_MAX } from '../../shared/api/credits.js';
import { listRunsResponseSchema, runResponseSchema } from '../../shared/api/runs.js';
import { estimateRun } from '../../shared/estimate.js';
import { JOB_NAMES, JOBS_TO_QUEUE, jobIdFor, QUEUE_NAMES } from '../../shared/jobs.js';
import { runSpecSchema } from '../../shared/run-spec.js';
import { as, createLab, createUser, signIn, startHarness, TEST_PASSWORD, type Harness, type Session } from './support/harness.js';

let h: Harness;
let author: Session;
let manager: Session;
let authorId: string;
let labId: string;
let redis: Redis;
let compute: Queue;

beforeAll(async () => {
  h = await startHarness('runs');
  const a = await createUser(h, 'Run Author');
  const m = await createUser(h, 'Run Manager');
  authorId = a.id;
  labId = await createLab(h, 'Runs Lab', [
    { userId: a.id, role: 'author' },
    { userId: m.id, role: 'manager' },
  ]);
  author = await signIn(h, a.email, TEST_PASSWORD);
  manager = await signIn(h, m.email, TEST_PASSWORD);
  redis = new Redis(h.env.REDIS_URL, { maxRetriesPerRequest: null });
  compute = new Queue(QUEUE_NAMES.compute, { connection: redis, prefix: h.queuePrefix });
});
afterAll(async () => {
  await compute.obliterate({ force: true });
  await compute.close();
  await redis.quit();
  await h.close();
});

const create = (who: Session, title: string, spec: unknown) => as(h.http.post('/api/runs'), who).send({ labId, title, spec });

describe('runs', () => {
  it('stores a queued run with defaults filled in and enqueues its compute job', async () => {
    const res = await create(author, 'First pile', { lattice: { preset: 'square' }, chips: 1000 });
    expect(res.status).toBe(201);
    const { run } = runResponseSchema.parse(res.body);
    expect(run).toMatchObject({ status: 'queued', progress: 0, stats: null, author: { id: authorId, name: 'Run Author' }, labId });
    expect(run.spec).toEqual({ lattice: { preset: 'square' }, chips: 1000, sources: [], background: { kind: 'constant', height: 0 } });
    expect(JOBS_TO_QUEUE[JOB_NAMES.computeRun]).toBe(QUEUE_NAMES.compute);
    const job = await compute.getJob(jobIdFor({ name: JOB_NAMES.computeRun, data: { runId: run.id, spec: run.spec } }));
    expect(job?.name).toBe('run.compute');
    expect(job?.data).toEqual({ runId: run.id, spec: run.spec });
    expect(runSpecSchema.parse(job!.data.spec)).toEqual(run.spec);
    const [row] = await h.deps.db.select().from(runs).where(eq(runs.id, run.id));
    expect(row!.status).toBe('queued');
    const got = await as(h.http.get(`/api/runs/${run.id}`), manager).expect(200);
    expect(got.body.run.id).toBe(run.id);
  });

  it('lists with server-side filtering, sorting and pagination, defaulting to the active lab', async () => {
    await create(author, 'Tri small', { lattice: { preset: 'triangular' }, chips: 300 }).expect(201);
    await create(manager, 'Honey mid', { lattice: { preset: 'honeycomb' }, chips: 5000 }).expect(201);
    await create(author, 'Tri big', { lattice: { preset: 'triangular' }, chips: 90000 }).expect(201);
    await create(manager, 'Periodic', { lattice: { periodic: { period: [1, 1], neighbours: [[[[1, 0], [-1, 0], [0, 1], [0, -1]]]] }, name: 'plain grid' }, chips: 40 }).expect(201);

    const all = listRunsResponseSchema.parse((await as(h.http.get(`/api/runs?labId=${labId}&sort=chips&order=asc`), author).expect(200)).body);
    expect(all.total).toBe(5);
    expect(all.runs.map((r) => r.spec.chips)).toEqual([40, 300, 1000, 5000, 90000]);

    // no labId: the caller's only lab is the active one
    const page2 = listRunsResponseSchema.parse((await as(h.http.get('/api/runs?sort=chips&order=desc&pageSize=2&page=2'), author).expect(200)).body);
    expect(page2).toMatchObject({ total: 5, page: 2, pageSize: 2 });
    expect(page2.runs.map((r) => r.title)).toEqual(['First pile', 'Tri small']);

    const tri = listRunsResponseSchema.parse((await as(h.http.get(`/api/runs?labId=${labId}&lattice=triangular&sort=title&order=asc`), author)).body);
    expect(tri.runs.map((r) => r.title)).toEqual(['Tri big', 'Tri small']);
    const periodic = listRunsResponseSchema.parse((await as(h.http.get(`/api/runs?labId=${labId}&lattice=periodic`), author)).body);
    expect(periodic.runs.map((r) => r.title)).toEqual(['Periodic']);
    const mine = listRunsResponseSchema.parse((await as(h.http.get(`/api/runs?labId=${labId}&author=${authorId}`), manager)).body);
    expect(mine.total).toBe(3);
    const finished = listRunsResponseSchema.parse((await as(h.http.get(`/api/runs?labId=${labId}&status=finished`), manager)).body);
    expect(finished).toMatchObject({ total: 0, runs: [] });
  });

  it('cancels a queued run, drops its waiting job, and refuses a second cancel', async () => {
    const { run } = runResponseSchema.parse((await create(author, 'To cancel', { lattice: { preset: 'line' }, chips: 11 }).expect(201)).body);
    const jobId = jobIdFor({ name: JOB_NAMES.computeRun, data: { runId: run.id, spec: run.spec } });
    expect(await compute.getJob(jobId)).toBeDefined();
    const res = await as(h.http.post(`/api/runs/${run.id}/cancel`), author);
    expect(res.status).toBe(200);
    expect(res.body.run.status).toBe('cancelled');
    expect(res.body.run.finishedAt).not.toBeNull();
    expect(await compute.getJob(jobId)).toBeUndefined();
    const again = await as(h.http.post(`/api/runs/${run.id}/cancel`), manager);
    expect(again.status).toBe(409);
    expect(again.body.error).toBe('run is already cancelled');
  });

  it('needs a verified e-mail to start a run', async () => {
    const u = await createUser(h, 'Unverified Member', { verified: false });
    await h.deps.db.insert(memberships).values({ labId, userId: u.id, role: 'author' });
    const s = await signIn(h, u.email, TEST_PASSWORD);
    const res = await create(s, 'Not yet', { lattice: { preset: 'square' }, chips: 1 });
    expect(res.status).toBe(403);
    expect(res.body.error).toBe('verify your e-mail first');
  });
});

describe('runs of no grains', () => {
  const rowsOf = async (lab: string) => (await h.deps.db.select({ id: runs.id }).from(runs).where(eq(runs.labId, lab))).length;
  const entriesOf = async (lab: string) => (await h.deps.db.select({ id: ledgerEntries.id }).from(ledgerEntries).where(eq(ledgerEntries.labId, lab))).length;

  it('are refused beside the grain count, before a row or a charge exists', async () => {
    const [r0, e0] = [await rowsOf(labId), await entriesOf(labId)];
    const res = await create(author, 'Nothing at all', { lattice: { preset: 'square' }, chips: 0 });
    expect(res.status).toBe(400);
    expect(res.body.issues).toEqual([{ path: 'spec.chips', message: 'must be at least 1' }]);
    expect(res.body.error).toMatch(/spec\.chips: must be at least 1/);
    const estimate = await as(h.http.post('/api/estimates'), author).send({ spec: { lattice: { preset: 'square' }, chips: 0 } });
    expect(estimate.status).toBe(400);
    expect(estimate.body.issues).toEqual([{ path: 'spec.chips', message: 'must be at least 1' }]);
    expect([await rowsOf(labId), await entriesOf(labId)]).toEqual([r0, e0]);
    await create(author, 'One grain', { lattice: { preset: 'square' }, chips: 1 }).expect(201);
  });

  it('stored before the rule still read back, but are not run again as they were', async () => {
    // a lab of its own, so the listings above keep their counts
    const oldLab = await createLab(h, 'Old Runs Lab', [{ userId: authorId, role: 'author' }]);
    const [old] = await h.deps.db
      .insert(runs)
      .values({ labId: oldLab, authorId, title: 'An empty pile from before', spec: { lattice: { preset: 'square' }, chips: 0, sources: [], background: { kind: 'constant', height: 0 } }, status: 'finished', finishedAt: new Date() })
      .returning();
    const got = runResponseSchema.parse((await as(h.http.get(`/api/runs/${old!.id}`), author).expect(200)).body);
    expect(got.run.spec.chips).toBe(0);
    const listed = listRunsResponseSchema.parse((await as(h.http.get(`/api/runs?labId=${oldLab}`), author).expect(200)).body);
    expect(listed.runs.map((r) => r.id)).toEqual([old!.id]);

    const again = await as(h.http.post(`/api/runs/${old!.id}/rerun`), author).send({});
    expect(again.status).toBe(400);
    expect(again.body.issues).toEqual([{ path: 'spec.chips', message: 'must be at least 1' }]);
    expect(again.body.error).toMatch(/duplicate it with edits/);
    expect([await rowsOf(oldLab), await entriesOf(oldLab)]).toEqual([1, 0]);
  });
});

describe('runs larger than the machines', () => {
  it('are refused for their memory, needed against available, not for their price, and leave nothing behind', async () => {
    // a lab of its own with no paid credits: were the price looked at first, this would be a 402
    const poorLab = await createLab(h, 'Huge Runs Lab', [{ userId: authorId, role: 'author' }]);
    const spec = runSpecSchema.parse({ lattice: { preset: 'honeycomb' }, chips: 1e12 });
    const e = estimateRun(spec);
    expect(e.bytes).toBeGreaterThan(totalmem());
    expect(e.credits).toBeGreaterThan(CREDIT_CHECK_MAX);
    const stored = async () => [
      (await h.deps.db.select({ id: runs.id }).from(runs).where(eq(runs.labId, poorLab))).length,
      (await h.deps.db.select({ id: ledgerEntries.id }).from(ledgerEntries).where(eq(ledgerEntries.labId, poorLab))).length,
    ];
    const before = await stored();
    const res = await as(h.http.post('/api/runs'), author).send({ labId: poorLab, title: 'A trillion grains', spec });
    expect(res.status).toBe(400);
    expect(res.body.error).toMatch(/^spec: this run needs about [\d,.]+ GiB of working memory \(a [\d,]+ × [\d,]+ domain, [\d,]+ cells at 16 bytes each\), more than the [\d,.]+ GiB of the machines that compute it; use fewer grains$/);
    expect(res.body.error).toContain(`a ${e.shape.map((s) => s.toLocaleString('en-US')).join(' × ')} domain`);
    expect(res.body.issues).toEqual([{ path: 'spec', message: expect.stringMatching(/^needs about [\d,.]+ GiB of working memory; the machines have [\d,.]+ GiB$/) }]);
    expect(await stored()).toEqual(before);
    expect(before[0]).toBe(0);
  });
});

describe('runs whose background can never stabilize', () => {
  // every site at its threshold − 1 or more: one grain makes every site topple in turn (common
  // practice; the engine refuses these too, renderer/src/engine/explosion.ts)
  const never: [string, unknown, string][] = [
    ['constant 3 on the square lattice', { lattice: { preset: 'square' }, chips: 1000, background: { kind: 'constant', height: 3 } }, 'spec.background.height'],
    ['constant 4 on the square lattice', { lattice: { preset: 'square' }, chips: 1000, background: { kind: 'constant', height: 4 } }, 'spec.background.height'],
    ['a checkerboard of 5 and 3', { lattice: { preset: 'square' }, chips: 10, background: { kind: 'checkerboard', a: 5, b: 3 } }, 'spec.background.a'],
    ['a motif of 3s and 4s', { lattice: { preset: 'square' }, chips: 10, background: { kind: 'motif', cells: [[3, 4], [4, 3]] } }, 'spec.background.cells'],
    ['random weights only on 3 and up', { lattice: { preset: 'square' }, chips: 10, background: { kind: 'random', seed: 1, weights: [0, 0, 0, 1, 2] } }, 'spec.background.weights'],
    ['annuli of 2 on the honeycomb lattice', { lattice: { preset: 'honeycomb' }, chips: 10, background: { kind: 'annuli', a: 2, b: 2 } }, 'spec.background.a'],
    ['constant 1 on the line', { lattice: { preset: 'line' }, chips: 10, background: { kind: 'constant', height: 1 } }, 'spec.background.height'],
    ['constant 5 on the cubic lattice', { lattice: { preset: 'cubic' }, chips: 10, background: { kind: 'constant', height: 5 } }, 'spec.background.height'],
    // the form sends the periodic presets as their unit cell: F-lattice, out-degree 2
    ['constant 1 on the F-lattice', { lattice: { periodic: { period: [2, 2], neighbours: [[[[1, 0], [-1, 0]], [[0, 1], [0, -1]]], [[[0, 1], [0, -1]], [[1, 0], [-1, 0]]]] }, name: 'f-lattice' }, chips: 10, background: { kind: 'constant', height: 1 } }, 'spec.background.height'],
  ];
  const stored = async (lab: string) => [
    (await h.deps.db.select({ id: runs.id }).from(runs).where(eq(runs.labId, lab))).length,
    (await h.deps.db.select({ id: ledgerEntries.id }).from(ledgerEntries).where(eq(ledgerEntries.labId, lab))).length,
  ];

  it.for(never)('refuses %s with 400 on the background field, storing and charging nothing', async ([, spec, path]) => {
    const lab = await createLab(h, `Never Lab ${path} ${Math.random().toString(36).slice(2, 8)}`, [{ userId: authorId, role: 'author' }]);
    const res = await as(h.http.post('/api/runs'), author).send({ labId: lab, title: 'Never stops', spec });
    expect(res.status).toBe(400);
    expect(res.body.issues).toHaveLength(1);
    expect(res.body.issues[0].path).toBe(path);
    expect(res.body.issues[0].message).toMatch(/on every site, (and \d+ is one below|at or above) .* the avalanche never stops, so the run could never finish; use a background with (heights of at most \d+ on some sites|some empty sites \(height 0\))$/);
    expect(res.body.error).toContain(path);
    const estimate = await as(h.http.post('/api/estimates'), author).send({ spec });
    expect(estimate.status).toBe(400);
    expect(estimate.body.issues.map((i: { path: string }) => i.path)).toEqual([path]);
    const { chips: _n, ...rest } = spec as { chips: number };
    const series = await as(h.http.post('/api/series'), author).send({ labId: lab, title: 'Never stops either', spec: rest, chips: [10, 100] });
    expect(series.status).toBe(400);
    expect(series.body.issues.map((i: { path: string }) => i.path)).toEqual([path]);
    expect(await stored(lab)).toEqual([0, 0]);
  });

  it('names the numbers of the lattice: constant 3 on the square lattice is one below its threshold 4', async () => {
    const res = await create(author, 'All threes', { lattice: { preset: 'square' }, chips: 1, background: { kind: 'constant', height: 3 } });
    expect(res.status).toBe(400);
    expect(res.body.issues[0].message).toMatch(/^this constant background puts at least 3 grains on every site, and 3 is one below the toppling threshold 4 of every site of this lattice: .* heights of at most 2 on some sites$/);
  });

  it('accepts backgrounds that might stabilize, with the estimator\'s warning above 2d − 2', async () => {
    // constant 2d − 2 = 2 on Z^2 stays compact (Fey, Levine & Peres, arXiv:0901.3805): no warning
    const two = { lattice: { preset: 'square' }, chips: 100, background: { kind: 'constant', height: 2 } };
    expect((await as(h.http.post('/api/estimates'), author).send({ spec: two }).expect(200)).body.estimate.warnings).toEqual([]);
    await create(author, 'All twos', two).expect(201);
    // mean above 2 but a site class below 3: it may stabilize, so only the warning
    const maybe = [
      { lattice: { preset: 'square' }, chips: 100, background: { kind: 'checkerboard', a: 3, b: 2 } },
      { lattice: { preset: 'square' }, chips: 100, background: { kind: 'random', seed: 3, weights: [0, 0, 1, 1] } },
      { lattice: { preset: 'triangular' }, chips: 100, background: { kind: 'motif', cells: [[5, 4]] } },
    ];
    for (const spec of maybe) {
      const e = await as(h.http.post('/api/estimates'), author).send({ spec }).expect(200);
      expect(e.body.estimate.warnings).toHaveLength(1);
      expect(e.body.estimate.warnings[0]).toMatch(/may grow much faster than expected or never stabilize$/);
      await create(author, 'Maybe', spec).expect(201);
    }
  });
});
