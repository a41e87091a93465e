import { asc, eq } from 'drizzle-orm';
import type { MeResponse } from '../../../shared/api/auth.js';
import { labs, memberships, users } from '../../../drizzle/schema.js';
import type { Db } from '../db/client.js';
import type { AuthUser } from '../http/locals.js';

/** The caller with their labs; the active lab falls back to the first lab when unset or left. */
export async function meView(db: Db, user: AuthUser): Promise<MeResponse> {
  const rows = await db
    .select({ id: labs.id, name: labs.name, role: memberships.role })
    .from(memberships)
    .innerJoin(labs, eq(labs.id, memberships.labId))
    .where(eq(memberships.userId, user.id))
    .orderBy(asc(labs.name));
  const active = rows.find((l) => l.id === user.activeLabId)?.id ?? rows[0]?.id ?? null;
  return {
    signedIn: true,
    user: { id: user.id, email: user.email, name: user.name, emailVerified: user.emailVerified, isAdmin: user.isAdmin },
    labs: rows,
    activeLabId: active,
  };
}

/** The lab a request means when it names none: the stored active lab if still a member, else the first. */
export async function activeLabOf(db: Db, user: AuthUser): Promise<string | null> {
  return (await meView(db, user)).activeLabId;
}

export async function setActiveLab(db: Pick<Db, 'update'>, userId: string, labId: string | null): Promise<void> {
  await db.update(users).set({ activeLabId: labId }).where(eq(users.id, userId));
}
