/**
 * Checkpoints of `stabilize()` on the plain tiled engine (and through the same entry point on the fast
 * path): a run resumed from a snapshot taken midway ends bit for bit where an uninterrupted run ends.
 * Source: the abelian property of chip-firing (Björner, Lovász & Shor 1991; Dhar 1990): from any
 * legal intermediate state, every legal continuation ends in the same stable configuration with the
 * same odometer. Snapshots another engine version, another specification or damaged bytes would
 * resume are refused with a SnapshotError.
 */
import { afterAll, describe, expect, it } from 'vitest';
import { decodeSnapshot, encodeSnapshot, isSnapshotError, stabilize, type Outcome, type Snapshot, type StabilizeOptions } from '../../renderer/src/engine/index.js';
import { shutdownWorkers } from '../../renderer/src/engine/parallel.js';
import type { Problem } from '../../renderer/src/engine/problem.js';
import { comparable, problem } from './helpers.js';

afterAll(() => shutdownWorkers());

/** Everything two outcomes share bit for bit, the certificate's own field aside (asserted passed). */
function strip(o: Outcome) {
  const c = comparable(o);
  const { certificate, ...stats } = c.stats;
  return { ...c, stats, passed: certificate?.passed };
}

/**
 * Runs with a checkpoint at every pause (0.1 s apart) and keeps the bytes, as the farm would store
 * them, of snapshots number 1, 2, 4, 8, …: encoding costs about as much as a pause's work on a big
 * box, and the last one kept was taken after at least half of all the pauses.
 */
async function runWithSnapshots(p: Problem, opts: StabilizeOptions = {}) {
  const saved: Buffer[] = [];
  let k = 0;
  const save = (s: Snapshot) => {
    if (((k + 1) & k) === 0) saved.push(Buffer.concat(encodeSnapshot(s)));
    k++;
  };
  const outcome = await stabilize(p, { ...opts, checkpoint: { everySeconds: 0, save } });
  return { outcome, saved };
}

const odometerSum = (s: Snapshot) => Array.from(s.kind === 'tiled' ? s.od : s.grid.od).reduce((a, b) => a + b, 0);

/** An uploaded array background: a 41 × 41 pattern of heights 0..3 (invented test data) and a tower of 20,000 grains. */
function uploaded() {
  const shape = [41, 41];
  const data = new Int32Array(41 * 41);
  for (let i = 0; i < data.length; i++) data[i] = (i * 7 + (i >> 3)) % 4;
  data[10 * 41 + 30] = 20_000;
  return problem({ lattice: { preset: 'square' }, chips: 8000, background: { kind: 'array', sha256: 'a'.repeat(64), shape } }, { background: { shape, data } });
}

const cases: { name: string; p: () => Problem; first?: StabilizeOptions; second?: StabilizeOptions; kind: Snapshot['kind'] }[] = [
  { name: 'square, two sources (two threads, then one)', p: () => problem({ lattice: { preset: 'square' }, chips: 20_000, sources: [{ at: [40, 0], chips: 10_000 }] }), first: { threads: 2 }, second: { threads: 1 }, kind: 'tiled' },
  { name: 'square, uploaded array background with a tall tower (reserves of the upload)', p: uploaded, first: { threads: 1, reserveBatch: 2000 }, second: { threads: 1, reserveBatch: 2000 }, kind: 'tiled' },
  { name: 'triangular', p: () => problem({ lattice: { preset: 'triangular' }, chips: 30_000 }), kind: 'tiled' },
  { name: 'honeycomb (several classes)', p: () => problem({ lattice: { preset: 'honeycomb' }, chips: 10_000 }), kind: 'tiled' },
  { name: 'line, plain engine both times', p: () => problem({ lattice: { preset: 'line' }, chips: 800 }), first: { threads: 1, scaled: false }, second: { threads: 1, scaled: false }, kind: 'tiled' },
  // a plain-engine snapshot of a line run (written before the line path existed, or by its fallback) resumes on the line path
  { name: 'line, plain engine then the line path', p: () => problem({ lattice: { preset: 'line' }, chips: 800, sources: [{ at: [30], chips: 99 }] }), first: { threads: 1, scaled: false }, second: { threads: 1 }, kind: 'tiled' },
  { name: 'line path both times (its own snapshots)', p: () => problem({ lattice: { preset: 'line' }, chips: 1_000_000, background: { kind: 'checkerboard', a: 0, b: 1 } }), kind: 'tiled' },
  { name: 'cubic, 3-D', p: () => problem({ lattice: { preset: 'cubic' }, chips: 100_000, background: { kind: 'checkerboard', a: 0, b: 1 } }), kind: 'tiled' },
  { name: 'honeycomb on the seeded fast path (through stabilize)', p: () => problem({ lattice: { preset: 'honeycomb' }, chips: 2 ** 16 }), first: { threads: 1 }, second: { threads: 2 }, kind: 'seeded' },
];

