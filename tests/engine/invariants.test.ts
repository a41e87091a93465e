/** Invariants every run must satisfy (common practice): mass, stability, coverage, exact counts. */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { runStatsSchema } from '../../shared/run-stats.js';
import { latticePreset, runStatsFromJSON, runStatsToJSON, stabilize, NotStabilizedError } from '../../renderer/src/engine/index.js';
import { comparable, forEachSite, odometerAt, problem } from './helpers.js';

const LATTICES = ['line', 'square', 'cubic', 'triangular', 'honeycomb', 'f-lattice', 'manhattan'];

describe('every output', () => {
  it('conserves mass, is stable, satisfies the toppling identity and covers every changed site', async () => {
    await fc.assert(
      fc.asyncProperty(fc.constantFrom(...LATTICES), fc.integer({ min: 0, max: 3000 }), fc.integer({ min: 0, max: 2 ** 32 - 1 }), async (name, n0, seed) => {
        // the line's odometer grows like n^3: keep its runs small
        const n = name === 'line' ? n0 % 150 : n0;
        const g = latticePreset(name);
        const deg = g.classes[0]!.length;
        const weights = Array.from({ length: deg - 1 }, (_, i) => (i < Math.max(1, deg / 2) ? 1 : 0));
        const p = problem({ lattice: { preset: name }, chips: n, background: { kind: 'random', seed, weights } });
        const o = await stabilize(p, { threads: 1 });
        // mass: the infinite lattice loses nothing
        expect(o.stats.grainsOut).toBe(BigInt(n));
        expect(o.stats.grainsIn).toBe(BigInt(n));
        let sum = 0n;
        forEachSite(o, (x, y, z, i) => {
          const d = g.classes[((((z % g.period[2]) + g.period[2]) % g.period[2]) * g.period[1] + (((y % g.period[1]) + g.period[1]) % g.period[1])) * g.period[0] + (((x % g.period[0]) + g.period[0]) % g.period[0])]!;
          expect(o.heights[i]).toBeLessThan(d.length); // stable
          expect(o.toppled[i]).toBe(o.odometer[i]! > 0 ? 1 : 0);
          // final = initial + grains received - deg * own topplings
          let received = 0;
          // in-neighbours: sites w with w + offset = (x, y, z)
          for (let c = 0; c < g.classes.length; c++)
            for (const [dx, dy, dz] of g.classes[c]!) {
              const wx = x - dx, wy = y - dy, wz = z - dz;
              const cw = ((((wz % g.period[2]) + g.period[2]) % g.period[2]) * g.period[1] + (((wy % g.period[1]) + g.period[1]) % g.period[1])) * g.period[0] + (((wx % g.period[0]) + g.period[0]) % g.period[0]);
              if (cw === c) received += odometerAt(o, wx, wy, wz);
            }
          const initial = p.background.heightAt(x, y, z) + (x === 0 && y === 0 && z === 0 ? n : 0);
          expect(o.heights[i]).toBe(initial + received - d.length * o.odometer[i]!);
          sum += BigInt(o.heights[i]! - p.background.heightAt(x, y, z));
        });
        expect(sum).toBe(BigInt(n)); // every changed site is inside the arrays
        expect(o.stats.totalTopplings).toBe(BigInt(Array.from(o.odometer).reduce((a, v) => a + v, 0)));
        expect(o.stats.toppledSites).toBe(o.toppled.reduce((a, v) => a + v, 0));
        expect(o.stats.heightCounts.reduce((a, v) => a + v, 0)).toBe(o.stats.toppledSites);
      }),
      { numRuns: 60, seed: 424242 },
    );
  });

  it('statistics round-trip through the shared JSON schema with exact decimal strings', async () => {
    const o = await stabilize(problem({ lattice: { preset: 'square' }, chips: 4000, sources: [{ at: [30, -7], chips: 123 }] }), { threads: 1 });
    const json = runStatsToJSON(o.stats);
    expect(runStatsSchema.parse(JSON.parse(JSON.stringify(json)))).toEqual(json);
    expect(json.totalTopplings).toBe(o.stats.totalTopplings.toString());
    expect(runStatsFromJSON(json)).toEqual(o.stats);
    expect(o.stats.grainsIn).toBe(4123n);
  });
});

describe('counts beyond 2^53', () => {
  it('several sources of up to 2^53 - 1 grains are accepted and add up exactly as bigint', () => {
    const max = Number.MAX_SAFE_INTEGER;
    const p = problem({ lattice: { preset: 'square' }, chips: max, sources: [{ at: [5, 5], chips: max }] });
    expect(p.grainsIn).toBe(2n * BigInt(max));
  });

  it('n = 2^53 - 1 runs in batches and stops cleanly at the site budget instead of exhausting memory', async () => {
    const p = problem({ lattice: { preset: 'square' }, chips: Number.MAX_SAFE_INTEGER });
    await expect(stabilize(p, { threads: 1, maxSites: 200_000 })).rejects.toThrow(NotStabilizedError);
    await expect(stabilize(p, { threads: 1, maxSites: 200_000 })).rejects.toThrow('did not stabilize within the bound of 200000 sites');
  });

  it('feeding sources in batches gives the same result as all at once (abelian property)', async () => {
    const p = problem({
      lattice: { preset: 'square' },
      chips: 5000,
      sources: [{ at: [40, 3], chips: 3000 }],
      background: { kind: 'array', sha256: '0'.repeat(64), shape: [3, 3] },
    }, { background: { shape: [3, 3], data: Int32Array.from([0, 1, 2, 3, 900, 3, 2, 1, 0]) } });
    const whole = await stabilize(p, { threads: 1 });
    const batched = await stabilize(p, { threads: 1, reserveBatch: 37 });
    expect(comparable(batched)).toEqual(comparable(whole));
  });
});

describe('abort and progress', () => {
  it('an abort signal stops a long run with AbortError', async () => {
    const ac = new AbortController();
    setTimeout(() => ac.abort(), 150);
    const run = stabilize(problem({ lattice: { preset: 'square' }, chips: 2_000_000 }), { threads: 1, signal: ac.signal });
    await expect(run).rejects.toMatchObject({ name: 'AbortError' });
  });

  it('progress reports are monotone and end at fraction 1', async () => {
    const seen: number[] = [];
    await stabilize(problem({ lattice: { preset: 'square' }, chips: 20_000 }), { threads: 1, onProgress: (p) => seen.push(p.fraction) });
    expect(seen.at(-1)).toBe(1);
    for (let k = 1; k < seen.length; k++) expect(seen[k]!).toBeGreaterThanOrEqual(seen[k - 1]!);
  });
});
