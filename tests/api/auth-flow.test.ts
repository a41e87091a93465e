import { eq } from 'drizzle-orm';
import supertest from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { emailTokens, sessions, users } from '../../drizzle/schema.js';
import { createApp } from '../../api/src/app.js';
import { issueEmailToken } from '../../api/src/auth/email-tokens.js';
import { randomToken, sha256Hex } from '../../api/src/auth/secrets.js';
import { MAILED_LINK_HOURS, meResponseSchema, passwordResetCheckResponseSchema, userResponseSchema } from '../../shared/api/auth.js';
import { apiErrorSchema } from '../../shared/api/errors.js';
import { as, createUser, sessionFrom, signIn, startHarness, userByEmail, type Harness } from './support/harness.js';
import { linkToken, mailsTo, waitForMail } from './support/outbox.js';

let h: Harness;
beforeAll(async () => {
  h = await startHarness('auth');
});
afterAll(async () => {
  await h.close();
});

describe('sign-up, e-mail verification and sign-in', () => {
  it('goes from sign-up through the mailed link to /api/me', async () => {
    const email = h.email('Ada.Quist');
    const up = await h.http.post('/api/auth/sign-up').send({ email: `  ${email.toUpperCase()} `, password: 'grains-of-sand-1', name: 'Ada Quist' });
    expect(up.status).toBe(201);
    const { user } = userResponseSchema.parse(up.body);
    expect(user).toMatchObject({ email: email.toLowerCase(), name: 'Ada Quist', emailVerified: false, isAdmin: false });
    const stored = await userByEmail(h, email.toLowerCase());
    expect(stored!.passwordHash).toMatch(/^\$argon2id\$v=19\$m=19456,t=2,p=1\$/);

    // unverified: signed in, but labs wait for the address
    const early = sessionFrom(up);
    const lab = await as(h.http.post('/api/labs'), early).send({ name: `Unverified ${h.tag}` });
    expect(lab.status).toBe(403);
    expect(lab.body.error).toBe('verify your e-mail first');

    // a second mail on request; the newest link is the one used below, and both are valid
    await as(h.http.post('/api/auth/verify-email/resend'), early).expect(202);
    const mail = await waitForMail(h.env, email.toLowerCase(), /confirm your e-mail/i);
    expect(mail.text).toContain(`${h.env.PUBLIC_URL}/verify-email?token=`);
    // the mail names the lifetime the token is stamped with (one constant for both)
    expect(MAILED_LINK_HOURS.verify_email).toBe(48);
    expect(mail.text).toContain('works once and for 48 hours');
    expect(mail.html).toContain('verify-email?token=');
    const token = linkToken(mail.text, /verify-email\?token=([A-Za-z0-9_%-]+)/);

    const verified = await h.http.post('/api/auth/verify-email').send({ token });
    expect(verified.status).toBe(200);
    expect(verified.body.user.emailVerified).toBe(true);
    // single use
    const again = await h.http.post('/api/auth/verify-email').send({ token });
    expect(again.status).toBe(400);
    expect(again.body.error).toMatch(/invalid, used or expired/);

    const session = await signIn(h, email, 'grains-of-sand-1');
    const me = await as(h.http.get('/api/me'), session);
    expect(me.status).toBe(200);
    expect(meResponseSchema.parse(me.body)).toEqual({
      signedIn: true,
      user: { id: user.id, email: email.toLowerCase(), name: 'Ada Quist', emailVerified: true, isAdmin: false },
      labs: [],
      activeLabId: null,
    });
  });

  it('sets an httpOnly SameSite=Lax session cookie and a readable CSRF cookie', async () => {
    const email = h.email('cookie');
    await h.http.post('/api/auth/sign-up').send({ email, password: 'cookie-jar-pass', name: 'Cookie' }).expect(201);
    const res = await h.http.post('/api/auth/sign-in').send({ email, password: 'cookie-jar-pass' }).expect(200);
    const cookies = res.headers['set-cookie'] as unknown as string[];
    const session = cookies.find((c) => c.startsWith('tw_session='))!;
    const csrf = cookies.find((c) => c.startsWith('tw_csrf='))!;
    expect(session).toMatch(/HttpOnly/i);
    expect(session).toMatch(/SameSite=Lax/i);
    expect(csrf).not.toMatch(/HttpOnly/i);
    // 7 days, to the minute
    const expires = new Date(/Expires=([^;]+)/i.exec(session)![1]!).getTime();
    expect(Math.abs(expires - (Date.now() + 7 * 24 * 3600 * 1000))).toBeLessThan(60_000);
  });

  it('refuses a second account for the same address (any case) with 409', async () => {
    const email = h.email('twice');
    await h.http.post('/api/auth/sign-up').send({ email, password: 'first-password', name: 'One' }).expect(201);
    const dup = await h.http.post('/api/auth/sign-up').send({ email: email.toUpperCase(), password: 'second-password', name: 'Two' });
    expect(dup.status).toBe(409);
    expect(apiErrorSchema.parse(dup.body).error).toBe('an account with this e-mail already exists');
    const [row] = await h.deps.db.select().from(users).where(eq(users.email, email));
    expect(row!.name).toBe('One');
  });

  it('answers a wrong password and an unknown address the same way', async () => {
    const email = h.email('wrong');
    await h.http.post('/api/auth/sign-up').send({ email, password: 'right-password', name: 'W' }).expect(201);
    const bad = await h.http.post('/api/auth/sign-in').send({ email, password: 'wrong-password' });
    const unknown = await h.http.post('/api/auth/sign-in').send({ email: h.email('nobody'), password: 'wrong-password' });
    expect([bad.status, unknown.status]).toEqual([401, 401]);
    expect(bad.body.error).toBe('wrong e-mail or password');
    expect(unknown.body.error).toBe('wrong e-mail or password');
    expect(bad.headers['set-cookie']).toBeUndefined();
  });

  it('revokes the session on sign-out', async () => {
    const email = h.email('leaver');
    await h.http.post('/api/auth/sign-up').send({ email, password: 'leaving-now-1', name: 'L' }).expect(201);
    const s = await signIn(h, email, 'leaving-now-1');
    await as(h.http.get('/api/me'), s).expect(200);
    await as(h.http.post('/api/auth/sign-out'), s).expect(204);
    // "who am I" answers that nobody is; what needs a person still refuses
    await as(h.http.get('/api/me'), s).expect(200, { signedIn: false });
    expect((await as(h.http.get('/api/me/tokens'), s)).status).toBe(401);
    const u = await userByEmail(h, email);
    const rows = await h.deps.db.select().from(sessions).where(eq(sessions.userId, u!.id));
    // sign-up's session and the sign-in's; the latter is revoked
    expect(rows.filter((r) => r.revokedAt !== null)).toHaveLength(1);
  });
});

