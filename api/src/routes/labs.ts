import { and, asc, eq, sql } from 'drizzle-orm';
import { Router } from 'express';
import {
  createInvitationRequestSchema,
  createLabRequestSchema,
  invitationResponseSchema,
  labDetailResponseSchema,
  labInvitationParamsSchema,
  labMemberParamsSchema,
  labResponseSchema,
  memberResponseSchema,
  quotaRequestSchema,
  roleRequestSchema,
  type Member,
} from '../../../shared/api/labs.js';
import { invitations, labs, memberships, users } from '../../../drizzle/schema.js';
import { authOf, checkLabAccess, requireLabAccess, requireUser, requireVerified } from '../auth/middleware.js';
import { randomToken, sha256Hex } from '../auth/secrets.js';
import { uniqueAs } from '../db/errors.js';
import type { AppDeps } from '../deps.js';
import { conflict, forbidden, notFound } from '../http/http-error.js';
import { respond } from '../http/respond.js';
import { validate } from '../http/validate.js';
import { invitationMail } from '../mail/invitation-mail.js';
import { audit } from '../services/audit.js';
import { INVITATION_TTL_MS, invitationView, pendingInvitation } from '../services/invitations.js';
import { activeLabOf, setActiveLab } from '../services/me.js';

const labTaken = () => conflict('a lab with this name already exists');
const labOf = (l: typeof labs.$inferSelect) => ({ id: l.id, name: l.name, createdAt: l.createdAt.toISOString() });

