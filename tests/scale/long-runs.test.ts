/**
 * Long-run behaviour of the fast path: checkpoints survive a kill and resume to the identical result,
 * cancellation is honoured promptly, progress rises to 1 with an estimate of the time left.
 */
import { spawn } from 'node:child_process';
import { existsSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, describe, expect, it } from 'vitest';
import { readSnapshotFile, writeSnapshotFile } from '../../renderer/src/farm/checkpoint-file.js';
import { decodeSnapshot, encodeSnapshot, type Snapshot } from '../../renderer/src/engine/index.js';
import { stabilizeScaled, type ScaleProgress } from '../../renderer/src/scale/scaled.js';
import { comparable, problem } from '../engine/helpers.js';

const here = dirname(fileURLToPath(import.meta.url));
const dir = mkdtempSync(join(tmpdir(), 'tw-scale-'));
const levelOf = (s: Snapshot) => (s.kind === 'seeded' ? s.level : -1);
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('checkpoints', () => {
  it('a run killed midway resumes from its last checkpoint to the identical result', async () => {
    const n = 4_000_000; // long enough on the folded (eighth-plane) path for a checkpoint of the finest levels
    const path = join(dir, 'run.ckpt');
    const child = spawn(process.execPath, ['--import', 'tsx', join(here, 'checkpoint-child.ts'), String(n), path], { stdio: ['ignore', 'pipe', 'pipe'] });
    let out = '';
    child.stdout.on('data', (d) => (out += d));
    const exited = new Promise<number | null>((resolve) => child.on('exit', (code) => resolve(code)));
    // kill as soon as a checkpoint of a seeded level exists (the first levels finish in milliseconds)
    const deadline = Date.now() + 60_000;
    while (Date.now() < deadline) {
      if (existsSync(path) && levelOf(readSnapshotFile(path)) <= 1) break;
      await new Promise((r) => setTimeout(r, 20));
    }
    child.kill('SIGKILL');
    await exited;
    expect(out).not.toMatch(/done/); // it really was interrupted
    const snap = readSnapshotFile(path);
    expect(snap.kind).toBe('seeded');
    expect(levelOf(snap)).toBeLessThanOrEqual(1);

    const p = problem({ lattice: { preset: 'square' }, chips: n });
    const resumed = await stabilizeScaled(p, { resume: snap });
    const straight = await stabilizeScaled(p);
    const strip = (o: typeof resumed) => {
      const c = comparable(o);
      const { certificate, ...stats } = c.stats;
      return { ...c, stats, passed: certificate?.passed };
    };
    expect(strip(resumed)).toEqual(strip(straight));
    expect(resumed.stats.certificate?.passed).toBe(true);
  }, 180_000);

  it('refuses a checkpoint of another run and a damaged file with one-line errors', async () => {
    const p = problem({ lattice: { preset: 'square' }, chips: 5000 });
    let snap: Snapshot | null = null;
    await stabilizeScaled(p, { baseChips: 16, checkpoint: { everySeconds: 0, save: (s) => (snap ??= structuredClone(s)) } });
    const other = problem({ lattice: { preset: 'square' }, chips: 5001 });
    if (snap) {
      await expect(stabilizeScaled(other, { resume: snap })).rejects.toThrow(/different run/);
      const path = join(dir, 'ok.ckpt');
      writeSnapshotFile(path, snap);
      expect(readSnapshotFile(path).specKey).toBe((snap as Snapshot).specKey);
    }
    const bad = join(dir, 'bad.ckpt');
    writeFileSync(bad, 'not a checkpoint at all');
    expect(() => readSnapshotFile(bad)).toThrow(/not a Toppleworks checkpoint/);
  }, 60_000);
});

describe('progress and cancellation', () => {
  it('reports rising fractions ending at 1, with a time-left estimate', async () => {
    const seen: ScaleProgress[] = [];
    await stabilizeScaled(problem({ lattice: { preset: 'square' }, chips: 300_000 }), { onProgress: (pr) => seen.push(pr) });
    expect(seen.length).toBeGreaterThan(2);
    for (let i = 1; i < seen.length; i++) expect(seen[i]!.fraction).toBeGreaterThanOrEqual(seen[i - 1]!.fraction);
    expect(seen.at(-1)!.fraction).toBe(1);
    expect(seen.at(-1)!.secondsLeft).toBe(0);
    expect(seen.some((s) => typeof s.secondsLeft === 'number' && s.secondsLeft > 0)).toBe(true);
  }, 120_000);

  it('a resumed run goes on from the fraction its checkpoint had reached, and times what is left by its own pace', async () => {
    // checkpoints every quarter second, encoded as the farm and the command line do (the grid's arrays
    // live on and keep changing), each with the fraction reported last before it
    const p = problem({ lattice: { preset: 'square' }, chips: 4_000_000 });
    const saves: { bytes: Uint8Array; fraction: number }[] = [];
    let reported = 0;
    await stabilizeScaled(p, {
      threads: 1,
      onProgress: (pr) => (reported = pr.fraction),
      checkpoint: { everySeconds: 0.25, save: (s) => s.kind === 'seeded' && s.level === 0 && saves.push({ bytes: Buffer.concat(encodeSnapshot(s)), fraction: reported }) },
    });
    // the next to last checkpoint of the finest level (about 1.7 s long on this machine): well into it
    expect(saves.length).toBeGreaterThanOrEqual(3);
    const chosen = saves[saves.length - 2]!;
    const seen: ScaleProgress[] = [];
    await stabilizeScaled(p, { threads: 1, resume: decodeSnapshot(chosen.bytes), onProgress: (pr) => seen.push(pr) });
    // before the level's events were kept, the fraction fell back to the level's start
    expect(seen[0]!.fraction).toBeGreaterThanOrEqual(chosen.fraction);
    // what this process has done so far is all the time left is based on: nothing yet, no estimate
    expect(seen[0]!.secondsLeft).toBeNull();
    expect(seen.at(-1)!.fraction).toBe(1);
  }, 120_000);

  it('an abort stops the run promptly with the signal reason', async () => {
    const ac = new AbortController();
    let abortedAt = 0;
    setTimeout(() => ((abortedAt = performance.now()), ac.abort(new DOMException('stop', 'AbortError'))), 400);
    const p = problem({ lattice: { preset: 'square' }, chips: 4_000_000 });
    await expect(stabilizeScaled(p, { signal: ac.signal })).rejects.toThrow(/stop/);
    // the driver yields every 100 ms of relaxation; under a loaded machine allow a generous margin
    expect(performance.now() - abortedAt).toBeLessThan(2000);
  }, 60_000);
});
