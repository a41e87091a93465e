import { Queue } from 'bullmq';
import { eq } from 'drizzle-orm';
import { Redis } from 'ioredis';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runs } from '../../drizzle/schema.js';
import { sendRunOutcomeMail } from '../../api/src/services/run-outcome-mail.js';
import { runResponseSchema, runSchema } from '../../shared/api/runs.js';
import { seriesResponseSchema } from '../../shared/api/series.js';
import { JOB_NAMES, jobIdFor, QUEUE_NAMES } from '../../shared/jobs.js';
import { as, createLab, createUser, signIn, startHarness, TEST_PASSWORD, type Harness, type Session } from './support/harness.js';
import { waitForMail } from './support/outbox.js';

let h: Harness;
let author: Session;
let authorEmail: string;
let labId: string;
let redis: Redis;
let compute: Queue;

beforeAll(async () => {
  h = await startHarness('actions');
  const a = await createUser(h, 'Action Author');
  authorEmail = a.email;
  labId = await createLab(h, 'Actions Lab', [{ userId: a.id, role: 'author' }]);
  author = await signIn(h, a.email, TEST_PASSWORD);
  redis = new Redis(h.env.REDIS_URL, { maxRetriesPerRequest: null });
  compute = new Queue(QUEUE_NAMES.compute, { connection: redis, prefix: h.queuePrefix });
});
afterAll(async () => {
  await compute.obliterate({ force: true });
  await compute.close();
  await redis.quit();
  await h.close();
});

const spec = { lattice: { preset: 'triangular' }, chips: 5000, background: { kind: 'checkerboard', a: 1, b: 0 } };
const submit = (title: string) => as(h.http.post('/api/runs'), author).send({ labId, title, spec }).expect(201).then((r) => runResponseSchema.parse(r.body).run);
const hasJob = async (runId: string, s: unknown) => (await compute.getJob(jobIdFor({ name: JOB_NAMES.computeRun, data: { runId, spec: s as never } })))?.data.runId === runId;

/** Parse a text/event-stream body into its events (HTML Living Standard, "server-sent events" parsing rules, simplified to event + data). */
function sseEvents(text: string): { event: string; data: unknown }[] {
  return text
    .split('\n\n')
    .filter((block) => block.includes('data:'))
    .map((block) => {
      const lines = block.split('\n');
      const event = lines.find((l) => l.startsWith('event:'))?.slice(6).trim() ?? 'message';
      const data = lines.filter((l) => l.startsWith('data:')).map((l) => l.slice(5).trim()).join('\n');
      return { event, data: JSON.parse(data) };
    });
}

describe('re-run', () => {
  it('submits the same specification as a new queued run with its own job', async () => {
    const first = await submit('Triangular on a checkerboard');
    await as(h.http.post(`/api/runs/${first.id}/cancel`), author).expect(200);
    const res = await as(h.http.post(`/api/runs/${first.id}/rerun`), author).send({});
    expect(res.status).toBe(201);
    const again = runResponseSchema.parse(res.body).run;
    expect(again.id).not.toBe(first.id);
    expect(again).toMatchObject({ status: 'queued', title: first.title, spec: first.spec, seriesId: null });
    expect(await hasJob(again.id, again.spec)).toBe(true);
    const titled = await as(h.http.post(`/api/runs/${first.id}/rerun`), author).send({ title: 'Second look' }).expect(201);
    expect(titled.body.run.title).toBe('Second look');
    const bad = await as(h.http.post(`/api/runs/${first.id}/rerun`), author).send({ title: '' });
    expect(bad.status).toBe(400);
  });
});

describe('progress events', () => {
  it('streams the run as it changes and ends once it is finished', async () => {
    const run = await submit('Watched');
    const stream = as(h.http.get(`/api/runs/${run.id}/events`), author).buffer(true);
    const done = stream.then((r) => r);
    // what a worker would write, a little over a second apart so each poll sees one state (drizzle queries run on execute())
    setTimeout(() => void h.deps.db.update(runs).set({ status: 'computing', stage: 'toppling', progress: 0.5, updatedAt: new Date() }).where(eq(runs.id, run.id)).execute(), 300);
    setTimeout(() => void h.deps.db.update(runs).set({ status: 'finished', stage: null, progress: 1, finishedAt: new Date(), updatedAt: new Date() }).where(eq(runs.id, run.id)).execute(), 1500);
    const res = await done;
    expect(res.status).toBe(200);
    expect(res.headers['content-type']).toMatch(/^text\/event-stream/);
    const events = sseEvents(res.text);
    const states = events.filter((e) => e.event === 'run').map((e) => runSchema.parse((e.data as { run: unknown }).run));
    expect(states[0]!.status).toBe('queued');
    expect(states.at(-1)).toMatchObject({ status: 'finished', progress: 1 });
    expect(states.map((s) => s.status)).toContain('computing');
    expect(events.at(-1)).toEqual({ event: 'end', data: { status: 'finished' } });
  });
});

