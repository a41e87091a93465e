import { eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { apiTokens, labs } from '../../drizzle/schema.js';
import { createTokenResponseSchema, tokensResponseSchema } from '../../shared/api/auth.js';
import { sha256Hex } from '../../api/src/auth/secrets.js';
import { as, createUser, signIn, startHarness, TEST_PASSWORD, type Harness, type Session } from './support/harness.js';

let h: Harness;
let session: Session;
let other: Session;

beforeAll(async () => {
  h = await startHarness('csrf');
  const u = await createUser(h, 'Token Keeper');
  session = await signIn(h, u.email, TEST_PASSWORD);
  const o = await createUser(h, 'Someone Else');
  other = await signIn(h, o.email, TEST_PASSWORD);
});
afterAll(async () => {
  await h.close();
});

describe('CSRF protection of cookie sessions', () => {
  it('refuses a write without the header, or with a wrong one, and changes nothing', async () => {
    const name = `CSRF Lab ${h.tag}`;
    const missing = await h.http.post('/api/labs').set('Cookie', session.cookie).send({ name });
    expect(missing.status).toBe(403);
    expect(missing.body.error).toBe('missing or wrong CSRF token');
    const wrong = await h.http.post('/api/labs').set('Cookie', session.cookie).set('X-CSRF-Token', other.csrf).send({ name });
    expect(wrong.status).toBe(403);
    // a forged pair (cookie and header agree, but belong to another session) fails too
    const forged = await h.http
      .post('/api/labs')
      .set('Cookie', `${session.cookie.split(';')[0]}; tw_csrf=${other.csrf}`)
      .set('X-CSRF-Token', other.csrf)
      .send({ name });
    expect(forged.status).toBe(403);
    expect(await h.deps.db.select().from(labs).where(eq(labs.name, name))).toEqual([]);
    // reads need no header, and the right header lets the write through
    await h.http.get('/api/me').set('Cookie', session.cookie).expect(200);
    await as(h.http.post('/api/labs'), session).send({ name }).expect(201);
  });
});

describe('personal API tokens', () => {
  it('creates a token shown once, uses it as a bearer without CSRF, and revokes it', async () => {
    const created = await as(h.http.post('/api/me/tokens'), session).send({ label: 'laptop script' });
    expect(created.status).toBe(201);
    const { token, secret } = createTokenResponseSchema.parse(created.body);
    expect(secret).toMatch(/^tw_[A-Za-z0-9_-]{43}$/);
    expect(secret.startsWith(token.prefix)).toBe(true);
    expect(token.lastUsedAt).toBeNull();
    const [row] = await h.deps.db.select().from(apiTokens).where(eq(apiTokens.id, token.id));
    expect(row!.tokenHash).toBe(sha256Hex(secret));
    expect(JSON.stringify(row)).not.toContain(secret);

    const me = await h.http.get('/api/me').set('Authorization', `Bearer ${secret}`);
    expect(me.status).toBe(200);
    expect(me.body.user.name).toBe('Token Keeper');
    // writes with a bearer need no CSRF header
    await h.http.post('/api/labs').set('Authorization', `Bearer ${secret}`).send({ name: `Bearer Lab ${h.tag}` }).expect(201);

    const list = tokensResponseSchema.parse((await as(h.http.get('/api/me/tokens'), session).expect(200)).body);
    expect(list.tokens).toHaveLength(1);
    expect(list.tokens[0]!.lastUsedAt).not.toBeNull();
    expect(JSON.stringify(list)).not.toContain(secret);

    // another user cannot revoke it
    await as(h.http.delete(`/api/me/tokens/${token.id}`), other).expect(404);
    await as(h.http.delete(`/api/me/tokens/${token.id}`), session).expect(204);
    const after = await h.http.get('/api/me').set('Authorization', `Bearer ${secret}`);
    expect(after.status).toBe(401);
    expect(after.body.error).toBe('invalid or revoked API token');
    expect((await as(h.http.get('/api/me/tokens'), session)).body.tokens).toEqual([]);
  });

  it('answers malformed and unknown bearer tokens with 401 and a reason', async () => {
    const malformed = await h.http.get('/api/me').set('Authorization', 'Basic dXNlcjpwYXNz');
    expect(malformed.status).toBe(401);
    expect(malformed.body.error).toMatch(/Bearer tw_/);
    const unknown = await h.http.get('/api/me').set('Authorization', `Bearer tw_${'x'.repeat(43)}`);
    expect(unknown.status).toBe(401);
    expect(unknown.body.error).toBe('invalid or revoked API token');
  });

  it('treats a tampered session cookie as signed out', async () => {
    const tampered = session.cookie.replace(/tw_session=([^;]+)/, (_m, jwt: string) => `tw_session=${jwt.slice(0, -4)}AAAA`);
    await h.http.get('/api/me').set('Cookie', tampered).expect(200, { signedIn: false });
    const res = await h.http.get('/api/me/tokens').set('Cookie', tampered);
    expect(res.status).toBe(401);
    expect(res.body.error).toBe('sign in first');
  });
});
