/**
 * The line's closed-form path (renderer/src/engine/line-path.ts) against the plain tiled engine, bit for
 * bit: heights, odometer, toppled sites, crop and every statistic. Both must agree because the final
 * state and the odometer of a run are unique (abelian property; Björner, Lovász & Shor 1991; Dhar
 * 1990), whatever order the grains are added and toppled in.
 */
import { afterAll, describe, expect, it } from 'vitest';
import { ExplosionError, isEngineError, stabilize, takesLinePath, type Outcome, type StabilizeOptions } from '../../renderer/src/engine/index.js';
import { shutdownWorkers } from '../../renderer/src/engine/parallel.js';
import type { Problem, Uploads } from '../../renderer/src/engine/problem.js';
import { comparable, heightAt, odometerAt, problem } from './helpers.js';

afterAll(() => shutdownWorkers());

/** All but the timing and the certificate's method (the line path's says 'closed-form', asserted passed). */
function strip(o: Outcome) {
  const c = comparable(o);
  const { certificate, ...stats } = c.stats;
  return { ...c, stats, passed: certificate?.passed };
}

const line = { preset: 'line' } as const;

/** Runs both paths; both must end alike, or both refuse with the same error. Returns the line path's outcome. */
async function same(p: Problem, opts: StabilizeOptions = {}): Promise<Outcome | null> {
  expect(takesLinePath(p)).toBe(true);
  const run = (o: StabilizeOptions) =>
    stabilize(p, { threads: 1, ...opts, ...o }).then(
      (out) => ({ out, err: null }),
      (err: unknown) => ({ out: null, err }),
    );
  const [fast, plain] = [await run({}), await run({ scaled: false })];
  if (plain.err) {
    expect(isEngineError(plain.err, 'NotStabilizedError'), String(plain.err)).toBe(true);
    expect(fast.err).toMatchObject({ name: 'NotStabilizedError', message: (plain.err as Error).message });
    return null;
  }
  if (fast.err) throw fast.err;
  expect(fast.out!.stats.certificate).toMatchObject({ method: 'closed-form', passed: true, minimal: true });
  expect(plain.out!.stats.certificate?.method).toBe('legal');
  expect(strip(fast.out!)).toEqual(strip(plain.out!));
  return fast.out;
}

const spec = (chips: number, background: object, extra: { at: [number]; chips: number }[] = [], uploads?: Uploads) =>
  problem({ lattice: line, chips, background: background as never, sources: extra as never }, uploads);

