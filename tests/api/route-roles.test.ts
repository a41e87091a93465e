import { randomUUID } from 'node:crypto';
import type supertest from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { apiTokens, figures, invitations, memberships, runs } from '../../drizzle/schema.js';
import { API_ROUTERS } from '../../api/src/app.js';
import { issueEmailToken } from '../../api/src/auth/email-tokens.js';
import { randomToken, sha256Hex } from '../../api/src/auth/secrets.js';
import { INVITATION_TTL_MS } from '../../api/src/services/invitations.js';
import { as, createLab, createUser, signIn, startHarness, TEST_PASSWORD, type Harness, type Session } from './support/harness.js';

/**
 * Every API route against every kind of caller, with the status each must get:
 * reader = no account; author / manager = members of lab A with that role; admin = site admin who
 * is NOT a member of lab A (site-wide review rights only); other = manager of another lab (B).
 * Rule of thumb: 401 signed out, 403 signed in without the right, 404 for another lab's objects.
 */

const ROLES = ['reader', 'author', 'manager', 'admin', 'other'] as const;
type Role = (typeof ROLES)[number];
type User = { id: string; email: string; name: string };
type Actor = { role: Role; user: User | null; session: Session | null };
type Row = { route: string; expect: Record<Role, number>; send: (a: Actor) => PromiseLike<supertest.Response> };

const all = (status: number): Record<Role, number> => ({ reader: status, author: status, manager: status, admin: status, other: status });
const signedIn = (status: number): Record<Role, number> => ({ ...all(status), reader: 401 });

let h: Harness;
const people = {} as Record<Exclude<Role, 'reader'> | 'author2' | 'spare', User>;
let labA: string;
let runA: string;
let serial = 0;
const fresh = () => `${h.tag}-${++serial}`;

async function newRunInA(): Promise<string> {
  const [r] = await h.deps.db
    .insert(runs)
    .values({ labId: labA, authorId: people.author2.id, title: `fixture ${fresh()}`, spec: { lattice: { preset: 'square' }, chips: 10, sources: [], background: { kind: 'constant', height: 0 } } })
    .returning();
  return r!.id;
}

async function newInvitation(labId: string, email: string, invitedById: string): Promise<{ id: string; token: string }> {
  const token = randomToken();
  const [inv] = await h.deps.db
    .insert(invitations)
    .values({ labId, email, role: 'author', tokenHash: sha256Hex(token), invitedById, expiresAt: new Date(Date.now() + INVITATION_TTL_MS) })
    .returning();
  return { id: inv!.id, token };
}

