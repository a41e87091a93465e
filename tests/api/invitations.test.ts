import { and, eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { auditEvents, memberships } from '../../drizzle/schema.js';
import { labDetailResponseSchema } from '../../shared/api/labs.js';
import { as, createUser, signIn, startHarness, TEST_PASSWORD, type Harness, type Session } from './support/harness.js';
import { linkToken, waitForMail } from './support/outbox.js';

let h: Harness;
let manager: { id: string; email: string; name: string };
let managerSession: Session;
let labId: string;

beforeAll(async () => {
  h = await startHarness('invite');
  manager = await createUser(h, 'Noor Valen');
  managerSession = await signIn(h, manager.email, TEST_PASSWORD);
  const created = await as(h.http.post('/api/labs'), managerSession).send({ name: `Invite Lab ${h.tag}` });
  expect(created.status).toBe(201);
  labId = created.body.lab.id;
});
afterAll(async () => {
  await h.close();
});

async function invite(email: string, role: 'author' | 'manager' = 'author'): Promise<string> {
  const res = await as(h.http.post(`/api/labs/${labId}/invitations`), managerSession).send({ email, role });
  expect(res.status).toBe(201);
  const mail = await waitForMail(h.env, email, /join .* on toppleworks/i);
  expect(mail.text).toContain('Noor Valen invites you');
  return linkToken(mail.text, /\/invitations\/([A-Za-z0-9_%-]+)/);
}

describe('lab invitations by mail', () => {
  it('makes the creator of a lab its manager and active lab', async () => {
    const me = await as(h.http.get('/api/me'), managerSession).expect(200);
    expect(me.body.labs).toEqual([{ id: labId, name: `Invite Lab ${h.tag}`, role: 'manager' }]);
    expect(me.body.activeLabId).toBe(labId);
  });

  it('mails a link, shows it publicly, and lets the invited address accept it once', async () => {
    const invitee = await createUser(h, 'Rafe Idris', { verified: false });
    const token = await invite(invitee.email);

    const preview = await h.http.get(`/api/invitations/${token}`);
    expect(preview.status).toBe(200);
    expect(preview.body).toEqual({ labName: `Invite Lab ${h.tag}`, email: invitee.email, role: 'author', invitedBy: 'Noor Valen' });

    const lab = await as(h.http.get(`/api/labs/${labId}`), managerSession).expect(200);
    expect(labDetailResponseSchema.parse(lab.body).invitations.map((i) => i.email)).toEqual([invitee.email]);

    const s = await signIn(h, invitee.email, TEST_PASSWORD);
    const accepted = await as(h.http.post(`/api/invitations/${token}/accept`), s);
    expect(accepted.status).toBe(200);
    expect(accepted.body.lab.id).toBe(labId);

    const me = await as(h.http.get('/api/me'), s).expect(200);
    expect(me.body.labs).toEqual([{ id: labId, name: `Invite Lab ${h.tag}`, role: 'author' }]);
    // the mailed token proves the address
    expect(me.body.user.emailVerified).toBe(true);

    const detail = labDetailResponseSchema.parse((await as(h.http.get(`/api/labs/${labId}`), s).expect(200)).body);
    expect(detail.members.map((m) => [m.name, m.role])).toEqual([
      ['Noor Valen', 'manager'],
      ['Rafe Idris', 'author'],
    ]);
    // authors do not see pending invitations
    expect(detail.invitations).toEqual([]);

    await h.http.get(`/api/invitations/${token}`).expect(404);
    const twice = await as(h.http.post(`/api/invitations/${token}/accept`), s);
    expect(twice.status).toBe(404);
    const actions = await h.deps.db.select({ action: auditEvents.action }).from(auditEvents).where(eq(auditEvents.labId, labId));
    expect(actions.map((a) => a.action)).toEqual(expect.arrayContaining(['lab.create', 'invitation.create', 'invitation.accept']));
  });

  it('refuses acceptance by a different address, and leaves the invitation open', async () => {
    const invitee = h.email('meant-for');
    const token = await invite(invitee);
    const stranger = await createUser(h, 'Stranger');
    const s = await signIn(h, stranger.email, TEST_PASSWORD);
    const res = await as(h.http.post(`/api/invitations/${token}/accept`), s);
    expect(res.status).toBe(403);
    expect(res.body.error).toContain(invitee);
    await h.http.get(`/api/invitations/${token}`).expect(200);
    const rows = await h.deps.db.select().from(memberships).where(and(eq(memberships.labId, labId), eq(memberships.userId, stranger.id)));
    expect(rows).toEqual([]);
  });

  it('lets a manager withdraw an invitation, after which the link is dead', async () => {
    const email = h.email('withdrawn');
    const token = await invite(email, 'manager');
    const lab = labDetailResponseSchema.parse((await as(h.http.get(`/api/labs/${labId}`), managerSession)).body);
    const inv = lab.invitations.find((i) => i.email === email)!;
    expect(inv.role).toBe('manager');
    await as(h.http.delete(`/api/labs/${labId}/invitations/${inv.id}`), managerSession).expect(204);
    await h.http.get(`/api/invitations/${token}`).expect(404);
    await as(h.http.delete(`/api/labs/${labId}/invitations/${inv.id}`), managerSession).expect(404);
  });

  it('refuses to invite someone who is already a member', async () => {
    const res = await as(h.http.post(`/api/labs/${labId}/invitations`), managerSession).send({ email: manager.email, role: 'author' });
    expect(res.status).toBe(409);
    expect(res.body.error).toMatch(/already a member/);
  });
});

describe('members and quotas', () => {
  it('sets a monthly quota, lets a member leave, and keeps the last manager', async () => {
    const member = await createUser(h, 'Quota Member');
    await h.deps.db.insert(memberships).values({ labId, userId: member.id, role: 'author' });
    const q = await as(h.http.put(`/api/labs/${labId}/members/${member.id}/quota`), managerSession).send({ monthlyQuota: 1500 });
    expect(q.status).toBe(200);
    expect(q.body.member).toMatchObject({ userId: member.id, monthlyQuota: 1500, role: 'author' });
    const cleared = await as(h.http.put(`/api/labs/${labId}/members/${member.id}/quota`), managerSession).send({ monthlyQuota: null });
    expect(cleared.body.member.monthlyQuota).toBeNull();
    const negative = await as(h.http.put(`/api/labs/${labId}/members/${member.id}/quota`), managerSession).send({ monthlyQuota: -5 });
    expect(negative.status).toBe(400);
    expect(negative.body.issues[0].path).toBe('monthlyQuota');

    const s = await signIn(h, member.email, TEST_PASSWORD);
    // an author cannot remove the manager, but can leave
    await as(h.http.delete(`/api/labs/${labId}/members/${manager.id}`), s).expect(403);
    await as(h.http.delete(`/api/labs/${labId}/members/${member.id}`), s).expect(204);
    await as(h.http.get(`/api/labs/${labId}`), s).expect(404);

    const last = await as(h.http.delete(`/api/labs/${labId}/members/${manager.id}`), managerSession);
    expect(last.status).toBe(409);
    expect(last.body.error).toMatch(/at least one manager/);
  });
});