describe('password reset by mail', () => {
  it('mails a one-hour single-use link, changes the password and ends every session', async () => {
    const email = h.email('forgetful');
    await h.http.post('/api/auth/sign-up').send({ email, password: 'old-password-1', name: 'Forgetful' }).expect(201);
    const s1 = await signIn(h, email, 'old-password-1');
    const s2 = await signIn(h, email, 'old-password-1');

    const ask = await h.http.post('/api/auth/password-reset').send({ email });
    expect(ask.status).toBe(202);
    const mail = await waitForMail(h.env, email, /new toppleworks password/i);
    expect(mail.text).toContain(`${h.env.PUBLIC_URL}/reset-password?token=`);
    const token = linkToken(mail.text, /reset-password\?token=([A-Za-z0-9_%-]+)/);

    const done = await h.http.post('/api/auth/password-reset/complete').send({ token, password: 'new-password-22' });
    expect(done.status).toBe(200);
    expect(done.body.user.email).toBe(email);

    await as(h.http.get('/api/me'), s1).expect(200, { signedIn: false });
    await as(h.http.get('/api/me/tokens'), s2).expect(401);
    await h.http.post('/api/auth/sign-in').send({ email, password: 'old-password-1' }).expect(401);
    await signIn(h, email, 'new-password-22');
    const reuse = await h.http.post('/api/auth/password-reset/complete').send({ token, password: 'third-password-3' });
    expect(reuse.status).toBe(400);
    expect(reuse.body.error).toMatch(/password reset link is invalid, used or expired/);
  });

  it('answers 202 for an unknown address and sends nothing', async () => {
    const email = h.email('ghost');
    const res = await h.http.post('/api/auth/password-reset').send({ email });
    expect(res.status).toBe(202);
    await new Promise((r) => setTimeout(r, 300));
    expect(await mailsTo(h.env, email)).toEqual([]);
  });

  it('refuses a short new password and keeps the token usable', async () => {
    const email = h.email('short');
    await h.http.post('/api/auth/sign-up').send({ email, password: 'long-enough-1', name: 'S' }).expect(201);
    await h.http.post('/api/auth/password-reset').send({ email }).expect(202);
    const token = linkToken((await waitForMail(h.env, email, /password/i)).text, /reset-password\?token=([A-Za-z0-9_%-]+)/);
    const short = await h.http.post('/api/auth/password-reset/complete').send({ token, password: 'short' });
    expect(short.status).toBe(400);
    expect(short.body.issues).toEqual([{ path: 'password', message: 'password must be at least 10 characters' }]);
    await h.http.post('/api/auth/password-reset/complete').send({ token, password: 'long-enough-2' }).expect(200);
  });
});

