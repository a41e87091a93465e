import { and, eq, isNull } from 'drizzle-orm';
import type { RequestHandler, Response } from 'express';
import { API_TOKEN_PREFIX, CSRF_COOKIE, CSRF_HEADER, SESSION_COOKIE } from '../../../shared/api/auth.js';
import { idSchema } from '../../../shared/api/errors.js';
import { apiTokens, labs, memberships, users } from '../../../drizzle/schema.js';
import type { Db } from '../db/client.js';
import { forbidden, HttpError, notFound, unauthorized } from '../http/http-error.js';
import type { Auth, AuthUser, LabAccess } from '../http/locals.js';
import { csrfTokenFor, resolveSession } from './sessions.js';
import { safeEqual, sha256Hex } from './secrets.js';

const UNSAFE = new Set(['POST', 'PUT', 'PATCH', 'DELETE']);

async function loadUser(db: Db, userId: string): Promise<AuthUser | null> {
  const [u] = await db.select().from(users).where(eq(users.id, userId));
  if (!u) return null;
  return { id: u.id, email: u.email, name: u.name, emailVerified: u.emailVerifiedAt !== null, isAdmin: u.isAdmin, activeLabId: u.activeLabId };
}

/**
 * Resolve the caller from a bearer API token or the session cookie. A bad bearer token is an error
 * (the client meant to authenticate); a stale cookie just means "anonymous". Cookie-authenticated
 * writes must echo the CSRF cookie in X-CSRF-Token.
 */
export function authenticate(db: Db, secret: string): RequestHandler {
  return async (req, res, next) => {
    const header = req.get('authorization');
    if (header !== undefined) {
      const match = /^Bearer\s+(\S+)$/i.exec(header);
      if (!match || !match[1]!.startsWith(API_TOKEN_PREFIX)) throw unauthorized('Authorization header must be "Bearer tw_..."');
      const [token] = await db
        .select({ id: apiTokens.id, userId: apiTokens.userId })
        .from(apiTokens)
        .where(and(eq(apiTokens.tokenHash, sha256Hex(match[1]!)), isNull(apiTokens.revokedAt)));
      const user = token && (await loadUser(db, token.userId));
      if (!token || !user) throw unauthorized('invalid or revoked API token');
      await db.update(apiTokens).set({ lastUsedAt: new Date() }).where(eq(apiTokens.id, token.id));
      res.locals.auth = { user, via: 'token', tokenId: token.id };
      return next();
    }
    const jwt: unknown = req.cookies?.[SESSION_COOKIE];
    if (typeof jwt === 'string' && jwt) {
      const session = await resolveSession(db, secret, jwt);
      const user = session && (await loadUser(db, session.userId));
      if (session && user) {
        if (UNSAFE.has(req.method)) {
          const sent = req.get(CSRF_HEADER) ?? '';
          const cookie: unknown = req.cookies?.[CSRF_COOKIE];
          const expected = csrfTokenFor(secret, session.sessionId);
          if (typeof cookie !== 'string' || !safeEqual(sent, cookie) || !safeEqual(sent, expected)) {
            throw forbidden('missing or wrong CSRF token');
          }
        }
        res.locals.auth = { user, via: 'cookie', sessionId: session.sessionId };
      }
    }
    next();
  };
}

export function authOf(res: Response): Auth {
  const auth = res.locals.auth;
  if (!auth) throw unauthorized();
  return auth;
}

export const requireUser: RequestHandler = (_req, res, next) => {
  authOf(res);
  next();
};

export const requireVerified: RequestHandler = (_req, res, next) => {
  if (!authOf(res).user.emailVerified) throw forbidden('verify your e-mail first');
  next();
};

export const requireAdmin: RequestHandler = (_req, res, next) => {
  if (!authOf(res).user.isAdmin) throw forbidden('only site admins can do this');
  next();
};

/**
 * What a caller may do in a lab:
 * - read: members, and site admins (site-wide review);
 * - member: authors and managers;
 * - manager: managers only.
 * Callers with no tie to the lab get 404, so a lab's existence never leaks; admins and authors who
 * lack the role get 403.
 */
export type LabAccessMode = 'read' | 'member' | 'manager';

export async function checkLabAccess(
  db: Db,
  user: AuthUser,
  labId: string,
  mode: LabAccessMode,
  missing: HttpError = notFound('lab not found'),
): Promise<LabAccess> {
  if (!idSchema.safeParse(labId).success) throw missing;
  const [row] = await db
    .select({ labId: labs.id, labName: labs.name, role: memberships.role })
    .from(labs)
    .leftJoin(memberships, and(eq(memberships.labId, labs.id), eq(memberships.userId, user.id)))
    .where(eq(labs.id, labId));
  if (!row) throw missing;
  const access: LabAccess = { labId: row.labId, labName: row.labName, role: row.role };
  if (access.role === null && !user.isAdmin) throw missing;
  if (mode === 'read') return access;
  if (access.role === null) throw forbidden('only members of this lab can do this');
  if (mode === 'manager' && access.role !== 'manager') throw forbidden('only lab managers can do this');
  return access;
}

/** Route guard for `/labs/:labId/...`: signs-in check plus `checkLabAccess`, result in res.locals.lab. */
export function requireLabAccess(db: Db, mode: LabAccessMode): RequestHandler {
  return async (req, res, next) => {
    const labId = req.params.labId;
    if (typeof labId !== 'string') throw new HttpError(500, 'route has no :labId');
    res.locals.lab = await checkLabAccess(db, authOf(res).user, labId, mode);
    next();
  };
}