describe('series', () => {
  it('creates one run per grain count, ascending, grouped under one id', async () => {
    const res = await as(h.http.post('/api/series'), author).send({ labId, title: 'Square scaling', spec: { lattice: { preset: 'square' } }, chips: [1_000_000, 10_000, 100_000, 40_000] });
    expect(res.status).toBe(201);
    const { series } = seriesResponseSchema.parse(res.body);
    expect(series.runs.map((r) => r.spec.chips)).toEqual([10_000, 40_000, 100_000, 1_000_000]);
    // powers of ten with real superscripts, as every page writes them (the viewer shows these titles)
    expect(series.runs.map((r) => r.title)).toEqual(['Square scaling · n = 10⁴', 'Square scaling · n = 40,000', 'Square scaling · n = 10⁵', 'Square scaling · n = 10⁶']);
    expect(new Set(series.runs.map((r) => r.seriesId))).toEqual(new Set([series.id]));
    for (const r of series.runs) {
      expect(r.spec).toEqual({ lattice: { preset: 'square' }, chips: r.spec.chips, sources: [], background: { kind: 'constant', height: 0 } });
      expect(await hasJob(r.id, r.spec)).toBe(true);
    }
    const got = seriesResponseSchema.parse((await as(h.http.get(`/api/series/${series.id}`), author).expect(200)).body);
    expect(got.series).toEqual(series);
  });

  it('refuses a bad request with the field that is wrong, creating nothing', async () => {
    const before = await h.deps.db.select({ id: runs.id }).from(runs).where(eq(runs.labId, labId));
    const post = (body: object) => as(h.http.post('/api/series'), author).send({ labId, title: 'Bad', spec: { lattice: { preset: 'square' } }, ...body });
    const cases: [object, RegExp][] = [
      [{ chips: [100] }, /chips: a series needs at least 2/],
      [{ chips: [100, 100] }, /chips: grain counts must be distinct/],
      [{ chips: [100, 0] }, /chips\.1: each grain count must be at least 1/],
      [{ chips: [100, 200], spec: { lattice: { preset: 'square' }, chips: 5 } }, /spec: Unrecognized key/i],
      [{ chips: [100, 200], spec: { lattice: { preset: 'square' }, background: { kind: 'array', sha256: 'a'.repeat(64), shape: [3, 3] } } }, /upload it first/],
    ];
    for (const [body, message] of cases) {
      const res = await post(body);
      expect({ status: res.status, error: res.body.error }).toMatchObject({ status: 400, error: expect.stringMatching(message) });
    }
    const after = await h.deps.db.select({ id: runs.id }).from(runs).where(eq(runs.labId, labId));
    expect(after.length).toBe(before.length);
  });
});

describe('the outcome mail of a failed run', () => {
  it('names the reason and links to the run page', async () => {
    const run = await submit('Doomed');
    const created = new Date(Date.now() - 5 * 60 * 1000);
    await h.deps.db.update(runs).set({ status: 'failed', error: 'the pile reached the edge of the allowed domain', createdAt: created, finishedAt: new Date() }).where(eq(runs.id, run.id));
    expect(await sendRunOutcomeMail(h.deps, run.id)).toBe('sent');
    const mail = await waitForMail(h.env, authorEmail, /Run failed: Doomed/);
    expect(mail.text).toContain('the pile reached the edge of the allowed domain');
    expect(mail.text).toContain(`${h.env.PUBLIC_URL}/runs/${run.id}`);
    // the wait since submission; no farm time, since no worker ever started it
    expect(mail.text).toMatch(/stopped 5 min 0\d s after you submitted it, without a result\./);
    // a run still going gets none
    const live = await submit('Still going');
    expect(await sendRunOutcomeMail(h.deps, live.id)).toBe('not-final');
  });
});