describe('line path equals the plain engine bit for bit', () => {
  it('every grain count 0..160 at the origin, and some up to 2001, on background 0', async () => {
    for (let n = 0; n <= 160; n++) await same(spec(n, { kind: 'constant', height: 0 }));
    for (const n of [255, 256, 511, 999, 1000, 1001, 2000, 2001]) await same(spec(n, { kind: 'constant', height: 0 }));
  }, 300_000);

  it('several sources, merged sources, sources far apart and sources without grains', async () => {
    const cases: [number, { at: [number]; chips: number }[]][] = [
      [100, [{ at: [3], chips: 50 }]],
      [0, [{ at: [-40], chips: 77 }, { at: [40], chips: 78 }]],
      [31, [{ at: [5000], chips: 64 }, { at: [-9000], chips: 3 }]],
      [10, [{ at: [0], chips: 90 }, { at: [1], chips: 0 }, { at: [2], chips: 1 }]],
      [300, [{ at: [-7], chips: 300 }, { at: [7], chips: 299 }, { at: [150], chips: 120 }, { at: [-151], chips: 33 }]],
      [1, Array.from({ length: 64 }, (_, k) => ({ at: [3 * k - 90] as [number], chips: (k * 37) % 23 }))],
    ];
    for (const [n, extra] of cases) await same(spec(n, { kind: 'constant', height: 0 }, extra));
  }, 120_000);

  it('every background kind the line supports, with heights up to the maximal stable one', async () => {
    const backgrounds: object[] = [
      { kind: 'constant', height: 0 },
      { kind: 'checkerboard', a: 0, b: 1 },
      { kind: 'checkerboard', a: 1, b: 0 },
      { kind: 'motif', cells: [[1, 1, 0]] },
      { kind: 'motif', cells: [[0, 1, 1, 1, 1, 0, 1], [1, 1, 1, 1, 1, 1, 1]] },
      { kind: 'annuli', a: 0, b: 1 },
      { kind: 'annuli', a: 1, b: 0 },
      ...[1, 7, 99, 123456789].flatMap((seed) => [
        { kind: 'random', seed, weights: [1, 1] },
        { kind: 'random', seed, weights: [1, 4] },
        { kind: 'random', seed, weights: [9, 1] },
      ]),
    ];
    let compared = 0;
    for (const background of backgrounds)
      for (const [n, extra] of [
        [0, []],
        [1, []],
        [2, []],
        [57, []],
        [400, [{ at: [25], chips: 41 }]],
      ] as [number, { at: [number]; chips: number }[]][]) {
        if (await same(spec(n, background, extra))) compared++;
      }
    expect(compared).toBe(backgrounds.length * 5);
  }, 300_000);

  it('uploaded arrays, with heights of 2 and more (tall sites are a 1 and grains still to add)', async () => {
    const arrays: [number[], number, { at: [number]; chips: number }[]][] = [
      [[0, 1, 0, 1, 1, 0, 1], 20, []],
      [[5, 0, 0, 0, 3], 0, []],
      [[1, 1, 1, 2, 1, 1, 1, 1, 1], 0, []],
      [[0, 300, 0, 0, 0, 0, 400, 1, 1, 1, 0, 2], 17, [{ at: [2], chips: 5 }]],
      [Array.from({ length: 301 }, (_, k) => (k * 7919) % 5), 100, [{ at: [-200], chips: 60 }]],
      [Array.from({ length: 3000 }, (_, k) => (k % 97 === 0 ? 12 : k % 3 === 0 ? 0 : 1)), 3, []],
    ];
    for (const [values, n, extra] of arrays) {
      const data = Int32Array.from(values);
      await same(spec(n, { kind: 'array', sha256: 'b'.repeat(64), shape: [data.length] }, extra, { background: { shape: [data.length], data } }));
    }
  }, 240_000);

  it('a site budget refuses the same runs with the same error, and lets the same runs through', async () => {
    // one zero in 256 sites: 36 grains make a pile of about 9,200 sites, wider than the first box's
    // two inner tiles (4,096 sites each), so the box grows once; the budgets refuse the first box,
    // refuse the growth, or let it through
    const p = spec(36, { kind: 'motif', cells: [[0, ...Array(255).fill(1)]] });
    const ends: boolean[] = [];
    for (const tiles of [3, 5, 6, 8]) ends.push((await same(p, { maxSites: tiles * 4096 })) !== null);
    expect(ends.filter((e) => !e).length).toBeGreaterThan(0);
    expect(ends.filter((e) => e).length).toBeGreaterThan(0);
  }, 240_000);
});

describe('line runs the line path refuses up front, as before', () => {
  it('a background of ones everywhere with grains added, and recurring heights of 2 or more, are explosive', () => {
    // Fey, Levine & Peres, arXiv:0901.3805: the maximal stable configuration plus any grain never stabilizes
    for (const background of [
      { kind: 'constant', height: 1 },
      { kind: 'checkerboard', a: 1, b: 1 },
      { kind: 'motif', cells: [[1, 1]] },
      { kind: 'random', seed: 4, weights: [0, 1] },
      { kind: 'constant', height: 2 },
      { kind: 'random', seed: 4, weights: [5, 5, 1] },
      { kind: 'annuli', a: 0, b: 3 },
    ])
      expect(() => spec(1, background)).toThrow(ExplosionError);
  });

  it('the same all-ones background with no grains stays as it is', async () => {
    const o = (await same(spec(0, { kind: 'constant', height: 1 })))!;
    expect(o.stats.toppledSites).toBe(0);
  });
});