describe('resuming from a snapshot taken midway', () => {
  for (const c of cases)
    it(`ends bit for bit on the uninterrupted result: ${c.name}`, async () => {
      const p = c.p();
      const { outcome: straight, saved } = await runWithSnapshots(p, { threads: 1, ...c.first });
      expect(saved.length, 'no snapshot was taken: the run is too short').toBeGreaterThan(0);
      const snap = decodeSnapshot(saved.at(-1)!);
      expect(snap.kind).toBe(c.kind);
      // the kind is readable in the file itself, right after the magic and the header length
      expect(saved[0]!.subarray(12, 40).toString()).toContain(`{"kind":"${c.kind}"`);
      // really midway: some topplings done, not all (a seeded grid holds a seed, which may overshoot
      // the final odometer until repaired, so there only the level says how far it got)
      expect(odometerSum(snap)).toBeGreaterThan(0);
      if (snap.kind === 'tiled') expect(odometerSum(snap)).toBeLessThan(Number(straight.stats.totalTopplings));
      const resumed = await stabilize(p, { threads: 1, ...c.second, resume: snap });
      expect(strip(resumed)).toEqual(strip(straight));
      expect(resumed.stats.certificate?.passed).toBe(true);
    }, 60_000);
});

describe('snapshots that must not be resumed', () => {
  const p = problem({ lattice: { preset: 'square' }, chips: 30_000, sources: [{ at: [40, 0], chips: 15_000 }] });
  let bytes: Buffer;
  const fresh = () => decodeSnapshot(bytes);
  const refused = async (q: Problem, s: Snapshot, message: RegExp) => {
    const err = await stabilize(q, { threads: 1, resume: s }).then(() => null, (e: unknown) => e);
    expect(isSnapshotError(err), String(err)).toBe(true);
    expect((err as Error).message).toMatch(message);
  };

  it('takes one to test with', async () => {
    const { saved } = await runWithSnapshots(p);
    expect(saved.length).toBeGreaterThan(0);
    bytes = saved.at(-1)!;
  }, 60_000);

  it('refuses damaged bytes: a flipped bit, a cut file, trailing bytes, a foreign file, an older format', () => {
    const flipped = Buffer.from(bytes);
    flipped[flipped.length - 100]! ^= 1;
    expect(() => decodeSnapshot(flipped)).toThrow(/damaged \(checksum of array \w+ does not match\)/);
    expect(() => decodeSnapshot(bytes.subarray(0, bytes.length - 8))).toThrow(/truncated/);
    expect(() => decodeSnapshot(Buffer.concat([bytes, Buffer.from([0])]))).toThrow(/trailing bytes/);
    expect(() => decodeSnapshot(Buffer.from('not a checkpoint at all'))).toThrow(/not a Toppleworks checkpoint/);
    const old = Buffer.from(bytes);
    old.write('TWCKPT01', 0, 'latin1');
    expect(() => decodeSnapshot(old)).toThrow(/format 01/);
    const badHeader = Buffer.from(bytes);
    badHeader[14] = '#'.charCodeAt(0);
    expect(() => decodeSnapshot(badHeader)).toThrow(/header is damaged/);
  });

  it('refuses a snapshot of another specification, another engine version, or of the other path', async () => {
    await refused(problem({ lattice: { preset: 'square' }, chips: 30_001, sources: [{ at: [40, 0], chips: 15_000 }] }), fresh(), /different run specification/);
    await refused(problem({ lattice: { preset: 'square' }, chips: 30_000, sources: [{ at: [40, 0], chips: 15_000 }], background: { kind: 'constant', height: 1 } }), fresh(), /different run specification/);
    await refused(p, { ...fresh(), engineVersion: '0.9.0' }, /written by engine 0\.9\.0/);
    // a tiled snapshot cannot resume the fast path directly, nor a seeded one the plain engine
    const seeded = decodeSnapshot((await runWithSnapshots(problem({ lattice: { preset: 'honeycomb' }, chips: 2 ** 16 }))).saved[0]!);
    await refused(p, { ...seeded, specKey: fresh().specKey }, /seeded fast path, which this run does not take/);
  }, 60_000);

  it('refuses a state whose heights and odometer disagree, even with good checksums', async () => {
    const s = fresh();
    if (s.kind !== 'tiled') throw new Error('expected a tiled snapshot');
    // one grain moved between two sites: the total is right, the balance of those sites is not
    const i = s.h.findIndex((v) => v > 0);
    s.h[i]! -= 1;
    s.h[i + 1]! += 1;
    const re = decodeSnapshot(Buffer.concat(encodeSnapshot(s)));
    await refused(p, re, /heights and odometer disagree/);
    const t = fresh();
    if (t.kind !== 'tiled') throw new Error('expected a tiled snapshot');
    t.od[t.od.findIndex((v) => v > 0)] = 0.5;
    await refused(p, t, /damaged/);
    const u = fresh();
    if (u.kind !== 'tiled') throw new Error('expected a tiled snapshot');
    await refused(p, { ...u, reserves: Float64Array.from([1e9, 0, 0, 5]) }, /reserve 0 is malformed/);
  });
});

