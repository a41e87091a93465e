import { mkdtempSync, mkdirSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import supertest from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createApp } from '../../api/src/app.js';
import { outboxResponseSchema } from '../../shared/api/dev.js';
import { healthResponseSchema } from '../../shared/api/health.js';
import { startHarness, type Harness } from './support/harness.js';
import { waitForMail } from './support/outbox.js';

/** The built web app behind the API: static files, the single-page fallback, headers. */
let h: Harness;
let dist: string;
let http: ReturnType<typeof supertest>;

beforeAll(async () => {
  h = await startHarness('shell');
  dist = mkdtempSync(path.join(tmpdir(), 'tw-dist-'));
  mkdirSync(path.join(dist, 'assets'));
  writeFileSync(path.join(dist, 'index.html'), '<!doctype html><title>Toppleworks</title><div id="root"></div>');
  writeFileSync(path.join(dist, 'assets', 'main.js'), 'console.log(1)');
  http = supertest(createApp(h.deps, { distDir: dist }));
});
afterAll(async () => {
  rmSync(dist, { recursive: true, force: true });
  await h.close();
});

describe('serving the web app', () => {
  it('serves files from dist/ and index.html for every web route', async () => {
    const js = await http.get('/assets/main.js');
    expect(js.status).toBe(200);
    expect(js.text).toBe('console.log(1)');
    for (const p of ['/', '/runs/123', '/f/some-figure', '/invitations/abc']) {
      const page = await http.get(p);
      expect(page.status).toBe(200);
      expect(page.headers['content-type']).toMatch(/text\/html/);
      expect(page.text).toContain('<div id="root">');
    }
  });

  it('keeps unknown /api paths as JSON 404s', async () => {
    const res = await http.get('/api/runs/x/y/z');
    expect(res.status).toBe(404);
    expect(res.headers['content-type']).toMatch(/application\/json/);
  });

  it('answers liveness without touching the database, with security headers and a request id', async () => {
    const res = await http.get('/api/health').set('X-Request-Id', 'trace-abc.123');
    expect(healthResponseSchema.parse(res.body).ok).toBe(true);
    expect(res.headers['x-request-id']).toBe('trace-abc.123');
    expect(res.headers['content-security-policy']).toContain("default-src 'self'");
    expect(res.headers['x-content-type-options']).toBe('nosniff');
    expect(res.headers['x-powered-by']).toBeUndefined();
    // an id that could inject into logs is replaced
    const odd = await http.get('/api/health').set('X-Request-Id', 'bad id\twith spaces');
    expect(odd.headers['x-request-id']).toMatch(/^[0-9a-f-]{36}$/);
  });

  it('lists the mail fake at /api/dev/outbox, and hides it in production', async () => {
    const email = h.email('outbox-reader');
    await http.post('/api/auth/password-reset').send({ email }).expect(202);
    await http.post('/api/auth/sign-up').send({ email, password: 'outbox-password', name: 'Outbox Reader' }).expect(201);
    await waitForMail(h.env, email, /confirm/i);
    const res = await http.get('/api/dev/outbox');
    expect(res.status).toBe(200);
    const mine = outboxResponseSchema.parse(res.body).messages.filter((m) => m.to.includes(email));
    expect(mine.map((m) => m.subject)).toEqual(['Confirm your e-mail for Toppleworks']);
    expect(mine[0]!.from).toContain('press@toppleworks.local');
    const production = supertest(createApp({ ...h.deps, env: { ...h.env, NODE_ENV: 'production' } }, { distDir: dist }));
    const hidden = await production.get('/api/dev/outbox');
    expect(hidden.status).toBe(404);
  });

  it('reports readiness of PostgreSQL and Redis', async () => {
    const res = await http.get('/api/health/ready');
    expect(res.status).toBe(200);
    expect(res.body).toEqual({ ok: true, postgres: true, redis: true });
  });
});