describe('n grains at the origin of Z on background 0', () => {
  it('n odd: a 1 on every site of [−(n−1)/2, (n−1)/2]; n even: the same on n + 1 sites but a 0 at the origin', async () => {
    // odd n: Anderson, Lovász, Shor, Spencer, Tardos & Winograd, "Disks, balls, and walls: analysis of a
    // combinatorial game", Amer. Math. Monthly 96(6) (1989) 481–493; even n: common practice (checked
    // against the plain engine above for every n up to 160 and at 1000, 2000)
    for (let n = 0; n <= 2001; n++) {
      const o = await stabilize(spec(n, { kind: 'constant', height: 0 }), { threads: 1 });
      const m = Math.floor(n / 2);
      expect(o.shape[0]).toBe(2 * m + 1);
      for (let x = -m - 2; x <= m + 2; x++) expect(heightAt(o, x) ?? 0).toBe(Math.abs(x) <= m && !(n % 2 === 0 && x === 0) ? 1 : 0);
    }
  }, 120_000);

  it('the odometer is T(m − |x|) with m = ⌊n/2⌋, the total is the square pyramidal number of m', async () => {
    // T(k) = k(k+1)/2 is OEIS A000217, Σ_{k≤m} k² = m(m+1)(2m+1)/6 is OEIS A000330 (their sum over
    // x ∈ [−m, m] of T(m − |x|) is A000330(m)); that the line's odometer takes these values was checked
    // here against the plain engine for every n up to 160 and at 1000, 2000 (our computation, not published)
    const T = (k: number) => (k * (k + 1)) / 2;
    for (const n of [...Array.from({ length: 400 }, (_, k) => k), 10_000, 10_001, 123_457]) {
      const o = await stabilize(spec(n, { kind: 'constant', height: 0 }), { threads: 1 });
      const m = BigInt(Math.floor(n / 2));
      expect(o.stats.totalTopplings).toBe((m * (m + 1n) * (2n * m + 1n)) / 6n);
      expect(o.stats.originOdometer).toBe(BigInt(T(Number(m))));
      expect(o.stats.toppledSites).toBe(n < 2 ? 0 : 2 * Number(m) - 1);
      for (const x of [-Number(m) - 1, -Number(m), -3, 0, 1, 2, Number(m) - 1, Number(m)]) expect(odometerAt(o, x)).toBe(T(Math.max(0, Number(m) - Math.abs(x))));
    }
  }, 120_000);
});

describe('line path: progress, cancellation, checkpoints', () => {
  it('reports progress up to 1 and the toppled sites of the pile', async () => {
    const seen: { stage: string; fraction: number; toppledSites: number }[] = [];
    const o = await stabilize(spec(300_000, { kind: 'constant', height: 0 }), { onProgress: (p) => seen.push(p) });
    expect(seen.at(-1)).toEqual({ stage: 'done', fraction: 1, toppledSites: o.stats.toppledSites });
    expect(seen.map((s) => s.fraction)).toEqual([...seen.map((s) => s.fraction)].sort((a, b) => a - b));
  });

  it('stops at the next pause once the signal fires, with the signal\'s reason', async () => {
    const ac = new AbortController();
    const reason = new DOMException('stopped by the test', 'AbortError');
    const run = stabilize(spec(2_000_000, { kind: 'constant', height: 0 }), {
      maxSites: 2 ** 23,
      // the first pause comes after 0.1 s of work; the abort is seen at the one after it
      checkpoint: { everySeconds: 0, save: () => ac.abort(reason) },
      signal: ac.signal,
    });
    await expect(run).rejects.toBe(reason);
    const aborted = AbortSignal.abort(reason);
    await expect(stabilize(spec(10, { kind: 'constant', height: 0 }), { signal: aborted })).rejects.toBe(reason);
  });
});
