import { and, eq, gt, isNull } from 'drizzle-orm';
import { MAILED_LINK_HOURS, type MailedLinkRefusal } from '../../../shared/api/auth.js';
import { emailTokens } from '../../../drizzle/schema.js';
import type { Db } from '../db/client.js';
import { randomToken, sha256Hex } from './secrets.js';

type Purpose = (typeof emailTokens.$inferInsert)['purpose'];
type Executor = Pick<Db, 'insert' | 'update'>;

export type EmailTokenState = { usable: true; expiresAt: Date } | { usable: false; reason: MailedLinkRefusal };


/** Issue a mailed token; returns the plain token for the link (only its hash is stored). */
export async function issueEmailToken(db: Executor, userId: string, purpose: Purpose): Promise<string> {
  const token = randomToken();
  await db.insert(emailTokens).values({
    userId,
    purpose,
    tokenHash: sha256Hex(token),
    expiresAt: new Date(Date.now() + MAILED_LINK_HOURS[purpose] * 3600 * 1000),
  });
  return token;
}

/** Use a token once: marks it used and returns its user, or null if unknown, used or expired. */
export async function consumeEmailToken(db: Executor, token: string, purpose: Purpose): Promise<string | null> {
  const [row] = await db
    .update(emailTokens)
    .set({ usedAt: new Date() })
    .where(
      and(
        eq(emailTokens.tokenHash, sha256Hex(token)),
        eq(emailTokens.purpose, purpose),
        isNull(emailTokens.usedAt),
        gt(emailTokens.expiresAt, new Date()),
      ),
    )
    .returning({ userId: emailTokens.userId });
  return row?.userId ?? null;
}

/**
 * A token's state without using it, for a page to say on arrival whether its link still works.
 * A token of another purpose is unknown here, as it is to `consumeEmailToken`.
 */
export async function inspectEmailToken(db: Pick<Db, 'select'>, token: string, purpose: Purpose): Promise<EmailTokenState> {
  const [row] = await db
    .select({ expiresAt: emailTokens.expiresAt, usedAt: emailTokens.usedAt })
    .from(emailTokens)
    .where(and(eq(emailTokens.tokenHash, sha256Hex(token)), eq(emailTokens.purpose, purpose)));
  if (!row) return { usable: false, reason: 'unknown' };
  if (row.usedAt) return { usable: false, reason: 'used' };
  // the same comparison as consumeEmailToken's `expires_at > now`
  if (row.expiresAt.getTime() <= Date.now()) return { usable: false, reason: 'expired' };
  return { usable: true, expiresAt: row.expiresAt };
}
