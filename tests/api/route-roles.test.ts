import { randomInt, randomUUID } from 'node:crypto';
import type supertest from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import sharp from 'sharp';
import { labs, apiTokens, creditPurchases, figures, invitations, memberships, runs, series, figureVersions } from '../../drizzle/schema.js';
import { writeNpy } from '../../renderer/src/npy/index.js';
import { printThumbnailKey } from '../../renderer/src/farm/artifacts.js';
import { figureSpecSchema } from '../../shared/print-spec.js';
import { legendFor, paletteById } from '../../shared/palettes.js';
import { finishedRun } from './figures-fixtures.js';
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
/** a finished, unpublished run of lab A with one stored tile and its arrays */
let runDone: string;
/** a finished run of lab A with statistics, which figures can be composed from */
let runPrintable: string;
let seriesA: string;
let uploadA: string;
const TILE_PATH = '0,0,256,256/256,/0/default.png';
/** a stored legend.json of one 1-cell view of height 4 (shape as renderer/src/render/pyramid.ts writes it) */
const LEGEND_STATS = { cells: 1, minHeight: 4, maxHeight: 4, heightCounts: [0, 0, 0, 0, 1], toppledCells: 0, maxOdometer: 0 };
const LEGEND_FIXTURE = {
  style: { layer: 'heights', palette: 'tidewater', untoppled: 'neutral' },
  stats: LEGEND_STATS,
  legend: legendFor(paletteById('tidewater'), 'heights', LEGEND_STATS),
  pixelsPerCell: 64,
};
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

/** A personal API token made directly in the database (the token flow has its own tests). */
async function tokenFor(userId: string): Promise<string> {
  const secret = `tw_${randomToken()}`;
  await h.deps.db.insert(apiTokens).values({ userId, label: 'fixture', tokenHash: sha256Hex(secret), prefix: secret.slice(0, 9) });
  return secret;
}

/** A lab managed by the table's manager for the admin rows that change a lab (suspension, notices), fresh per call. */
async function spareLab(opts: { suspended?: boolean; expiringRun?: boolean } = {}): Promise<string> {
  const id = await createLab(h, `Spare Lab ${fresh()}`, [{ userId: people.manager.id, role: 'manager' }]);
  if (opts.suspended) await h.deps.db.update(labs).set({ suspendedAt: new Date(), suspendedReason: 'fixture' }).where(eq(labs.id, id));
  if (opts.expiringRun) {
    const [r] = await h.deps.db
      .insert(runs)
      .values({ labId: id, authorId: people.manager.id, title: `old ${fresh()}`, spec: { lattice: { preset: 'square' }, chips: 10, sources: [], background: { kind: 'constant', height: 0 } }, status: 'finished', finishedAt: new Date(Date.now() - 179 * 86400_000) })
      .returning();
    await h.deps.blobs.put(`runs/${r!.id}/arrays/run.json`, '{}', 'application/json');
  }
  return id;
}

/** A figure of lab A with a ready first version (published or not), fresh per call; returns its slug. */
async function figureWithPrint(published: boolean): Promise<string> {
  const slug = `printed-${fresh()}`;
  const [f] = await h.deps.db.insert(figures).values({ slug, title: 'Printed', runId: runPrintable, createdById: people.author.id, publishedAt: published ? new Date() : null }).returning();
  await readyVersion(f!.id, published);
  return slug;
}

