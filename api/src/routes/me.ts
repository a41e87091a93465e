import { and, desc, eq, isNull } from 'drizzle-orm';
import { Router } from 'express';
import { z } from 'zod';
import {
  API_TOKEN_PREFIX,
  activeLabRequestSchema,
  createTokenRequestSchema,
  createTokenResponseSchema,
  meResponseSchema,
  meStateResponseSchema,
  tokensResponseSchema,
  type ApiToken,
} from '../../../shared/api/auth.js';
import { idSchema } from '../../../shared/api/errors.js';
import { apiTokens, memberships } from '../../../drizzle/schema.js';
import { authOf, requireUser } from '../auth/middleware.js';
import { randomToken, sha256Hex } from '../auth/secrets.js';
import type { AppDeps } from '../deps.js';
import { conflict, notFound } from '../http/http-error.js';
import { respond } from '../http/respond.js';
import { validate } from '../http/validate.js';
import { audit } from '../services/audit.js';
import { meView, setActiveLab } from '../services/me.js';

const MAX_TOKENS_PER_USER = 50;

function tokenView(t: typeof apiTokens.$inferSelect): ApiToken {
  return { id: t.id, label: t.label, prefix: t.prefix, createdAt: t.createdAt.toISOString(), lastUsedAt: t.lastUsedAt?.toISOString() ?? null };
}

export function meRouter({ db }: AppDeps): Router {
  const r = Router();
  // before the guard: anonymous readers of public pages ask too, and "nobody" is an answer, not a 401
  r.get('/me', async (_req, res) => {
    const user = res.locals.auth?.user;
    respond(res, 200, meStateResponseSchema, user ? await meView(db, user) : { signedIn: false });
  });
  r.use('/me', requireUser);

  r.put('/me/active-lab', async (req, res) => {
    const { labId } = validate.body(req, activeLabRequestSchema);
    const user = authOf(res).user;
    const [m] = await db.select().from(memberships).where(and(eq(memberships.labId, labId), eq(memberships.userId, user.id)));
    if (!m) throw notFound('lab not found');
    await setActiveLab(db, user.id, labId);
    respond(res, 200, meResponseSchema, await meView(db, { ...user, activeLabId: labId }));
  });

  r.get('/me/tokens', async (_req, res) => {
    const rows = await db
      .select()
      .from(apiTokens)
      .where(and(eq(apiTokens.userId, authOf(res).user.id), isNull(apiTokens.revokedAt)))
      .orderBy(desc(apiTokens.createdAt));
    respond(res, 200, tokensResponseSchema, { tokens: rows.map(tokenView) });
  });

  r.post('/me/tokens', async (req, res) => {
    const { label } = validate.body(req, createTokenRequestSchema);
    const user = authOf(res).user;
    const live = await db.$count(apiTokens, and(eq(apiTokens.userId, user.id), isNull(apiTokens.revokedAt)));
    if (live >= MAX_TOKENS_PER_USER) throw conflict(`at most ${MAX_TOKENS_PER_USER} API tokens; revoke one first`);
    const secret = `${API_TOKEN_PREFIX}${randomToken()}`;
    const row = await db.transaction(async (tx) => {
      const [t] = await tx
        .insert(apiTokens)
        .values({ userId: user.id, label, tokenHash: sha256Hex(secret), prefix: secret.slice(0, API_TOKEN_PREFIX.length + 6) })
        .returning();
      await audit(tx, { actorId: user.id, action: 'token.create', subjectType: 'api_token', subjectId: t!.id });
      return t!;
    });
    respond(res, 201, createTokenResponseSchema, { token: tokenView(row), secret });
  });

  r.delete('/me/tokens/:id', async (req, res) => {
    const { id } = validate.params(req, z.strictObject({ id: idSchema }));
    const user = authOf(res).user;
    const [t] = await db
      .update(apiTokens)
      .set({ revokedAt: new Date() })
      .where(and(eq(apiTokens.id, id), eq(apiTokens.userId, user.id), isNull(apiTokens.revokedAt)))
      .returning({ id: apiTokens.id });
    if (!t) throw notFound('token not found');
    await audit(db, { actorId: user.id, action: 'token.revoke', subjectType: 'api_token', subjectId: id });
    res.status(204).end();
  });

  return r;
}
