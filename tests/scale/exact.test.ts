/**
 * The fast path (coarse-to-fine seeding, repairs by peeling) against the plain engine, bit for bit:
 * heights, odometer, crop and every statistic. Both must agree because the least action principle
 * (Fey, Levine & Peres, arXiv:0901.3805) makes the odometer unique, whatever the seed. Small runs
 * with a tiny base level so that three or more levels are seeded in each case.
 */
import { afterAll, describe, expect, it } from 'vitest';
import { isEngineError, latticePreset, stabilize, type Outcome } from '../../renderer/src/engine/index.js';
import { shutdownWorkers } from '../../renderer/src/engine/parallel.js';
import { stabilizeScaled, wideOdometer } from '../../renderer/src/scale/scaled.js';
import { comparable, problem } from '../engine/helpers.js';

afterAll(() => shutdownWorkers());

const planar = ['square', 'triangular', 'honeycomb', 'f-lattice', 'manhattan'];
/** an uploaded periodic graph: Z^2 with the diagonal (1,1)/(-1,-1) only on even columns, in- = out-degree */
const custom = { period: [2, 1], neighbours: [[[[1, 0], [-1, 0], [0, 1], [0, -1], [1, 1], [-1, -1]], [[1, 0], [-1, 0], [0, 1], [0, -1], [1, 1], [-1, -1]]]] };

const strip = (o: Outcome) => {
  const c = comparable(o);
  const { certificate: _c, ...stats } = c.stats as typeof c.stats & { certificate?: unknown };
  return { ...c, stats };
};

/** Backgrounds kept low so runs stay compact (below the degree minus one; common practice). */
function backgrounds(minDeg: number) {
  const lo = Math.max(0, minDeg - 3), top = minDeg - 1;
  const w = Array.from({ length: minDeg }, (_, i) => (i === top ? 1 : 3));
  return [
    { kind: 'constant', height: 0 },
    { kind: 'constant', height: Math.max(0, minDeg - 2) },
    { kind: 'checkerboard', a: lo, b: top },
    { kind: 'motif', cells: [[0, top, lo], [lo, 0, 0]] },
    { kind: 'random', seed: 7, weights: w },
    { kind: 'random', seed: 123456789, weights: [2, ...Array(top).fill(1)] },
    { kind: 'annuli', a: 0, b: top },
  ] as const;
}

const chipsList = [1, 37, 300, 1200, 4000, 9001];

describe('fast path equals the plain engine bit for bit', () => {
  const lattices: [string, object][] = [...planar.map((n) => [n, { preset: n }] as [string, object]), ['custom', { periodic: custom }]];
  for (const [name, lattice] of lattices) {
    it(`${name}: ${chipsList.length} grain counts × 7 backgrounds`, async () => {
      const g = name === 'custom' ? null : latticePreset(name);
      const minDeg = g ? Math.min(...g.classes.map((c) => c.length)) : 6;
      let compared = 0;
      for (const background of backgrounds(minDeg)) {
        for (const chips of chipsList) {
          let p;
          try {
            p = problem({ lattice: lattice as never, chips, background: background as never });
          } catch (e) {
            if (isEngineError(e, 'ExplosionError')) continue; // refused up front by a theorem: nothing to compare
            throw e;
          }
          let plain: Outcome | null = null;
          try {
            plain = await stabilize(p, { threads: 1, maxSites: 2 ** 20, scaled: false });
          } catch (e) {
            if (!isEngineError(e, 'NotStabilizedError')) throw e;
          }
          if (!plain) {
            // no room for the pile within 2^20 sites: the fast path must refuse it too. Both are asked
            // under a 2^16-site bound, which the plain engine must refuse as well (a smaller box); the
            // fast path takes about 50 times longer to fill 2^20 sites than 2^16 (measured, ~25 s vs 0.5 s).
            await expect(stabilize(p, { threads: 1, maxSites: 2 ** 16, scaled: false })).rejects.toThrow(/did not stabilize/);
            await expect(stabilizeScaled(p, { baseChips: 16, maxSites: 2 ** 16 })).rejects.toThrow(/did not stabilize/);
            continue;
          }
          // one thread (a stack over the whole grid) and two (tiles over worker threads, forced on these small grids)
          for (const threads of [1, 2]) {
            const fast = await stabilizeScaled(p, { baseChips: 16, maxSites: 2 ** 20, threads, strips: threads > 1 });
            expect(strip(fast), `${name} n=${chips} ${JSON.stringify(background)} threads=${threads}`).toEqual(strip(plain));
            expect(fast.stats.certificate?.passed).toBe(true);
            expect(fast.stats.certificate?.minimal).toBe(true);
          }
          compared++;
        }
      }
      expect(compared).toBeGreaterThanOrEqual(30);
    }, 240_000);
  }
});

