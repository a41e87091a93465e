import { and, eq, gt, isNull } from 'drizzle-orm';
import type { Invitation } from '../../../shared/api/labs.js';
import { invitations } from '../../../drizzle/schema.js';
import { sha256Hex } from '../auth/secrets.js';
import type { Db } from '../db/client.js';

export const INVITATION_TTL_MS = 14 * 24 * 3600 * 1000;

/** Neither accepted, revoked nor expired. */
export const pendingInvitation = () =>
  and(isNull(invitations.acceptedAt), isNull(invitations.revokedAt), gt(invitations.expiresAt, new Date()));

export function invitationView(i: typeof invitations.$inferSelect): Invitation {
  return { id: i.id, email: i.email, role: i.role, createdAt: i.createdAt.toISOString(), expiresAt: i.expiresAt.toISOString() };
}

export async function findPendingByToken(db: Pick<Db, 'select'>, token: string) {
  const [row] = await db
    .select()
    .from(invitations)
    .where(and(eq(invitations.tokenHash, sha256Hex(token)), pendingInvitation()));
  return row ?? null;
}