/** Version 1 printed; published with its figure, as POST /api/figures/:slug/publish leaves it. */
async function readyVersion(figureId: string, published: boolean): Promise<void> {
  const key = `figures/${figureId}/v1/fixture.png`;
  await h.deps.blobs.put(key, Buffer.from('png fixture'), 'image/png');
  await h.deps.db.insert(figureVersions).values({
    figureId,
    number: 1,
    spec: figureSpecSchema.parse({ panels: [{ runId: runPrintable }], size: { kind: 'column', column: 'single' } }),
    formats: ['png'],
    status: 'ready',
    publishedAt: published ? new Date() : null,
    files: [{ format: 'png', key, name: 'fixture.png', bytes: 11, sha256: '0'.repeat(64), widthPx: 1063, heightPx: 800 }],
  });
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
    route: 'POST /api/auth/password-reset/check',
    expect: all(200),
    send: async (a) => {
      const u = await createUser(h, `reset-check-${fresh()}`);
      const token = await issueEmailToken(h.deps.db, u.id, 'reset_password');
      return as(h.http.post('/api/auth/password-reset/check'), a.session).send({ token });
    },
  },
  {
    route: 'POST /api/auth/password-reset/complete',
    expect: all(200),
    send: async (a) => {
      const u = await createUser(h, `reset-${fresh()}`);
      const token = await issueEmailToken(h.deps.db, u.id, 'reset_password');
      return as(h.http.post('/api/auth/password-reset/complete'), a.session).send({ token, password: 'another-long-one' });
    },
  },
  // nobody signed in is an answer here (public pages ask), not a 401
  { route: 'GET /api/me', expect: all(200), send: (a) => as(h.http.get('/api/me'), a.session) },
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
    // a fresh author each call: managers and site admins may promote, the lab's authors and strangers may not
    route: 'PUT /api/labs/:labId/members/:userId/role',
    expect: { reader: 401, author: 403, manager: 200, admin: 200, other: 404 },
    send: async (a) => {
      const m = await createUser(h, `promoted-${fresh()}`);
      await h.deps.db.insert(memberships).values({ labId: labA, userId: m.id, role: 'author' });
      return as(h.http.put(`/api/labs/${labA}/members/${m.id}/role`), a.session).send({ role: 'manager', reason: 'route table' });
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
  {
    route: 'POST /api/runs/:id/rerun',
    expect: { reader: 401, author: 201, manager: 201, admin: 403, other: 404 },
    send: (a) => as(h.http.post(`/api/runs/${runA}/rerun`), a.session).send({}),
  },
  {
    // a finished run: the stream sends its state and ends at once
    route: 'GET /api/runs/:id/events',
    expect: { reader: 401, author: 200, manager: 200, admin: 200, other: 404 },
    send: (a) => as(h.http.get(`/api/runs/${runDone}/events`), a.session),
  },
  {
    route: 'GET /api/runs/:id/views/:layer/:palette/iiif/*path',
    expect: { reader: 404, author: 200, manager: 200, admin: 200, other: 404 },
    send: (a) => as(h.http.get(`/api/runs/${runDone}/views/heights/tidewater/iiif/${TILE_PATH}`), a.session),
  },
  {
    route: 'GET /api/runs/:id/views/:layer/:palette/iiif/*path (published)',
    expect: all(200),
    send: (a) => as(h.http.get(`/api/runs/${runA}/views/heights/tidewater/iiif/${TILE_PATH}`), a.session),
  },
  {
    route: 'GET /api/runs/:id/legend/:layer/:palette',
    expect: { reader: 404, author: 200, manager: 200, admin: 200, other: 404 },
    send: (a) => as(h.http.get(`/api/runs/${runDone}/legend/heights/tidewater`), a.session),
  },
  {
    route: 'GET /api/runs/:id/legend/:layer/:palette (published)',
    expect: all(200),
    send: (a) => as(h.http.get(`/api/runs/${runA}/legend/heights/tidewater`), a.session),
  },
  {
    route: 'GET /api/runs/:id/arrays/:name',
    expect: { reader: 404, author: 200, manager: 200, admin: 200, other: 404 },
    send: (a) => as(h.http.get(`/api/runs/${runDone}/arrays/heights.npy`), a.session),
  },
  {
    route: 'GET /api/runs/:id/arrays/:name (published)',
    expect: all(200),
    send: (a) => as(h.http.get(`/api/runs/${runA}/arrays/run.json`), a.session),
  },
  {
    route: 'GET /api/figures/:slug/views/:layer/:palette/iiif/*path',
    expect: all(200),
    send: (a) => as(h.http.get(`/api/figures/published-${h.tag}/views/heights/tidewater/iiif/${TILE_PATH}`), a.session),
  },
  {
    route: 'GET /api/figures/:slug/views/:layer/:palette/iiif/*path (draft)',
    expect: { reader: 404, author: 200, manager: 200, admin: 200, other: 404 },
    send: (a) => as(h.http.get(`/api/figures/draft-${h.tag}/views/heights/tidewater/iiif/${TILE_PATH}`), a.session),
  },
  {
    route: 'GET /api/figures/:slug/legend/:layer/:palette',
    expect: all(200),
    send: (a) => as(h.http.get(`/api/figures/published-${h.tag}/legend/heights/tidewater`), a.session),
  },
  {
    route: 'GET /api/figures/:slug/legend/:layer/:palette (draft)',
    expect: { reader: 404, author: 200, manager: 200, admin: 200, other: 404 },
    send: (a) => as(h.http.get(`/api/figures/draft-${h.tag}/legend/heights/tidewater`), a.session),
  },
  {
    route: 'GET /api/runs/:id/thumbnail',
    expect: { reader: 404, author: 200, manager: 200, admin: 200, other: 404 },
    send: (a) => as(h.http.get(`/api/runs/${runDone}/thumbnail`), a.session),
  },
  {
    route: 'GET /api/runs/:id/thumbnail (published)',
    expect: all(200),
    send: (a) => as(h.http.get(`/api/runs/${runA}/thumbnail`), a.session),
  },
  {
    route: 'GET /api/figures/:slug/thumbnail',
    expect: all(200),
    send: (a) => as(h.http.get(`/api/figures/published-${h.tag}/thumbnail`), a.session),
  },
  {
    route: 'GET /api/figures/:slug/thumbnail (draft)',
    expect: { reader: 404, author: 200, manager: 200, admin: 200, other: 404 },
    send: (a) => as(h.http.get(`/api/figures/draft-${h.tag}/thumbnail`), a.session),
  },
  {
    route: 'GET /api/figures/:slug/arrays/:name',
    expect: all(200),
    send: (a) => as(h.http.get(`/api/figures/published-${h.tag}/arrays/heights.npy`), a.session),
  },
  {
    route: 'POST /api/series',
    expect: { reader: 401, author: 201, manager: 201, admin: 403, other: 404 },
    send: (a) => as(h.http.post('/api/series'), a.session).send({ labId: labA, title: 'table series', spec: { lattice: { preset: 'square' } }, chips: [100, 400] }),
  },
  {
    route: 'GET /api/series/:id',
    expect: { reader: 401, author: 200, manager: 200, admin: 200, other: 404 },
    send: (a) => as(h.http.get(`/api/series/${seriesA}`), a.session),
  },
  {
    // different heights on every call, so each one stores a new upload
    route: 'POST /api/uploads/background',
    expect: { reader: 401, author: 201, manager: 201, admin: 403, other: 404 },
    send: (a) =>
      as(h.http.post(`/api/uploads/background?labId=${labA}`), a.session)
        .set('Content-Type', 'application/octet-stream')
        .send(Buffer.from(writeNpy([2, 3], Int32Array.from([randomInt(2 ** 30), 1, 2, 0, 1, 2])))),
  },
  {
    route: 'GET /api/uploads/background/:sha256',
    expect: signedIn(200),
    send: (a) => as(h.http.get(`/api/uploads/background/${uploadA}`), a.session),
  },
  {
    route: 'POST /api/estimates',
    expect: signedIn(200),
    send: (a) => as(h.http.post('/api/estimates'), a.session).send({ spec: { lattice: { preset: 'square' }, chips: 10000 } }),
  },
  { route: 'GET /api/openapi.json', expect: all(200), send: (a) => as(h.http.get('/api/openapi.json'), a.session) },
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
  { route: 'GET /api/admin/usage', expect: { reader: 401, author: 403, manager: 403, admin: 200, other: 403 }, send: (a) => as(h.http.get('/api/admin/usage'), a.session) },
  { route: 'GET /api/admin/usage.csv', expect: { reader: 401, author: 403, manager: 403, admin: 200, other: 403 }, send: (a) => as(h.http.get('/api/admin/usage.csv'), a.session) },
  {
    route: 'PUT /api/admin/labs/:labId/allowance',
    expect: { reader: 401, author: 403, manager: 403, admin: 200, other: 403 },
    send: async (a) => as(h.http.put(`/api/admin/labs/${await spareLab()}/allowance`), a.session).send({ freeAllowance: 50, reason: 'table row' }),
  },
  {
    // a lab of its own each time, so lab A keeps taking runs
    route: 'POST /api/admin/labs/:labId/suspension',
    expect: { reader: 401, author: 403, manager: 403, admin: 200, other: 403 },
    send: async (a) => as(h.http.post(`/api/admin/labs/${await spareLab()}/suspension`), a.session).send({ reason: 'table row' }),
  },
  {
    route: 'POST /api/admin/labs/:labId/reinstatement',
    expect: { reader: 401, author: 403, manager: 403, admin: 200, other: 403 },
    send: async (a) => as(h.http.post(`/api/admin/labs/${await spareLab({ suspended: true })}/reinstatement`), a.session).send({ reason: 'table row' }),
  },
  {
    route: 'POST /api/admin/labs/:labId/retention-notice',
    expect: { reader: 401, author: 403, manager: 403, admin: 200, other: 403 },
    send: async (a) => as(h.http.post(`/api/admin/labs/${await spareLab({ expiringRun: true })}/retention-notice`), a.session),
  },
  { route: 'GET /api/admin/farm', expect: { reader: 401, author: 403, manager: 403, admin: 200, other: 403 }, send: (a) => as(h.http.get('/api/admin/farm'), a.session) },
  {
    // no failed job has this id: the row checks the guard; tests/api/admin-console.test.ts retries a real one
    route: 'POST /api/admin/farm/jobs/:queue/:jobId/retry',
    expect: { reader: 401, author: 403, manager: 403, admin: 404, other: 403 },
    send: (a) => as(h.http.post('/api/admin/farm/jobs/tw-compute/run.compute--00000000-0000-4000-8000-000000000000/retry'), a.session),
  },
  { route: 'GET /api/admin/storage', expect: { reader: 401, author: 403, manager: 403, admin: 200, other: 403 }, send: (a) => as(h.http.get('/api/admin/storage'), a.session) },
  { route: 'GET /api/admin/audit', expect: { reader: 401, author: 403, manager: 403, admin: 200, other: 403 }, send: (a) => as(h.http.get(`/api/admin/audit?labId=${labA}`), a.session) },
  { route: 'GET /api/admin/audit.csv', expect: { reader: 401, author: 403, manager: 403, admin: 200, other: 403 }, send: (a) => as(h.http.get(`/api/admin/audit.csv?labId=${labA}`), a.session) },
  {
    route: 'GET /api/labs/:labId/figures',
    expect: { reader: 401, author: 200, manager: 200, admin: 200, other: 404 },
    send: (a) => as(h.http.get(`/api/labs/${labA}/figures`), a.session),
  },
  {
    route: 'POST /api/figures',
    expect: { reader: 401, author: 201, manager: 201, admin: 403, other: 404 },
    send: (a) => as(h.http.post('/api/figures'), a.session).send({ labId: labA, title: `Table figure ${fresh()}`, spec: { panels: [{ runId: runPrintable }], size: { kind: 'column', column: 'single' } } }),
  },
  {
    route: 'PUT /api/figures/:slug',
    expect: { reader: 401, author: 200, manager: 200, admin: 403, other: 404 },
    send: (a) => as(h.http.put(`/api/figures/draft-${h.tag}`), a.session).send({ caption: `edited ${fresh()}` }),
  },
  {
    route: 'POST /api/figures/:slug/versions',
    expect: { reader: 401, author: 202, manager: 202, admin: 403, other: 404 },
    send: (a) => as(h.http.post(`/api/figures/print-${h.tag}/versions`), a.session).send({ formats: ['png'] }),
  },
  {
    // a fresh draft with a ready version each time
    route: 'POST /api/figures/:slug/publish',
    expect: { reader: 401, author: 200, manager: 200, admin: 403, other: 404 },
    send: async (a) => as(h.http.post(`/api/figures/${await figureWithPrint(false)}/publish`), a.session),
  },
  {
    // published figures are public, so outsiders learn they may not change it (403) rather than 404
    route: 'POST /api/figures/:slug/unpublish',
    expect: { reader: 401, author: 200, manager: 200, admin: 403, other: 403 },
    send: async (a) => as(h.http.post(`/api/figures/${await figureWithPrint(true)}/unpublish`), a.session),
  },
  {
    route: 'GET /api/figures/:slug/versions/:number/files/:format',
    expect: all(302),
    send: (a) => as(h.http.get(`/api/figures/published-${h.tag}/versions/1/files/png`), a.session),
  },
  {
    route: 'GET /api/figures/:slug/versions/:number/files/:format (draft)',
    expect: { reader: 404, author: 302, manager: 302, admin: 302, other: 404 },
    send: (a) => as(h.http.get(`/api/figures/draft-${h.tag}/versions/1/files/png`), a.session),
  },
  { route: 'GET /api/dev/outbox', expect: all(200), send: (a) => as(h.http.get('/api/dev/outbox'), a.session) },
  {
    route: 'GET /api/labs/:labId/credits',
    expect: { reader: 401, author: 200, manager: 200, admin: 200, other: 404 },
    send: (a) => as(h.http.get(`/api/labs/${labA}/credits`), a.session),
  },
  {
    route: 'GET /api/labs/:labId/credits/ledger',
    expect: { reader: 401, author: 200, manager: 200, admin: 200, other: 404 },
    send: (a) => as(h.http.get(`/api/labs/${labA}/credits/ledger`), a.session),
  },
  {
    route: 'GET /api/labs/:labId/credits/usage',
    expect: { reader: 401, author: 200, manager: 200, admin: 200, other: 404 },
    send: (a) => as(h.http.get(`/api/labs/${labA}/credits/usage`), a.session),
  },
  {
    route: 'GET /api/labs/:labId/credits/usage.csv',
    expect: { reader: 401, author: 200, manager: 200, admin: 200, other: 404 },
    send: (a) => as(h.http.get(`/api/labs/${labA}/credits/usage.csv`), a.session),
  },
  {
    route: 'GET /api/labs/:labId/credits/purchases/:id',
    expect: { reader: 401, author: 200, manager: 200, admin: 200, other: 404 },
    send: async (a) => {
      const [p] = await h.deps.db
        .insert(creditPurchases)
        .values({ labId: labA, buyerId: people.manager.id, pack: 'sheet', credits: 1000, amount: 2000, currency: 'eur', checkoutSessionId: `cs_test_table_${fresh()}` })
        .returning();
      return as(h.http.get(`/api/labs/${labA}/credits/purchases/${p!.id}`), a.session);
    },
  },
  {
    route: 'POST /api/labs/:labId/credits/check',
    expect: { reader: 401, author: 200, manager: 200, admin: 403, other: 404 },
    send: (a) => as(h.http.post(`/api/labs/${labA}/credits/check`), a.session).send({ credits: 3 }),
  },
  {
    // a real Checkout Session on the payments fake
    route: 'POST /api/labs/:labId/credits/checkout',
    expect: { reader: 401, author: 403, manager: 201, admin: 403, other: 404 },
    send: (a) => as(h.http.post(`/api/labs/${labA}/credits/checkout`), a.session).send({ pack: 'sheet' }),
  },
  {
    // a real Checkout Session on the payments fake, opened by the manager, then given up
    route: 'POST /api/labs/:labId/credits/purchases/:id/abandon',
    expect: { reader: 401, author: 403, manager: 200, admin: 403, other: 404 },
    send: async (a) => {
      const manager = await signIn(h, people.manager.email, TEST_PASSWORD);
      const { purchaseId } = (await as(h.http.post(`/api/labs/${labA}/credits/checkout`), manager).send({ pack: 'sheet' }).expect(201)).body as { purchaseId: string };
      return as(h.http.post(`/api/labs/${labA}/credits/purchases/${purchaseId}/abandon`), a.session);
    },
  },
  {
    route: 'POST /api/labs/:labId/credits/adjustments',
    expect: { reader: 401, author: 403, manager: 403, admin: 201, other: 403 },
    send: (a) => as(h.http.post(`/api/labs/${labA}/credits/adjustments`), a.session).send({ kind: 'grant', credits: 10, reason: 'route table' }),
  },
  {
    // unsigned: refused whoever sends it; the signature is the only credential this route knows
    route: 'POST /api/payments/webhook',
    expect: all(400),
    send: (a) => as(h.http.post('/api/payments/webhook'), a.session).set('Content-Type', 'application/json').send('{"id":"evt_unsigned","type":"checkout.session.completed"}'),
  },
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
  runDone = await newRunInA();
  await h.deps.db.update(runs).set({ status: 'finished', finishedAt: new Date() }).where(eq(runs.id, runDone));
  const png = await sharp({ create: { width: 4, height: 4, channels: 3, background: '#2f6db5' } }).png().toBuffer();
  for (const id of [runA, runDone]) {
    await h.deps.blobs.put(`runs/${id}/heights/tidewater/iiif/${TILE_PATH}`, png, 'image/png');
    await h.deps.blobs.put(`runs/${id}/heights/tidewater/legend.json`, JSON.stringify(LEGEND_FIXTURE), 'application/json');
    await h.deps.blobs.put(`runs/${id}/arrays/heights.npy`, Buffer.from(writeNpy([1], Uint8Array.from([4]))), 'application/octet-stream');
    await h.deps.blobs.put(`runs/${id}/arrays/run.json`, '{}', 'application/json');
    // the coarsest whole image a pyramid advertises, which the run's thumbnail serves
    await h.deps.blobs.put(`runs/${id}/heights/tidewater/iiif/info.json`, JSON.stringify({ width: 4, height: 4, sizes: [{ width: 4, height: 4 }] }), 'application/json');
    await h.deps.blobs.put(`runs/${id}/heights/tidewater/iiif/full/4,4/0/default.png`, png, 'image/png');
  }
  const [s] = await h.deps.db.insert(series).values({ labId: labA, authorId: people.author2.id, title: 'table fixture series' }).returning();
  seriesA = s!.id;
  const up = await h.http
    .post(`/api/uploads/background?labId=${labA}`)
    .set('Authorization', `Bearer ${await tokenFor(people.author2.id)}`)
    .set('Content-Type', 'application/octet-stream')
    .send(Buffer.from(writeNpy([2], Int32Array.from([1, 2]))));
  uploadA = up.body.upload.sha256;
  await h.deps.db.insert(figures).values([
    { slug: `published-${h.tag}`, title: 'Published', runId: runA, createdById: people.author.id, publishedAt: new Date() },
    { slug: `draft-${h.tag}`, title: 'Draft', runId: runA, createdById: people.author.id },
  ]);
  runPrintable = await finishedRun(h, labA, people.author2.id, 'printable');
  await h.deps.db.insert(figures).values({
    slug: `print-${h.tag}`,
    title: 'To print',
    runId: runPrintable,
    createdById: people.author.id,
    spec: figureSpecSchema.parse({ panels: [{ runId: runPrintable }], size: { kind: 'column', column: 'single' } }),
  });
  for (const slug of [`published-${h.tag}`, `draft-${h.tag}`]) {
    const [f] = await h.deps.db.select().from(figures).where(eq(figures.slug, slug));
    await readyVersion(f!.id, slug.startsWith('published-'));
    await h.deps.blobs.put(printThumbnailKey(f!.id, 1), await sharp({ create: { width: 3, height: 4, channels: 3, background: '#ffffff' } }).jpeg().toBuffer(), 'image/jpeg');
  }
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
    expect(mounted.length).toBe(77);
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