const ROWS: Row[] = [
  { route: 'GET /api/health', expect: all(200), send: (a) => as(h.http.get('/api/health'), a.session) },
  { route: 'GET /api/health/ready', expect: all(200), send: (a) => as(h.http.get('/api/health/ready'), a.session) },
  {
    route: 'POST /api/auth/sign-up',
    expect: all(201),
    send: (a) => as(h.http.post('/api/auth/sign-up'), a.session).send({ email: h.email(`new-${fresh()}`), password: 'a-long-password', name: 'Newcomer' }),
  },
  {
    route: 'POST /api/auth/verify-email',
    expect: all(200),
    send: async (a) => {
      const u = await createUser(h, `verify-${fresh()}`, { verified: false });
      const token = await issueEmailToken(h.deps.db, u.id, 'verify_email');
      return as(h.http.post('/api/auth/verify-email'), a.session).send({ token });
    },
  },
  {
    // every fixture user is verified already
    route: 'POST /api/auth/verify-email/resend',
    expect: signedIn(409),
    send: (a) => as(h.http.post('/api/auth/verify-email/resend'), a.session),
  },
  { route: 'POST /api/auth/sign-in', expect: all(200), send: (a) => as(h.http.post('/api/auth/sign-in'), a.session).send({ email: people.spare.email, password: TEST_PASSWORD }) },
  { route: 'POST /api/auth/sign-out', expect: { ...signedIn(204) }, send: (a) => as(h.http.post('/api/auth/sign-out'), a.session) },
  { route: 'POST /api/auth/password-reset', expect: all(202), send: (a) => as(h.http.post('/api/auth/password-reset'), a.session).send({ email: h.email(`nobody-${fresh()}`) }) },
  {
    route: 'POST /api/auth/password-reset/complete',
    expect: all(200),
    send: async (a) => {
      const u = await createUser(h, `reset-${fresh()}`);
      const token = await issueEmailToken(h.deps.db, u.id, 'reset_password');
      return as(h.http.post('/api/auth/password-reset/complete'), a.session).send({ token, password: 'another-long-one' });
    },
  },
  { route: 'GET /api/me', expect: signedIn(200), send: (a) => as(h.http.get('/api/me'), a.session) },
  {
    route: 'PUT /api/me/active-lab',
    expect: { reader: 401, author: 200, manager: 200, admin: 404, other: 404 },
    send: (a) => as(h.http.put('/api/me/active-lab'), a.session).send({ labId: labA }),
  },
  { route: 'GET /api/me/tokens', expect: signedIn(200), send: (a) => as(h.http.get('/api/me/tokens'), a.session) },
  { route: 'POST /api/me/tokens', expect: signedIn(201), send: (a) => as(h.http.post('/api/me/tokens'), a.session).send({ label: 'table' }) },
  {
    route: 'DELETE /api/me/tokens/:id',
    expect: signedIn(204),
    send: async (a) => {
      let id: string = randomUUID();
      if (a.user) {
        const [t] = await h.deps.db.insert(apiTokens).values({ userId: a.user.id, label: 'to revoke', tokenHash: sha256Hex(randomToken()), prefix: 'tw_xxxxxx' }).returning();
        id = t!.id;
      }
      return as(h.http.delete(`/api/me/tokens/${id}`), a.session);
    },
  },
  { route: 'POST /api/labs', expect: signedIn(201), send: (a) => as(h.http.post('/api/labs'), a.session).send({ name: `Table Lab ${fresh()}` }) },
  {
    route: 'GET /api/labs/:labId',
    expect: { reader: 401, author: 200, manager: 200, admin: 200, other: 404 },
    send: (a) => as(h.http.get(`/api/labs/${labA}`), a.session),
  },
  {
    route: 'POST /api/labs/:labId/invitations',
    expect: { reader: 401, author: 403, manager: 201, admin: 403, other: 404 },
    send: (a) => as(h.http.post(`/api/labs/${labA}/invitations`), a.session).send({ email: h.email(`invitee-${fresh()}`), role: 'author' }),
  },
  {
    route: 'DELETE /api/labs/:labId/invitations/:id',
    expect: { reader: 401, author: 403, manager: 204, admin: 403, other: 404 },
    send: async (a) => {
      const inv = await newInvitation(labA, h.email(`withdraw-${fresh()}`), people.manager.id);
      return as(h.http.delete(`/api/labs/${labA}/invitations/${inv.id}`), a.session);
    },
  },
  {
    route: 'DELETE /api/labs/:labId/members/:userId',
    expect: { reader: 401, author: 403, manager: 204, admin: 403, other: 404 },
    send: async (a) => {
      const m = await createUser(h, `member-${fresh()}`);
      await h.deps.db.insert(memberships).values({ labId: labA, userId: m.id, role: 'author' });
      return as(h.http.delete(`/api/labs/${labA}/members/${m.id}`), a.session);
    },
  },
  {
    route: 'PUT /api/labs/:labId/members/:userId/quota',
    expect: { reader: 401, author: 403, manager: 200, admin: 403, other: 404 },
    send: (a) => as(h.http.put(`/api/labs/${labA}/members/${people.author2.id}/quota`), a.session).send({ monthlyQuota: 700 }),
  },
  {
    route: 'GET /api/invitations/:token',
    expect: all(200),
    send: async (a) => {
      const inv = await newInvitation(labA, h.email(`preview-${fresh()}`), people.manager.id);
      return as(h.http.get(`/api/invitations/${inv.token}`), a.session);
    },
  },
  {
    route: 'POST /api/invitations/:token/accept',
    expect: signedIn(200),
    send: async (a) => {
      // a lab none of them belongs to, inviting the caller's own address
      const host = await createUser(h, `host-${fresh()}`);
      const labC = await createLab(h, `Host Lab ${fresh()}`, [{ userId: host.id, role: 'manager' }]);
      const inv = await newInvitation(labC, a.user?.email ?? h.email(`anon-${fresh()}`), host.id);
      return as(h.http.post(`/api/invitations/${inv.token}/accept`), a.session);
    },
  },
  {
    route: 'GET /api/runs',
    expect: { reader: 401, author: 200, manager: 200, admin: 200, other: 404 },
    send: (a) => as(h.http.get(`/api/runs?labId=${labA}`), a.session),
  },
  {
    route: 'GET /api/runs/:id',
    expect: { reader: 401, author: 200, manager: 200, admin: 200, other: 404 },
    send: (a) => as(h.http.get(`/api/runs/${runA}`), a.session),
  },
  {
    route: 'POST /api/runs',
    expect: { reader: 401, author: 201, manager: 201, admin: 403, other: 404 },
    send: (a) => as(h.http.post('/api/runs'), a.session).send({ labId: labA, title: 'table run', spec: { lattice: { preset: 'square' }, chips: 5 } }),
  },
  {
    // the run belongs to a second author, so the first author is not its author
    route: 'POST /api/runs/:id/cancel',
    expect: { reader: 401, author: 403, manager: 200, admin: 200, other: 404 },
    send: async (a) => as(h.http.post(`/api/runs/${await newRunInA()}/cancel`), a.session),
  },
  { route: 'GET /api/figures', expect: all(200), send: (a) => as(h.http.get('/api/figures'), a.session) },
  { route: 'GET /api/figures/:slug', expect: all(200), send: (a) => as(h.http.get(`/api/figures/published-${h.tag}`), a.session) },
  {
    route: 'GET /api/figures/:slug (draft)',
    expect: { reader: 404, author: 200, manager: 200, admin: 200, other: 404 },
    send: (a) => as(h.http.get(`/api/figures/draft-${h.tag}`), a.session),
  },
  {
    route: 'GET /api/admin/labs',
    expect: { reader: 401, author: 403, manager: 403, admin: 200, other: 403 },
    send: (a) => as(h.http.get('/api/admin/labs'), a.session),
  },
  {
    route: 'GET /api/admin/users',
    expect: { reader: 401, author: 403, manager: 403, admin: 200, other: 403 },
    send: (a) => as(h.http.get('/api/admin/users'), a.session),
  },
  { route: 'GET /api/dev/outbox', expect: all(200), send: (a) => as(h.http.get('/api/dev/outbox'), a.session) },
];

