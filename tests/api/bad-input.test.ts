import { count, eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import supertest from 'supertest';
import { labs, runs, users } from '../../drizzle/schema.js';
import { apiErrorSchema } from '../../shared/api/errors.js';
import { createApp } from '../../api/src/app.js';
import { createSmtpMailer } from '../../api/src/mail/mailer.js';
import { as, createLab, createUser, signIn, startHarness, TEST_PASSWORD, type Harness, type Session } from './support/harness.js';

let h: Harness;
let s: Session;
let labId: string;

beforeAll(async () => {
  h = await startHarness('badin');
  const u = await createUser(h, 'Careful Author');
  s = await signIn(h, u.email, TEST_PASSWORD);
  labId = await createLab(h, 'Bad Input Lab', [{ userId: u.id, role: 'manager' }]);
});
afterAll(async () => {
  await h.close();
});

const runCount = async () => (await h.deps.db.select({ n: count() }).from(runs).where(eq(runs.labId, labId)))[0]!.n;
const labCount = async () => (await h.deps.db.select({ n: count() }).from(labs))[0]!.n;

describe('bad input gets a 4xx that says what was wrong, and changes nothing', () => {
  it('malformed JSON → 400', async () => {
    const before = await labCount();
    const res = await as(h.http.post('/api/labs'), s).set('Content-Type', 'application/json').send('{"name": "Broken');
    expect(res.status).toBe(400);
    expect(apiErrorSchema.parse(res.body)).toMatchObject({ error: 'malformed JSON in request body' });
    expect(res.body.requestId).toBe(res.headers['x-request-id']);
    expect(await labCount()).toBe(before);
  });

  it('wrong types → 400 naming each field', async () => {
    const res = await h.http.post('/api/auth/sign-up').send({ email: 42, password: ['x'], name: 'Typed' });
    expect(res.status).toBe(400);
    expect([...new Set(res.body.issues.map((i: { path: string }) => i.path))]).toEqual(['email', 'password']);
    expect(res.body.error).toMatch(/^invalid request body: email: .*; password: /);
  });

  it('unknown fields → 400 naming the key', async () => {
    const email = h.email('sneaky');
    const res = await h.http.post('/api/auth/sign-up').send({ email, password: 'long-enough-pass', name: 'Sneaky', isAdmin: true });
    expect(res.status).toBe(400);
    expect(res.body.issues).toEqual([{ path: '', message: 'Unrecognized key: "isAdmin"' }]);
    expect(await h.deps.db.select().from(users).where(eq(users.email, email))).toEqual([]);
  });

  it('a body over 1 MB → 413, and no run is stored', async () => {
    const before = await runCount();
    const body = { labId, title: 'x'.repeat(1_100_000), spec: { lattice: { preset: 'square' }, chips: 10 } };
    expect(JSON.stringify(body).length).toBeGreaterThan(1024 * 1024);
    const res = await as(h.http.post('/api/runs'), s).send(body);
    expect(res.status).toBe(413);
    expect(res.body.error).toBe('request body is too large (limit 1 MB)');
    expect(await runCount()).toBe(before);
  });

  it('a body that is not JSON → 415', async () => {
    const res = await as(h.http.post('/api/labs'), s).set('Content-Type', 'text/plain').send('name=Plain');
    expect(res.status).toBe(415);
    expect(res.body.error).toMatch(/Content-Type: application\/json/);
  });

  it('limits and choices zod checks without a message of its own are refused in plain words', async () => {
    // these used to answer zod's defaults: 'Too big: expected number to be <=100' and
    // 'Invalid option: expected one of "createdAt"|"finishedAt"|…'
    const big = await as(h.http.get('/api/runs'), s).query({ labId, pageSize: 100_000 });
    expect(big.status).toBe(400);
    expect(big.body.issues).toEqual([{ path: 'pageSize', message: 'must be at most 100' }]);
    expect(big.body.error).toBe('invalid request query: pageSize: must be at most 100');
    const sort = await as(h.http.get('/api/runs'), s).query({ labId, sort: 'nonsense' });
    expect(sort.status).toBe(400);
    expect(sort.body.issues).toEqual([{ path: 'sort', message: 'must be one of "createdAt", "finishedAt", "title", "status", "chips"' }]);
  });

  it('an invalid run spec → 400 with the path inside the spec, and no row or job', async () => {
    const before = await runCount();
    const res = await as(h.http.post('/api/runs'), s).send({ labId, title: 'negative', spec: { lattice: { preset: 'square' }, chips: -1 } });
    expect(res.status).toBe(400);
    expect(res.body.issues).toEqual([{ path: 'spec.chips', message: 'must be at least 1' }]);
    const bg = await as(h.http.post('/api/runs'), s).send({ labId, title: 'bg', spec: { lattice: { preset: 'square' }, chips: 5, background: { kind: 'plaid' } } });
    expect(bg.status).toBe(400);
    expect(bg.body.issues[0].path).toBe('spec.background.kind');
    expect(await runCount()).toBe(before);
    const waiting = await h.deps.queue.ping();
    expect(waiting).toBe(true);
  });

  it('bad query strings and ids → 400', async () => {
    const big = await as(h.http.get(`/api/runs?labId=${labId}&pageSize=1000`), s);
    expect(big.status).toBe(400);
    expect(big.body.issues[0].path).toBe('pageSize');
    const unknown = await as(h.http.get(`/api/runs?labId=${labId}&colour=red`), s);
    expect(unknown.status).toBe(400);
    expect(unknown.body.error).toMatch(/colour/);
    const badId = await as(h.http.get('/api/runs/not-a-uuid'), s);
    expect(badId.status).toBe(400);
    expect(badId.body.issues).toEqual([{ path: 'id', message: 'must be an id (UUID)' }]);
  });

  it('bad mailed tokens → 400 or 404 with a reason', async () => {
    const short = await h.http.post('/api/auth/verify-email').send({ token: 'abc' });
    expect(short.status).toBe(400);
    expect(short.body.issues).toEqual([{ path: 'token', message: 'not a valid token' }]);
    const unknown = await h.http.post('/api/auth/verify-email').send({ token: 'A'.repeat(43) });
    expect(unknown.status).toBe(400);
    expect(unknown.body.error).toBe('this verification link is invalid, used or expired');
    const inv = await h.http.get(`/api/invitations/${'B'.repeat(43)}`);
    expect(inv.status).toBe(404);
    expect(inv.body.error).toMatch(/unknown, already used, withdrawn or expired/);
  });

  it('an unknown API path → 404 in the error format', async () => {
    const res = await h.http.get('/api/nothing/here');
    expect(res.status).toBe(404);
    expect(res.body.error).toBe('no such API route: GET /api/nothing/here');
  });
});

describe('unexpected failures', () => {
  it('answer 500 with a request id, leak nothing, and roll back (mail server unreachable)', async () => {
    // the real SMTP client pointed at a port where nothing listens: sending fails inside the sign-up transaction
    const broken = createApp({ ...h.deps, mailer: createSmtpMailer('smtp://127.0.0.1:9', h.env.MAIL_FROM) }, { distDir: '/nonexistent' });
    const email = h.email('no-mail');
    const res = await supertest(broken).post('/api/auth/sign-up').send({ email, password: 'long-enough-pass', name: 'No Mail' });
    expect(res.status).toBe(500);
    expect(res.body).toEqual({ error: 'internal error; quote the request id when reporting it', requestId: res.headers['x-request-id'] });
    expect(JSON.stringify(res.body)).not.toMatch(/ECONNREFUSED|127\.0\.0\.1|stack/);
    expect(await h.deps.db.select().from(users).where(eq(users.email, email))).toEqual([]);
  });
});
