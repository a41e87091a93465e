import { count, eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { creditPurchases, emailTokens, figures, ledgerEntries, runs, sessions, users } from '../../drizzle/schema.js';
import { listFiguresResponseSchema } from '../../shared/api/figures.js';
import { listRunsResponseSchema } from '../../shared/api/runs.js';
import supertest from 'supertest';
import { API_CATALOGUE } from '../../api/src/openapi/catalogue.js';
import { createApp } from '../../api/src/app.js';
import { issueEmailToken } from '../../api/src/auth/email-tokens.js';
import { sha256Hex } from '../../api/src/auth/secrets.js';
import { finishedRun } from '../api/figures-fixtures.js';
import { as, createLab, createUser, signIn, startHarness, TEST_PASSWORD, type Harness, type Session } from '../api/support/harness.js';

/**
 * Security properties the issue lists that other files did not yet check: sessions expire and can
 * be revoked, secrets are stored hashed, every cookie-authenticated change needs the CSRF header,
 * helmet's headers are set, another lab's objects are 404 and absent from lists, and a run needing
 * more memory than the machine has is refused with the estimate before anything is recorded.
 */

let h: Harness;
let a: Session;
let userA: { id: string; email: string };
let labA: string;
let labB: string;
let runB: string;
let figureB: string;
let purchaseB: string;

beforeAll(async () => {
  h = await startHarness('security');
  const ua = await createUser(h, 'Lab A Manager');
  const ub = await createUser(h, 'Lab B Manager');
  userA = ua;
  labA = await createLab(h, 'Security Lab A', [{ userId: ua.id, role: 'manager' }]);
  labB = await createLab(h, 'Security Lab B', [{ userId: ub.id, role: 'manager' }]);
  a = await signIn(h, ua.email, TEST_PASSWORD);
  await finishedRun(h, labA, ua.id, 'visible to A');
  runB = await finishedRun(h, labB, ub.id, 'private to B');
  const [f] = await h.deps.db.insert(figures).values({ slug: `draft-b-${h.tag}`, title: 'B draft', runId: runB, createdById: ub.id }).returning();
  figureB = f!.slug;
  const [p] = await h.deps.db.insert(creditPurchases).values({ labId: labB, buyerId: ub.id, pack: 'sheet', credits: 1000, amount: 2000, currency: 'eur', checkoutSessionId: `cs_security_${h.tag}` }).returning();
  purchaseB = p!.id;
});
afterAll(async () => {
  await h.close();
});

describe('sessions', () => {
  it('expire: a session past its expiry is signed out, whatever the cookie says', async () => {
    const s = await signIn(h, userA.email, TEST_PASSWORD);
    await as(h.http.get('/api/me'), s).expect(200);
    const jti = JSON.parse(Buffer.from(s.cookie.match(/tw_session=([^;.]+)\.([^;.]+)\./)![2]!, 'base64url').toString()).jti as string;
    await h.deps.db.update(sessions).set({ expiresAt: new Date(Date.now() - 1000) }).where(eq(sessions.id, jti));
    await as(h.http.get('/api/me'), s).expect(200, { signedIn: false });
    const res = await as(h.http.get('/api/me/tokens'), s);
    expect(res.status).toBe(401);
    expect(res.body.error).toBe('sign in first');
  });

  it('can be revoked: after sign-out the same cookie no longer works, and the row says when', async () => {
    const s = await signIn(h, userA.email, TEST_PASSWORD);
    await as(h.http.post('/api/auth/sign-out'), s).expect(204);
    expect((await as(h.http.get('/api/me'), s)).body).toEqual({ signedIn: false });
    expect((await as(h.http.get('/api/me/tokens'), s)).status).toBe(401);
    const jti = JSON.parse(Buffer.from(s.cookie.match(/tw_session=([^;.]+)\.([^;.]+)\./)![2]!, 'base64url').toString()).jti as string;
    const [row] = await h.deps.db.select().from(sessions).where(eq(sessions.id, jti));
    expect(row!.revokedAt).toBeInstanceOf(Date);
  });
});

describe('sign-in', () => {
  it('is rate limited per address outside tests: the 51st attempt in 15 minutes answers 429 with a message', { timeout: 60_000 }, async () => {
    // the suite's own app skips the limiter (NODE_ENV=test); this one is configured as in development
    const limited = supertest(createApp({ ...h.deps, env: { ...h.env, NODE_ENV: 'development' } }, { distDir: '/nonexistent' }));
    const statuses: number[] = [];
    for (let k = 0; k < 50; k++) statuses.push((await limited.post('/api/auth/sign-in').send({ email: userA.email, password: 'wrong-password-guess' })).status);
    expect(statuses.every((s) => s === 401)).toBe(true);
    const last = await limited.post('/api/auth/sign-in').send({ email: userA.email, password: TEST_PASSWORD });
    expect(last.status).toBe(429);
    expect(last.body.error).toMatch(/too many attempts/);
  });
});

describe('secrets at rest', () => {
  it('keeps only hashes: mailed tokens as sha256, passwords as argon2id with the OWASP parameters, sessions without their JWT', async () => {
    const token = await issueEmailToken(h.deps.db, userA.id, 'verify_email');
    const rows = await h.deps.db.select().from(emailTokens).where(eq(emailTokens.userId, userA.id));
    expect(rows.map((r) => r.tokenHash)).toContain(sha256Hex(token));
    expect(JSON.stringify(rows)).not.toContain(token);
    const [u] = await h.deps.db.select().from(users).where(eq(users.id, userA.id));
    // PHC string of argon2id; m=19456 KiB, t=2, p=1 is the OWASP Password Storage Cheat Sheet's first option (from memory)
    expect(u!.passwordHash).toMatch(/^\$argon2id\$v=19\$m=19456,t=2,p=1\$/);
    expect(u!.passwordHash).not.toContain(TEST_PASSWORD);
    const jwt = a.cookie.match(/tw_session=([^;]+)/)![1]!;
    const all = await h.deps.db.select().from(sessions).where(eq(sessions.userId, userA.id));
    expect(JSON.stringify(all)).not.toContain(jwt);
  });
});

describe('CSRF', () => {
  it('refuses every catalogued signed-in change sent with the session cookie but without the header', async () => {
    const unsafe = API_CATALOGUE.filter((r) => r.method !== 'get' && (r.access === 'user' || r.access === 'admin'));
    expect(unsafe.length).toBeGreaterThan(20);
    const before = await h.deps.db.select({ n: count() }).from(ledgerEntries);
    for (const route of unsafe) {
      const path = route.path.replace(/:labId/g, labA).replace(/:userId/g, userA.id).replace(/:token/g, 'A'.repeat(43)).replace(/:slug/g, 'some-figure').replace(/:queue/g, 'tw-compute').replace(/:jobId/g, 'x').replace(/:[A-Za-z]+/g, '00000000-0000-4000-8000-000000000000');
      const res = await h.http[route.method](`/api${path}`).set('Cookie', a.cookie).send({});
      expect(res.status, `${route.method} ${route.path}`).toBe(403);
      expect(res.body.error, route.path).toBe('missing or wrong CSRF token');
    }
    expect(await h.deps.db.select({ n: count() }).from(ledgerEntries)).toEqual(before);
  });
});

describe('security headers', () => {
  it('sets helmet\'s headers on API answers (helmet 8 defaults, from its documentation; from memory)', async () => {
    const res = await h.http.get('/api/health');
    expect(res.headers).toMatchObject({
      'x-content-type-options': 'nosniff',
      'x-frame-options': 'SAMEORIGIN',
      'referrer-policy': 'no-referrer',
      'cross-origin-opener-policy': 'same-origin',
      'cross-origin-resource-policy': 'same-origin',
      'x-dns-prefetch-control': 'off',
      'x-download-options': 'noopen',
      'x-permitted-cross-domain-policies': 'none',
      'origin-agent-cluster': '?1',
    });
    expect(res.headers['strict-transport-security']).toMatch(/max-age=\d+/);
    expect(res.headers['content-security-policy']).toMatch(/frame-ancestors 'self'/);
    expect(res.headers['content-security-policy']).toMatch(/object-src 'none'/);
    expect(res.headers['x-powered-by']).toBeUndefined();
  });
});

describe('another lab\'s objects', () => {
  it('answer 404, not 403, and never appear in lists', async () => {
    for (const url of [
      `/api/runs/${runB}`, `/api/runs/${runB}/events`, `/api/runs/${runB}/arrays/run.json`, `/api/runs/${runB}/views/heights/tidewater/iiif/info.json`,
      `/api/runs?labId=${labB}`, `/api/labs/${labB}`, `/api/labs/${labB}/figures`, `/api/figures/${figureB}`, `/api/figures/${figureB}/arrays/run.json`,
      `/api/labs/${labB}/credits`, `/api/labs/${labB}/credits/ledger`, `/api/labs/${labB}/credits/purchases/${purchaseB}`, `/api/labs/${labA}/credits/purchases/${purchaseB}`,
    ]) {
      const res = await as(h.http.get(url), a);
      expect(res.status, url).toBe(404);
      expect(JSON.stringify(res.body), url).not.toContain(runB);
    }
    for (const [method, url] of [['post', `/api/runs/${runB}/cancel`], ['post', `/api/runs/${runB}/rerun`], ['post', `/api/figures/${figureB}/publish`], ['put', `/api/figures/${figureB}`]] as const) {
      const res = await as(h.http[method](url), a).send(method === 'put' ? { title: 'taken over' } : {});
      expect(res.status, url).toBe(404);
    }
    const mine = listRunsResponseSchema.parse((await as(h.http.get(`/api/runs?labId=${labA}&pageSize=100`), a).expect(200)).body);
    expect(mine.runs.length).toBeGreaterThan(0);
    expect(mine.runs.map((r) => r.id)).not.toContain(runB);
    const published = listFiguresResponseSchema.parse((await h.http.get('/api/figures').expect(200)).body);
    expect(published.figures.map((f) => f.slug)).not.toContain(figureB);
    const ledger = (await as(h.http.get(`/api/labs/${labA}/credits/ledger`), a).expect(200)).body;
    expect(JSON.stringify(ledger)).not.toContain(labB);
    const summary = (await as(h.http.get(`/api/labs/${labA}/credits`), a).expect(200)).body;
    expect(JSON.stringify(summary)).not.toContain(purchaseB);
  });
});

describe('runs larger than the machine', () => {
  it('are refused before anything is recorded, with the estimate', async () => {
    const rows = async () => (await h.deps.db.select({ n: count() }).from(runs).where(eq(runs.labId, labA)))[0]!.n;
    const entries = async () => (await h.deps.db.select({ n: count() }).from(ledgerEntries).where(eq(ledgerEntries.labId, labA)))[0]!.n;
    const [r0, e0] = [await rows(), await entries()];
    const huge = { lattice: { preset: 'square' }, chips: 1e12 };
    const res = await as(h.http.post('/api/runs'), a).send({ labId: labA, title: 'too big', spec: huge });
    expect(res.status).toBe(400);
    expect(res.body.error).toMatch(/^spec: this run needs about [\d,.]+ GiB of working memory \(a [\d,]+ × [\d,]+ domain, [\d,]+ cells at \d+ bytes each\), more than the [\d,.]+ GiB/);
    const series = await as(h.http.post('/api/series'), a).send({ labId: labA, title: 'too big series', spec: { lattice: { preset: 'square' } }, chips: [1000, 1e12] });
    expect(series.status).toBe(400);
    expect(series.body.error).toMatch(/GiB of working memory/);
    expect([await rows(), await entries()]).toEqual([r0, e0]);
    // the estimate answers with the same reason (an answer, not an error), so the form shows it before
    // any submit (or credit check)
    const est = await as(h.http.post('/api/estimates'), a).send({ spec: huge });
    expect(est.status).toBe(200);
    expect(`spec: ${est.body.refused.reason}`).toBe(res.body.error);
    expect([await rows(), await entries()]).toEqual([r0, e0]);
  });
});