beforeAll(async () => {
  h = await startHarness('roles');
  people.author = await createUser(h, 'Table Author');
  people.author2 = await createUser(h, 'Table Second Author');
  people.manager = await createUser(h, 'Table Manager');
  people.admin = await createUser(h, 'Table Admin', { isAdmin: true });
  people.other = await createUser(h, 'Table Outsider');
  people.spare = await createUser(h, 'Table Spare');
  labA = await createLab(h, 'Lab A', [
    { userId: people.author.id, role: 'author' },
    { userId: people.author2.id, role: 'author' },
    { userId: people.manager.id, role: 'manager' },
  ]);
  await createLab(h, 'Lab B', [{ userId: people.other.id, role: 'manager' }]);
  runA = await newRunInA();
  await h.deps.db.insert(figures).values([
    { slug: `published-${h.tag}`, title: 'Published', runId: runA, createdById: people.author.id, publishedAt: new Date() },
    { slug: `draft-${h.tag}`, title: 'Draft', runId: runA, createdById: people.author.id },
  ]);
});
afterAll(async () => {
  await h.close();
});

describe('the table covers every route the API mounts', () => {
  it('has one row per mounted route', () => {
    const mounted: string[] = [];
    for (const build of Object.values(API_ROUTERS)) {
      const router = build(h.deps) as unknown as { stack: { route?: { path: string; methods: Record<string, boolean> } }[] };
      for (const layer of router.stack) {
        if (!layer.route) continue;
        for (const m of Object.keys(layer.route.methods)) mounted.push(`${m.toUpperCase()} /api${layer.route.path}`);
      }
    }
    const inTable = new Set(ROWS.map((r) => r.route.replace(/ \(.*\)$/, '')));
    expect(mounted.length).toBe(31);
    expect(mounted.filter((r) => !inTable.has(r))).toEqual([]);
    expect([...inTable].filter((r) => !mounted.includes(r))).toEqual([]);
  });
});

for (const row of ROWS) {
  describe(row.route, () => {
    for (const role of ROLES) {
      it(`${role} → ${row.expect[role]}`, async () => {
        const user = role === 'reader' ? null : people[role];
        // a fresh session per call: some rows (sign-out) end the one they use
        const session = user ? await signIn(h, user.email, TEST_PASSWORD) : null;
        const res = await row.send({ role, user, session });
        expect({ status: res.status, body: res.status >= 400 ? res.body : undefined }).toMatchObject({ status: row.expect[role] });
        if (res.status >= 400) expect(typeof res.body.error).toBe('string');
      });
    }
  });
}
