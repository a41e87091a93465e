import { and, eq, isNull } from 'drizzle-orm';
import { Router } from 'express';
import { z } from 'zod';
import { mailedTokenSchema } from '../../../shared/api/auth.js';
import { invitationPreviewResponseSchema, labResponseSchema } from '../../../shared/api/labs.js';
import { invitations, labs, memberships, users } from '../../../drizzle/schema.js';
import { authOf, requireUser } from '../auth/middleware.js';
import { sha256Hex } from '../auth/secrets.js';
import type { AppDeps } from '../deps.js';
import { conflict, forbidden, notFound } from '../http/http-error.js';
import { respond } from '../http/respond.js';
import { validate } from '../http/validate.js';
import { audit } from '../services/audit.js';
import { findPendingByToken, pendingInvitation } from '../services/invitations.js';
import { activeLabOf, setActiveLab } from '../services/me.js';

const tokenParams = z.strictObject({ token: mailedTokenSchema });
const gone = () => notFound('this invitation is unknown, already used, withdrawn or expired');

export function invitationsRouter({ db }: AppDeps): Router {
  const r = Router();

  r.get('/invitations/:token', async (req, res) => {
    const { token } = validate.params(req, tokenParams);
    const inv = await findPendingByToken(db, token);
    if (!inv) throw gone();
    const [lab] = await db.select({ name: labs.name }).from(labs).where(eq(labs.id, inv.labId));
    const [inviter] = await db.select({ name: users.name }).from(users).where(eq(users.id, inv.invitedById));
    respond(res, 200, invitationPreviewResponseSchema, { labName: lab!.name, email: inv.email, role: inv.role, invitedBy: inviter?.name ?? 'a lab manager' });
  });

  r.post('/invitations/:token/accept', requireUser, async (req, res) => {
    const { token } = validate.params(req, tokenParams);
    const user = authOf(res).user;
    const inv = await findPendingByToken(db, token);
    if (!inv) throw gone();
    if (inv.email !== user.email) throw forbidden(`this invitation was sent to ${inv.email}; sign in with that address to accept it`);
    const [member] = await db.select().from(memberships).where(and(eq(memberships.labId, inv.labId), eq(memberships.userId, user.id)));
    if (member) throw conflict('you are already a member of this lab');
    const hadActive = await activeLabOf(db, user);
    const lab = await db.transaction(async (tx) => {
      // Only one acceptance wins: the update re-checks that the invitation is still pending.
      const [claimed] = await tx
        .update(invitations)
        .set({ acceptedAt: new Date(), acceptedById: user.id })
        .where(and(eq(invitations.tokenHash, sha256Hex(token)), pendingInvitation()))
        .returning();
      if (!claimed) throw gone();
      await tx.insert(memberships).values({ labId: claimed.labId, userId: user.id, role: claimed.role });
      // The token came through this mailbox, which proves the address.
      await tx.update(users).set({ emailVerifiedAt: new Date() }).where(and(eq(users.id, user.id), isNull(users.emailVerifiedAt)));
      if (!hadActive) await setActiveLab(tx, user.id, claimed.labId);
      await audit(tx, { actorId: user.id, labId: claimed.labId, action: 'invitation.accept', subjectType: 'invitation', subjectId: claimed.id });
      const [l] = await tx.select().from(labs).where(eq(labs.id, claimed.labId));
      return l!;
    });
    respond(res, 200, labResponseSchema, { lab: { id: lab.id, name: lab.name, createdAt: lab.createdAt.toISOString() } });
  });

  return r;
}
