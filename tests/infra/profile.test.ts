import { describe, expect, it } from 'vitest';
import { envSchema, loadEnv } from '../../shared/env.js';
import { portOffset, profileDirs, profileFor, serviceEnv } from '../../infra/lib/profile.js';

/** The two profiles must never share a port or a folder, and their env must satisfy shared/env.ts. */
describe('profiles', () => {
  const dev = profileFor('dev', '/repo', 0);
  const test = profileFor('test', '/repo', 0);

  it('use the documented dev ports (infra/README.md)', () => {
    expect(dev.ports).toEqual({ postgres: 15432, redis: 16379, s3: 14569, payments: 14570, smtp: 14525, mailHttp: 14526, api: 5180 });
    expect(test.ports).toMatchObject({ postgres: 25432, redis: 26379, s3: 24569, payments: 24570, smtp: 24525, mailHttp: 24526 });
  });

  it('shift every port by TW_PORT_OFFSET so parallel checkouts never meet', () => {
    expect(portOffset({})).toBe(0);
    expect(portOffset({ TW_PORT_OFFSET: '3000' })).toBe(3000);
    expect(() => portOffset({ TW_PORT_OFFSET: '123' })).toThrow(/TW_PORT_OFFSET/);
    const shifted = [1000, 2000, 3000, 4000, 5000, 6000].flatMap((o) => Object.values(profileFor('test', '/repo', o).ports));
    const all = [...Object.values(test.ports), ...Object.values(dev.ports), ...shifted];
    expect(new Set(all).size).toBe(all.length);
    // below the ephemeral range (32768–60999)
    expect(Math.max(...shifted)).toBeLessThan(32768);
  });

  it('never share a port or a folder', () => {
    const all = [...Object.values(dev.ports), ...Object.values(test.ports)];
    expect(new Set(all).size).toBe(all.length);
    expect(profileDirs(dev).pg).not.toBe(profileDirs(test).pg);
    expect(dev.database).not.toBe(test.database);
    // the web build: npm start serves dist/, npm test builds and serves its own inside .local/test/
    expect(dev.webDist).toBe('/repo/dist');
    expect(test.webDist).toBe('/repo/.local/test/dist');
  });

  it('export an environment the API and worker accept (shared/env.ts), pointing at the profile', () => {
    for (const p of [dev, test]) {
      const env = loadEnv(serviceEnv(p));
      expect(env.DATABASE_URL).toBe(`postgres://postgres@127.0.0.1:${p.ports.postgres}/${p.database}`);
      expect(env.REDIS_URL).toBe(`redis://127.0.0.1:${p.ports.redis}`);
      expect(env.S3_ENDPOINT).toBe(`http://127.0.0.1:${p.ports.s3}`);
      expect(env.STRIPE_API_BASE).toBe(`http://127.0.0.1:${p.ports.payments}`);
      expect(env.SMTP_URL).toBe(`smtp://127.0.0.1:${p.ports.smtp}`);
      expect(env.MAIL_OUTBOX_URL).toBe(`http://127.0.0.1:${p.ports.mailHttp}`);
    }
    expect(serviceEnv(test).NODE_ENV).toBe('test');
    expect(serviceEnv(dev).NODE_ENV).toBe('development');
  });

  it('sets every address shared/env.ts reads (a new variable there shows up here)', () => {
    // these have sensible local defaults in shared/env.ts and no address in them (the worker's
    // settings can still be set in the shell that runs npm start: it is merged underneath)
    const leftToDefaults = [
      'MAIL_FROM', 'SESSION_SECRET', 'LOG_LEVEL', 'BULLMQ_PREFIX',
      'WORKER_COMPUTE_CONCURRENCY', 'WORKER_LARGE_CONCURRENCY', 'WORKER_RENDER_CONCURRENCY', 'WORKER_THREADS', 'WORKER_CHECKPOINT_SECONDS', 'WORKER_LOCK_SECONDS',
    ];
    const names = Object.keys(envSchema.shape);
    expect(names.filter((n) => !(n in serviceEnv(dev)))).toEqual(leftToDefaults);
  });
});
