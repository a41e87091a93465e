import { and, eq, isNull } from 'drizzle-orm';
import { Router } from 'express';
import {
  passwordResetCheckRequestSchema,
  passwordResetCheckResponseSchema,
  passwordResetCompleteRequestSchema,
  passwordResetRequestSchema,
  signInRequestSchema,
  signUpRequestSchema,
  userResponseSchema,
  verifyEmailRequestSchema,
} from '../../../shared/api/auth.js';
import { emailTokens, users } from '../../../drizzle/schema.js';
import { clearSessionCookies, setSessionCookies } from '../auth/cookies.js';
import { consumeEmailToken, inspectEmailToken, issueEmailToken } from '../auth/email-tokens.js';
import { authOf, requireUser } from '../auth/middleware.js';
import { dummyPasswordHash, hashPassword, verifyPassword } from '../auth/passwords.js';
import { openSession, revokeAllSessions, revokeSession } from '../auth/sessions.js';
import { uniqueAs } from '../db/errors.js';
import type { AppDeps } from '../deps.js';
import { badRequest, conflict, HttpError } from '../http/http-error.js';
import { respond } from '../http/respond.js';
import { validate } from '../http/validate.js';
import { resetMail } from '../mail/reset-mail.js';
import { verificationMail } from '../mail/verification-mail.js';
import { audit } from '../services/audit.js';
import { userView } from '../services/views.js';

const duplicateEmail = () => conflict('an account with this e-mail already exists');

export function authRouter({ db, env, mailer }: AppDeps): Router {
  const r = Router();

  r.post('/auth/sign-up', async (req, res) => {
    const body = validate.body(req, signUpRequestSchema);
    const [existing] = await db.select({ id: users.id }).from(users).where(eq(users.email, body.email));
    if (existing) throw duplicateEmail();
    const passwordHash = await hashPassword(body.password);
    // The mail is sent inside the transaction: if it cannot be sent, no account is left behind.
    const user = await db.transaction(async (tx) => {
      const [u] = await tx.insert(users).values({ email: body.email, name: body.name, passwordHash }).returning().catch(uniqueAs(duplicateEmail()));
      const token = await issueEmailToken(tx, u!.id, 'verify_email');
      await audit(tx, { actorId: u!.id, action: 'user.sign-up', subjectType: 'user', subjectId: u!.id });
      await mailer.send(verificationMail(env.PUBLIC_URL, u!.email, u!.name, token));
      return u!;
    });
    // Signed in straight away; runs and labs still wait for the verified e-mail.
    setSessionCookies(res, env, await openSession(db, env.SESSION_SECRET, user.id));
    respond(res, 201, userResponseSchema, { user: userView(user) });
  });

  r.post('/auth/verify-email', async (req, res) => {
    const { token } = validate.body(req, verifyEmailRequestSchema);
    const user = await db.transaction(async (tx) => {
      const userId = await consumeEmailToken(tx, token, 'verify_email');
      if (!userId) throw badRequest('this verification link is invalid, used or expired');
      const [u] = await tx.update(users).set({ emailVerifiedAt: new Date() }).where(eq(users.id, userId)).returning();
      await audit(tx, { actorId: userId, action: 'user.verify-email', subjectType: 'user', subjectId: userId });
      return u!;
    });
    respond(res, 200, userResponseSchema, { user: userView(user) });
  });

  // Not in the first contract: a lost or expired verification mail can be sent again.
  r.post('/auth/verify-email/resend', requireUser, async (_req, res) => {
    const user = authOf(res).user;
    if (user.emailVerified) throw conflict('your e-mail is already verified');
    await db.transaction(async (tx) => {
      const token = await issueEmailToken(tx, user.id, 'verify_email');
      await mailer.send(verificationMail(env.PUBLIC_URL, user.email, user.name, token));
    });
    res.status(202).json({ ok: true });
  });

  r.post('/auth/sign-in', async (req, res) => {
    const { email, password } = validate.body(req, signInRequestSchema);
    const [user] = await db.select().from(users).where(eq(users.email, email));
    const ok = await verifyPassword(user?.passwordHash ?? (await dummyPasswordHash()), password);
    if (!user || !ok) throw new HttpError(401, 'wrong e-mail or password');
    setSessionCookies(res, env, await openSession(db, env.SESSION_SECRET, user.id));
    respond(res, 200, userResponseSchema, { user: userView(user) });
  });

  r.post('/auth/sign-out', requireUser, async (_req, res) => {
    const auth = authOf(res);
    if (auth.via === 'cookie') await revokeSession(db, auth.sessionId);
    clearSessionCookies(res);
    res.status(204).end();
  });

  r.post('/auth/password-reset', async (req, res) => {
    const { email } = validate.body(req, passwordResetRequestSchema);
    const [user] = await db.select().from(users).where(eq(users.email, email));
    if (user) {
      await db.transaction(async (tx) => {
        const token = await issueEmailToken(tx, user.id, 'reset_password');
        await mailer.send(resetMail(env.PUBLIC_URL, user.email, user.name, token));
      });
    }
    // Same answer either way, so the form cannot be used to learn who has an account.
    res.status(202).json({ ok: true });
  });

  // Read-only (nothing is marked used): the reset page asks on arrival. POST keeps the token out of
  // URLs and access logs; under /auth/password-reset it shares that route's rate limit (app.ts).
  r.post('/auth/password-reset/check', async (req, res) => {
    const { token } = validate.body(req, passwordResetCheckRequestSchema);
    const state = await inspectEmailToken(db, token, 'reset_password');
    respond(res, 200, passwordResetCheckResponseSchema, state.usable ? { usable: true, expiresAt: state.expiresAt.toISOString() } : state);
  });

  r.post('/auth/password-reset/complete', async (req, res) => {
    const { token, password } = validate.body(req, passwordResetCompleteRequestSchema);
    const passwordHash = await hashPassword(password);
    const user = await db.transaction(async (tx) => {
      const userId = await consumeEmailToken(tx, token, 'reset_password');
      if (!userId) throw badRequest('this password reset link is invalid, used or expired');
      // Following the link proves the mailbox, so it also verifies the address.
      const [u] = await tx.select().from(users).where(eq(users.id, userId));
      const [updated] = await tx
        .update(users)
        .set({ passwordHash, emailVerifiedAt: u!.emailVerifiedAt ?? new Date() })
        .where(eq(users.id, userId))
        .returning();
      // Other reset links mailed earlier die with this one.
      await tx
        .update(emailTokens)
        .set({ usedAt: new Date() })
        .where(and(eq(emailTokens.userId, userId), eq(emailTokens.purpose, 'reset_password'), isNull(emailTokens.usedAt)));
      await revokeAllSessions(tx, userId);
      await audit(tx, { actorId: userId, action: 'user.password-reset', subjectType: 'user', subjectId: userId });
      return updated!;
    });
    clearSessionCookies(res);
    respond(res, 200, userResponseSchema, { user: userView(user) });
  });

  return r;
}