export function labsRouter({ db, env, mailer }: AppDeps): Router {
  const r = Router();

  async function members(labId: string): Promise<Member[]> {
    const rows = await db
      .select({ m: memberships, name: users.name, email: users.email })
      .from(memberships)
      .innerJoin(users, eq(users.id, memberships.userId))
      .where(eq(memberships.labId, labId))
      .orderBy(asc(users.name));
    return rows.map(({ m, name, email }) => ({
      userId: m.userId,
      name,
      email,
      role: m.role,
      monthlyQuota: m.monthlyQuota,
      joinedAt: m.joinedAt.toISOString(),
    }));
  }

  r.post('/labs', requireUser, requireVerified, async (req, res) => {
    const { name } = validate.body(req, createLabRequestSchema);
    const user = authOf(res).user;
    const [taken] = await db.select({ id: labs.id }).from(labs).where(sql`lower(${labs.name}) = lower(${name})`);
    if (taken) throw labTaken();
    const hadActive = await activeLabOf(db, user);
    const lab = await db.transaction(async (tx) => {
      const [l] = await tx.insert(labs).values({ name }).returning().catch(uniqueAs(labTaken()));
      await tx.insert(memberships).values({ labId: l!.id, userId: user.id, role: 'manager' });
      if (!hadActive) await setActiveLab(tx, user.id, l!.id);
      await audit(tx, { actorId: user.id, labId: l!.id, action: 'lab.create', subjectType: 'lab', subjectId: l!.id });
      return l!;
    });
    respond(res, 201, labResponseSchema, { lab: labOf(lab) });
  });

  r.get('/labs/:labId', requireUser, requireLabAccess(db, 'read'), async (_req, res) => {
    const access = res.locals.lab!;
    const [lab] = await db.select().from(labs).where(eq(labs.id, access.labId));
    const pending =
      access.role === 'manager'
        ? await db.select().from(invitations).where(and(eq(invitations.labId, access.labId), pendingInvitation())).orderBy(asc(invitations.createdAt))
        : [];
    respond(res, 200, labDetailResponseSchema, {
      lab: labOf(lab!),
      members: await members(access.labId),
      invitations: pending.map(invitationView),
    });
  });

  r.post('/labs/:labId/invitations', requireUser, requireLabAccess(db, 'manager'), async (req, res) => {
    const { email, role } = validate.body(req, createInvitationRequestSchema);
    const user = authOf(res).user;
    const { labId, labName } = res.locals.lab!;
    const [already] = await db
      .select({ id: users.id })
      .from(memberships)
      .innerJoin(users, eq(users.id, memberships.userId))
      .where(and(eq(memberships.labId, labId), eq(users.email, email)));
    if (already) throw conflict(`${email} is already a member of this lab`);
    const token = randomToken();
    const invitation = await db.transaction(async (tx) => {
      // A new invitation to the same address replaces the old one, so only the latest link works.
      await tx
        .update(invitations)
        .set({ revokedAt: new Date() })
        .where(and(eq(invitations.labId, labId), eq(invitations.email, email), pendingInvitation()));
      const [inv] = await tx
        .insert(invitations)
        .values({ labId, email, role, tokenHash: sha256Hex(token), invitedById: user.id, expiresAt: new Date(Date.now() + INVITATION_TTL_MS) })
        .returning();
      await audit(tx, { actorId: user.id, labId, action: 'invitation.create', subjectType: 'invitation', subjectId: inv!.id, detail: { email, role } });
      await mailer.send(invitationMail(env.PUBLIC_URL, email, labName, user.name, role, token));
      return inv!;
    });
    respond(res, 201, invitationResponseSchema, { invitation: invitationView(invitation) });
  });

  r.delete('/labs/:labId/invitations/:id', requireUser, requireLabAccess(db, 'manager'), async (req, res) => {
    const { labId, id } = validate.params(req, labInvitationParamsSchema);
    const [inv] = await db
      .update(invitations)
      .set({ revokedAt: new Date() })
      .where(and(eq(invitations.id, id), eq(invitations.labId, labId), pendingInvitation()))
      .returning({ id: invitations.id });
    if (!inv) throw notFound('invitation not found');
    await audit(db, { actorId: authOf(res).user.id, labId, action: 'invitation.revoke', subjectType: 'invitation', subjectId: id });
    res.status(204).end();
  });

  r.delete('/labs/:labId/members/:userId', requireUser, requireLabAccess(db, 'member'), async (req, res) => {
    const { labId, userId } = validate.params(req, labMemberParamsSchema);
    const actor = authOf(res).user;
    const leaving = userId === actor.id;
    if (!leaving && res.locals.lab!.role !== 'manager') throw forbidden('only lab managers can remove other members');
    await db.transaction(async (tx) => {
      // Lock the lab's memberships so two managers cannot remove each other at once.
      const rows = await tx.select().from(memberships).where(eq(memberships.labId, labId)).for('update');
      const target = rows.find((m) => m.userId === userId);
      if (!target) throw notFound('member not found');
      const managers = rows.filter((m) => m.role === 'manager').length;
      if (target.role === 'manager' && managers === 1) throw conflict('a lab needs at least one manager: make someone else manager first');
      await tx.delete(memberships).where(and(eq(memberships.labId, labId), eq(memberships.userId, userId)));
      await tx.update(users).set({ activeLabId: null }).where(and(eq(users.id, userId), eq(users.activeLabId, labId)));
      await audit(tx, { actorId: actor.id, labId, action: leaving ? 'member.leave' : 'member.remove', subjectType: 'user', subjectId: userId });
    });
    res.status(204).end();
  });

  /**
   * Author ↔ manager, by a manager of the lab or a site admin (who need not be a member), always
   * with a reason. The lab's memberships are locked so two managers demoting each other at once
   * cannot leave it without one.
   */
  r.put('/labs/:labId/members/:userId/role', requireUser, async (req, res) => {
    const { labId, userId } = validate.params(req, labMemberParamsSchema);
    const actor = authOf(res).user;
    const access = await checkLabAccess(db, actor, labId, 'read');
    if (access.role !== 'manager' && !actor.isAdmin) throw forbidden('only the lab\'s managers and site admins can change roles');
    const { role, reason } = validate.body(req, roleRequestSchema);
    await db.transaction(async (tx) => {
      const rows = await tx.select().from(memberships).where(eq(memberships.labId, labId)).for('update');
      // checked again under the lock: a manager demoted a moment ago no longer decides
      if (!actor.isAdmin && rows.find((m) => m.userId === actor.id)?.role !== 'manager') throw forbidden('only the lab\'s managers and site admins can change roles');
      const target = rows.find((m) => m.userId === userId);
      if (!target) throw notFound('member not found');
      if (target.role === role) throw conflict(`this member is already ${role === 'manager' ? 'a manager' : 'an author'}`);
      if (target.role === 'manager' && rows.filter((m) => m.role === 'manager').length === 1) {
        throw conflict('a lab needs at least one manager: make someone else manager first');
      }
      await tx.update(memberships).set({ role }).where(and(eq(memberships.labId, labId), eq(memberships.userId, userId)));
      await audit(tx, { actorId: actor.id, labId, action: 'member.role', subjectType: 'user', subjectId: userId, reason, detail: { from: target.role, to: role } });
    });
    const member = (await members(labId)).find((x) => x.userId === userId)!;
    respond(res, 200, memberResponseSchema, { member });
  });

  r.put('/labs/:labId/members/:userId/quota', requireUser, requireLabAccess(db, 'manager'), async (req, res) => {
    const { labId, userId } = validate.params(req, labMemberParamsSchema);
    const { monthlyQuota } = validate.body(req, quotaRequestSchema);
    const [m] = await db.transaction(async (tx) => {
      const [before] = await tx.select({ q: memberships.monthlyQuota }).from(memberships).where(and(eq(memberships.labId, labId), eq(memberships.userId, userId))).for('update');
      const updated = await tx
        .update(memberships)
        .set({ monthlyQuota })
        .where(and(eq(memberships.labId, labId), eq(memberships.userId, userId)))
        .returning();
      if (updated.length) {
        await audit(tx, { actorId: authOf(res).user.id, labId, action: 'member.quota', subjectType: 'user', subjectId: userId, detail: { from: before?.q ?? null, monthlyQuota } });
      }
      return updated;
    });
    if (!m) throw notFound('member not found');
    const member = (await members(labId)).find((x) => x.userId === userId)!;
    respond(res, 200, memberResponseSchema, { member });
  });

  return r;
}