describe('checking a reset link before using it', () => {
  const RESET_LINK = /reset-password\?token=([A-Za-z0-9_%-]+)/;
  const check = (token: unknown) => h.http.post('/api/auth/password-reset/check').send({ token });

  /** An account and the token of a reset link mailed to it, read from the mail fake. */
  async function mailedResetToken(name: string): Promise<{ email: string; token: string }> {
    const email = h.email(name);
    await h.http.post('/api/auth/sign-up').send({ email, password: 'before-reset-1', name }).expect(201);
    await h.http.post('/api/auth/password-reset').send({ email }).expect(202);
    const mail = await waitForMail(h.env, email, /new toppleworks password/i);
    expect(mail.text).toContain('works once and for one hour');
    return { email, token: linkToken(mail.text, RESET_LINK) };
  }
  /** The token of the reset mail that came after the one holding `first`. */
  async function secondMailedToken(email: string, first: string): Promise<string> {
    const until = Date.now() + 5000;
    for (;;) {
      const tokens = (await mailsTo(h.env, email)).filter((m) => RESET_LINK.test(m.text)).map((m) => linkToken(m.text, RESET_LINK));
      const other = tokens.find((t) => t !== first);
      if (other) return other;
      if (Date.now() > until) throw new Error(`no second reset mail to ${email}`);
      await new Promise((r) => setTimeout(r, 100));
    }
  }
  const usedAtOf = async (token: string) =>
    (await h.deps.db.select({ usedAt: emailTokens.usedAt }).from(emailTokens).where(eq(emailTokens.tokenHash, sha256Hex(token))))[0]!.usedAt;

  it('says a fresh link works and until when, names no account, and uses nothing', async () => {
    const { email, token } = await mailedResetToken('check-good');
    const first = await check(token);
    expect(first.status).toBe(200);
    const answer = passwordResetCheckResponseSchema.parse(first.body);
    // nothing about the account: only the state and the end of the link's hour (api/src/auth/email-tokens.ts)
    expect(Object.keys(first.body).sort()).toEqual(['expiresAt', 'usable']);
    expect(JSON.stringify(first.body)).not.toContain(email);
    if (!answer.usable) throw new Error(`a fresh link was refused: ${answer.reason}`);
    expect(Math.abs(new Date(answer.expiresAt).getTime() - (Date.now() + MAILED_LINK_HOURS.reset_password * 3600_000))).toBeLessThan(60_000);
    expect(MAILED_LINK_HOURS.reset_password).toBe(1);

    // asking again changes nothing: the same answer, the row unused, and the link still sets the password
    expect((await check(token)).body).toEqual(first.body);
    expect(await usedAtOf(token)).toBeNull();
    await h.http.post('/api/auth/password-reset/complete').send({ token, password: 'after-reset-22' }).expect(200);
    await signIn(h, email, 'after-reset-22');
  });

  it('says used after the link set a password, also for an earlier link of the same account', async () => {
    const { email, token: earlier } = await mailedResetToken('check-used');
    await h.http.post('/api/auth/password-reset').send({ email }).expect(202);
    const later = await secondMailedToken(email, earlier);
    await h.http.post('/api/auth/password-reset/complete').send({ token: later, password: 'after-reset-33' }).expect(200);
    for (const token of [later, earlier]) {
      const res = await check(token);
      expect(res.status).toBe(200);
      expect(res.body).toEqual({ usable: false, reason: 'used' });
    }
  });

  it('says expired once the hour is over, and the form is refused at submission as before', async () => {
    const { token } = await mailedResetToken('check-expired');
    expect((await check(token)).body.usable).toBe(true);
    // the hour passes between opening the page and saving (the row as a later clock would find it)
    await h.deps.db.update(emailTokens).set({ expiresAt: new Date(Date.now() - 1000) }).where(eq(emailTokens.tokenHash, sha256Hex(token)));
    expect((await check(token)).body).toEqual({ usable: false, reason: 'expired' });
    const late = await h.http.post('/api/auth/password-reset/complete').send({ token, password: 'too-late-pass-4' });
    expect(late.status).toBe(400);
    expect(late.body.error).toBe('this password reset link is invalid, used or expired');
    expect(await usedAtOf(token)).toBeNull();
  });

  it('says unknown for a token never issued and for a token of another purpose', async () => {
    expect((await check(randomToken())).body).toEqual({ usable: false, reason: 'unknown' });
    const u = await createUser(h, 'check-other-purpose', { verified: false });
    const verifyToken = await issueEmailToken(h.deps.db, u.id, 'verify_email');
    expect((await check(verifyToken)).body).toEqual({ usable: false, reason: 'unknown' });
    // and the verification token is still good for what it was mailed for
    expect(await usedAtOf(verifyToken)).toBeNull();
    await h.http.post('/api/auth/verify-email').send({ token: verifyToken }).expect(200);
  });

  it('refuses a malformed token or body with 400 and the field at fault', async () => {
    const { token } = await mailedResetToken('check-malformed');
    // a link cut short in the mail client, characters a token never has, a wrong type, nothing at all
    for (const bad of [token.slice(0, 12), `${token.slice(0, 30)}!*`, 42]) {
      const res = await check(bad);
      expect(res.status).toBe(400);
      expect(res.body.issues).toEqual([{ path: 'token', message: bad === 42 ? expect.any(String) : 'not a valid token' }]);
    }
    const empty = await h.http.post('/api/auth/password-reset/check').send({});
    expect(empty.status).toBe(400);
    expect(empty.body.issues.map((i: { path: string }) => i.path)).toEqual(['token']);
    const extra = await h.http.post('/api/auth/password-reset/check').send({ token, email: 'who@example.org' });
    expect(extra.status).toBe(400);
    expect(apiErrorSchema.parse(extra.body).error).toBeTruthy();
    // none of those touched the real token
    expect((await check(token)).body.usable).toBe(true);
  });

  it('shares the reset form\'s per-address limit outside tests: the 51st check in 15 minutes answers 429', async () => {
    // the suite's own app skips the limiter (NODE_ENV=test); this one is configured as in development
    const limited = supertest(createApp({ ...h.deps, env: { ...h.env, NODE_ENV: 'development' } }, { distDir: '/nonexistent' }));
    const statuses: number[] = [];
    for (let k = 0; k < 50; k++) statuses.push((await limited.post('/api/auth/password-reset/check').send({ token: randomToken() })).status);
    expect(statuses.every((s) => s === 200)).toBe(true);
    const last = await limited.post('/api/auth/password-reset/check').send({ token: randomToken() });
    expect(last.status).toBe(429);
    expect(last.body.error).toMatch(/too many attempts/);
  });
});