describe('with checkpoints on the plain engine', () => {
  it('cancellation still stops the run within a second, and progress still rises to 1', async () => {
    const p = problem({ lattice: { preset: 'square' }, chips: 200_000, sources: [{ at: [50, 0], chips: 100_000 }] });
    const ac = new AbortController();
    let abortedAt = 0;
    setTimeout(() => ((abortedAt = performance.now()), ac.abort(new DOMException('stop', 'AbortError'))), 400);
    let saves = 0;
    await expect(stabilize(p, { threads: 2, signal: ac.signal, checkpoint: { everySeconds: 0, save: () => saves++ } })).rejects.toThrow(/stop/);
    // the engine pauses every 0.1 s; allow a loaded machine a generous margin under the one second promised
    expect(performance.now() - abortedAt).toBeLessThan(1000);
    expect(saves).toBeGreaterThan(0);

    const q = problem({ lattice: { preset: 'square' }, chips: 30_000, sources: [{ at: [40, 0], chips: 15_000 }] });
    const { saved } = await runWithSnapshots(q);
    const fractions: number[] = [];
    await stabilize(q, { threads: 1, resume: decodeSnapshot(saved[0]!), onProgress: (pr) => fractions.push(pr.fraction) });
    // it starts from how far the snapshot had got (the first one: early in the run), not from the grains fed
    expect(fractions[0]).toBeLessThan(0.99);
    for (let k = 1; k < fractions.length; k++) expect(fractions[k]).toBeGreaterThanOrEqual(fractions[k - 1]!);
    expect(fractions.at(-1)).toBe(1);
  }, 60_000);
});
