import { spawnSync } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';

/**
 * The first half of `npm start` / `npm test` decides whether to reinstall the npm dependencies.
 * It runs in a scratch checkout holding only the script, with `npm` on PATH replaced by a script
 * that records its arguments: what is under test is the decision and what it tells the person,
 * not npm itself (the real install runs in every fresh-clone check).
 */
const root = fs.mkdtempSync(path.join(os.tmpdir(), 'tw-prepare-'));
afterAll(() => fs.rmSync(root, { recursive: true, force: true }));

const script = path.resolve(import.meta.dirname, '../../infra/prepare.sh');

function checkout(name: string): { dir: string; calls: string } {
  const dir = path.join(root, name);
  fs.mkdirSync(path.join(dir, 'infra'), { recursive: true });
  fs.copyFileSync(script, path.join(dir, 'infra/prepare.sh'));
  fs.writeFileSync(path.join(dir, 'package-lock.json'), '{}');
  const bin = path.join(dir, 'bin');
  fs.mkdirSync(bin);
  const calls = path.join(dir, 'npm-calls');
  fs.writeFileSync(path.join(bin, 'npm'), `#!/bin/sh\necho "$@" >> ${calls}\nmkdir -p node_modules\n`, { mode: 0o755 });
  return { dir, calls };
}

function prepare(dir: string) {
  const env = { ...process.env, PATH: `${path.join(dir, 'bin')}:${process.env.PATH}` };
  return spawnSync('bash', ['infra/prepare.sh'], { cwd: dir, env, encoding: 'utf8' });
}

const npmCalls = (file: string) => (fs.existsSync(file) ? fs.readFileSync(file, 'utf8').trim().split('\n') : []);

describe('prepare: npm dependencies', () => {
  it('installs on a fresh checkout and says it is the first run', () => {
    const { dir, calls } = checkout('fresh');
    const run = prepare(dir);
    expect(run.status, run.stderr).toBe(0);
    expect(run.stdout).toContain('installing npm dependencies with npm ci (first run');
    expect(npmCalls(calls)).toEqual(['ci --no-audit --no-fund']);
  });

  it('reinstalls when the lock file is newer than the install, and says why with both dates', () => {
    const { dir, calls } = checkout('stale');
    fs.mkdirSync(path.join(dir, 'node_modules'));
    const installed = path.join(dir, 'node_modules/.package-lock.json');
    fs.writeFileSync(installed, '{}');
    fs.utimesSync(installed, new Date('2026-01-02T03:04:05Z'), new Date('2026-01-02T03:04:05Z'));
    const run = prepare(dir);
    expect(run.status, run.stderr).toBe(0);
    expect(run.stdout).toMatch(/package-lock\.json \(\d{4}-\d\d-\d\d [\d:]{8}\) is newer than the installed dependencies \(2026-01-0[12] [\d:]{8}\)/);
    expect(run.stdout).toContain('reinstalling them with npm ci');
    expect(npmCalls(calls)).toEqual(['ci --no-audit --no-fund']);
  });

  it('leaves a current install alone and says nothing about it', () => {
    const { dir, calls } = checkout('current');
    fs.mkdirSync(path.join(dir, 'node_modules'));
    fs.writeFileSync(path.join(dir, 'node_modules/.package-lock.json'), '{}');
    const lock = path.join(dir, 'package-lock.json');
    fs.utimesSync(lock, new Date('2026-01-01T00:00:00Z'), new Date('2026-01-01T00:00:00Z'));
    const run = prepare(dir);
    expect(run.status, run.stderr).toBe(0);
    expect(run.stdout).not.toContain('npm');
    expect(npmCalls(calls)).toEqual([]);
  });

  it('never reinstalls a linked node_modules (another checkout owns it), and refuses an empty one', () => {
    const { dir, calls } = checkout('linked');
    const owner = path.join(root, 'owner-modules');
    fs.mkdirSync(owner);
    fs.symlinkSync(owner, path.join(dir, 'node_modules'));
    const empty = prepare(dir);
    expect(empty.status).toBe(1);
    expect(empty.stderr).toContain('node_modules links to an empty install; run npm ci where it points');
    fs.writeFileSync(path.join(owner, '.package-lock.json'), '{}');
    fs.utimesSync(path.join(owner, '.package-lock.json'), new Date('2020-01-01T00:00:00Z'), new Date('2020-01-01T00:00:00Z'));
    const run = prepare(dir);
    expect(run.status, run.stderr).toBe(0);
    expect(npmCalls(calls)).toEqual([]);
  });
});