describe('seeding options never change the result', () => {
  it('square n = 20000: offsets, error weights and base levels all give the same outcome', async () => {
    const p = problem({ lattice: { preset: 'square' }, chips: 20000 });
    const plain = strip(await stabilize(p, { threads: 1, scaled: false }));
    for (const opts of [{ offset: 0, alpha: 1.5 }, { offset: 0, alpha: 0, bulkGain: 0 }, { offset: 500 }, { baseChips: 4 }, { baseChips: 30000 }, { odometer: 'float64' as const }, { odometer: 'float64' as const, threads: 2, strips: true }]) {
      const fast = await stabilizeScaled(p, opts);
      expect(strip(fast), JSON.stringify(opts)).toEqual(plain);
      expect(fast.stats.certificate?.passed).toBe(true);
    }
  }, 120_000);

  it('counts topplings in uint32 unless the bound on the next level says float64', () => {
    // u(0) is 1,121,523 at n = 10^6 (see below): 4·10^6 grains seeded from it stay far below 2^32
    const at = (u0: number) => Uint32Array.of(0, u0, 7);
    expect(wideOdometer(4_000_000, { chips: 1_000_000, u: at(1_121_523) })).toBe(false);
    expect(wideOdometer(2 ** 30 - 1, { chips: 2 ** 28, u: at(700_000_000) })).toBe(true);
    expect(wideOdometer(4096, null)).toBe(false);
    expect(wideOdometer(2 ** 24, null)).toBe(true);
  });

  it('square n = 10^5 equals the plain tiled engine on two threads', async () => {
    const p = problem({ lattice: { preset: 'square' }, chips: 100000 });
    const fast = await stabilizeScaled(p);
    const plain = await stabilize(p, { threads: 2, scaled: false });
    expect(plain.stats.certificate?.method).toBe('legal');
    expect(strip(fast)).toEqual(strip(plain));
  }, 120_000);

  it('one and two threads agree bit for bit on larger runs of every planar preset', async () => {
    // the result is unique (abelian property), whatever the order of topplings across threads
    for (const preset of planar) {
      const background = preset === 'square' ? { kind: 'random', seed: 99, weights: [1, 1, 1, 1] } : { kind: 'constant', height: 0 };
      const p = problem({ lattice: { preset }, chips: 60_000, background: background as never });
      const one = await stabilizeScaled(p, { threads: 1 });
      const two = await stabilizeScaled(p, { threads: 2, strips: true });
      const tilesOnOne = await stabilizeScaled(p, { threads: 1, strips: true });
      expect(strip(two), preset).toEqual(strip(one));
      expect(strip(tilesOnOne), preset).toEqual(strip(one));
      expect(two.stats.certificate?.passed).toBe(true);
    }
  }, 240_000);

  it('square n = 10^6 gives the independently computed totals', async () => {
    // regression values from an independent computation (../shared/scale-notes.md, "Exact values to
    // check against"): 17,448,261,875 topplings, 431,009 toppled sites, 1,121,523 at the origin
    const fast = await stabilize(problem({ lattice: { preset: 'square' }, chips: 1_000_000 }));
    expect(fast.stats.certificate).toMatchObject({ method: 'seeded', passed: true, minimal: true });
    expect(fast.stats.totalTopplings).toBe(17_448_261_875n);
    expect(fast.stats.toppledSites).toBe(431_009);
    expect(fast.stats.originOdometer).toBe(1_121_523n);
  }, 180_000);
});
