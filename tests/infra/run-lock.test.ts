import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { acquireRunLock } from '../../infra/lib/run-lock.js';

/** One `npm start` (or `npm test`) per profile: a second must refuse instead of stopping the first's services. */
const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'tw-lock-'));
afterAll(() => fs.rmSync(dir, { recursive: true, force: true }));

describe('run lock', () => {
  it('refuses a second holder while the first lives, and frees on release', () => {
    const file = path.join(dir, 'dev.lock');
    const release = acquireRunLock(file, 'npm start');
    expect(() => acquireRunLock(file, 'npm start')).toThrow(`another npm start is already running (pid ${process.pid}); stop it first`);
    release();
    expect(fs.existsSync(file)).toBe(false);
    acquireRunLock(file, 'npm start')();
  });

  it('takes over the lock of a holder that is gone (a crashed run) or a half-written file', () => {
    const file = path.join(dir, 'test.lock');
    fs.writeFileSync(file, JSON.stringify({ pid: 2 ** 22 + 11, ticks: '123' }));
    const release = acquireRunLock(file, 'npm test');
    expect(JSON.parse(fs.readFileSync(file, 'utf8')).pid).toBe(process.pid);
    release();
    fs.writeFileSync(file, '{"pid":');
    acquireRunLock(file, 'npm test')();
  });
});
