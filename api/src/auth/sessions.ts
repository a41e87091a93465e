import { and, eq, gt, isNull } from 'drizzle-orm';
import { SignJWT, jwtVerify } from 'jose';
import type { Db } from '../db/client.js';
import { sessions } from '../../../drizzle/schema.js';
import { hmacBase64url } from './secrets.js';

export const SESSION_TTL_SECONDS = 7 * 24 * 3600;
const ISSUER = 'toppleworks';

const key = (secret: string) => new TextEncoder().encode(secret);

/** Open a session row and sign a JWT whose jti is its id. */
export async function openSession(db: Db, secret: string, userId: string): Promise<{ jwt: string; sessionId: string; expiresAt: Date }> {
  const expiresAt = new Date(Date.now() + SESSION_TTL_SECONDS * 1000);
  const [row] = await db.insert(sessions).values({ userId, expiresAt }).returning({ id: sessions.id });
  const jwt = await new SignJWT({})
    .setProtectedHeader({ alg: 'HS256' })
    .setSubject(userId)
    .setJti(row!.id)
    .setIssuer(ISSUER)
    .setIssuedAt()
    .setExpirationTime(Math.floor(expiresAt.getTime() / 1000))
    .sign(key(secret));
  return { jwt, sessionId: row!.id, expiresAt };
}

/** The session a JWT names, if the signature holds and the row is neither expired nor revoked. */
export async function resolveSession(db: Db, secret: string, jwt: string): Promise<{ sessionId: string; userId: string } | null> {
  let payload;
  try {
    ({ payload } = await jwtVerify(jwt, key(secret), { algorithms: ['HS256'], issuer: ISSUER }));
  } catch {
    return null;
  }
  if (!payload.jti || !payload.sub || !/^[0-9a-f-]{36}$/.test(payload.jti)) return null;
  const [row] = await db
    .select({ id: sessions.id, userId: sessions.userId })
    .from(sessions)
    .where(and(eq(sessions.id, payload.jti), isNull(sessions.revokedAt), gt(sessions.expiresAt, new Date())));
  if (!row || row.userId !== payload.sub) return null;
  return { sessionId: row.id, userId: row.userId };
}

export async function revokeSession(db: Pick<Db, 'update'>, sessionId: string): Promise<void> {
  await db.update(sessions).set({ revokedAt: new Date() }).where(and(eq(sessions.id, sessionId), isNull(sessions.revokedAt)));
}

export async function revokeAllSessions(db: Pick<Db, 'update'>, userId: string): Promise<void> {
  await db.update(sessions).set({ revokedAt: new Date() }).where(and(eq(sessions.userId, userId), isNull(sessions.revokedAt)));
}

/** The CSRF token is bound to the session: HMAC(secret, session id), sent as a readable cookie. */
export function csrfTokenFor(secret: string, sessionId: string): string {
  return hmacBase64url(secret, `csrf:${sessionId}`);
}
