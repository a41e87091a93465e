/**
 * The files in infra/deploy/ work: the example environment file is accepted by shared/env.ts and
 * names every worker setting, and a worker started the way the systemd unit starts it (its
 * ExecStart, its environment file with this machine's service addresses filled in) takes and
 * finishes a run submitted to the API — what an extra worker on another machine does.
 */
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { envSchema, loadEnv } from '../../shared/env.js';
import { runResponseSchema } from '../../shared/api/runs.js';
import { as, createLab, createUser, runSettled, signIn, startHarness, TEST_PASSWORD, type Harness } from '../api/support/harness.js';
import { startWorkerProcess, type WorkerProcess } from './worker-process.js';

const ROOT = path.resolve(import.meta.dirname, '..', '..');
const DEPLOY = path.join(ROOT, 'infra', 'deploy');

/** KEY=VALUE lines as systemd's EnvironmentFile= reads them (comments and blank lines skipped). */
function envFile(text: string): Record<string, string> {
  const out: Record<string, string> = {};
  for (const line of text.split('\n')) {
    const t = line.trim();
    if (!t || t.startsWith('#')) continue;
    const i = t.indexOf('=');
    out[t.slice(0, i)] = t.slice(i + 1);
  }
  return out;
}

/** The value of a `Key=` line of a systemd unit (the last one wins, as in systemd for ExecStart). */
function unitValues(text: string, key: string): string[] {
  return text.split('\n').filter((l) => l.startsWith(`${key}=`)).map((l) => l.slice(key.length + 1));
}

const example = envFile(readFileSync(path.join(DEPLOY, 'toppleworks.env.example'), 'utf8'));
const unit = readFileSync(path.join(DEPLOY, 'systemd', 'toppleworks-worker@.service'), 'utf8');

describe('infra/deploy', () => {
  it('the example environment parses, and names every worker setting and the queue prefix', () => {
    const env = loadEnv(example);
    expect(env.NODE_ENV).toBe('production');
    const documented = new Set(Object.keys(example));
    const commented = readFileSync(path.join(DEPLOY, 'toppleworks.env.example'), 'utf8');
    for (const name of Object.keys(envSchema.shape).filter((n) => n.startsWith('WORKER_') || n === 'BULLMQ_PREFIX')) {
      // set, or shown commented out with its meaning
      expect(documented.has(name) || commented.includes(`# ${name}=`), name).toBe(true);
      expect(readFileSync(path.join(DEPLOY, 'README.md'), 'utf8')).toContain(`\`${name}\``);
    }
  });

  describe('a worker started as the systemd unit starts it', () => {
    let h: Harness;
    let worker: WorkerProcess;
    beforeAll(async () => {
      h = await startHarness('deploy');
    });
    afterAll(async () => {
      await worker?.kill();
      await h?.close();
    });

    it('takes a run from the shared queue and finishes it', { timeout: 90_000 }, async () => {
      const [workdir] = unitValues(unit, 'WorkingDirectory');
      const [exec] = unitValues(unit, 'ExecStart');
      expect(exec).toBe(`${workdir}/node_modules/.bin/tsx renderer/src/worker.ts`);
      expect(unitValues(unit, 'EnvironmentFile')).toEqual(['/etc/toppleworks/toppleworks.env', '-/etc/toppleworks/worker.env']);
      // this "machine" reaches the shared services at the test's addresses; the rest is the example file
      const shared = Object.fromEntries(
        (['DATABASE_URL', 'REDIS_URL', 'S3_ENDPOINT', 'S3_REGION', 'S3_BUCKET', 'S3_ACCESS_KEY_ID', 'S3_SECRET_ACCESS_KEY', 'SMTP_URL', 'PUBLIC_URL'] as const).map((k) => [k, String(h.env[k])]),
      );
      worker = startWorkerProcess({ ...example, ...shared, BULLMQ_PREFIX: h.queuePrefix });
      await worker.waitFor(/renderer worker ready: standard lane 1, large lane 1, render 1 at once; .*checkpoint every 60 s, lock 30 s/);

      const a = await createUser(h, 'Deploy Author');
      const labId = await createLab(h, 'Deploy Lab', [{ userId: a.id, role: 'author' }]);
      const author = await signIn(h, a.email, TEST_PASSWORD);
      const res = await as(h.http.post('/api/runs'), author).send({ labId, title: 'On another machine', spec: { lattice: { preset: 'square' }, chips: 1000 } });
      expect(res.status).toBe(201);
      const run = await runSettled(h, author, runResponseSchema.parse(res.body).run.id, 60_000);
      expect(run.status, worker.output()).toBe('finished');
      // 18,226 topplings for n = 1000 on Z^2: regression value from an independent computation (an independent numpy run, computed only)
      expect(run.stats?.totalTopplings).toBe('18226');
    });
  });
});
