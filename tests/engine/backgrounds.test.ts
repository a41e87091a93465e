/** Background rules (documented in renderer/src/engine/background.ts). */
import { describe, expect, it } from 'vitest';
import { siteHash, stabilize, stabilizeReference } from '../../renderer/src/engine/index.js';
import { comparable, heightAt, problem } from './helpers.js';

describe('random backgrounds', () => {
  it('depend only on the seed and the coordinates (counter-based), not on the order of evaluation', () => {
    const p = problem({ lattice: { preset: 'square' }, chips: 0, background: { kind: 'random', seed: 12345, weights: [1, 2, 3] } });
    const forward: number[] = [], backward: number[] = [];
    for (let k = 0; k < 2000; k++) forward.push(p.background.heightAt(k % 50 - 25, Math.floor(k / 50) - 20, 0));
    for (let k = 1999; k >= 0; k--) backward.unshift(p.background.heightAt(k % 50 - 25, Math.floor(k / 50) - 20, 0));
    expect(forward).toEqual(backward);
    const q = problem({ lattice: { preset: 'square' }, chips: 0, background: { kind: 'random', seed: 12346, weights: [1, 2, 3] } });
    expect(forward.filter((v, k) => v !== q.background.heightAt(k % 50 - 25, Math.floor(k / 50) - 20, 0)).length).toBeGreaterThan(500);
  });

  it('follow the weights (chi-square test at the 0.1% level; common practice)', () => {
    const p = problem({ lattice: { preset: 'square' }, chips: 0, background: { kind: 'random', seed: 7, weights: [1, 2, 3] } });
    const counts = [0, 0, 0];
    const N = 60_000;
    for (let k = 0; k < N; k++) counts[p.background.heightAt(k % 300, Math.floor(k / 300), 0)]!++;
    const expected = [N / 6, N / 3, N / 2];
    const chi2 = counts.reduce((a, c, i) => a + (c - expected[i]!) ** 2 / expected[i]!, 0);
    expect(chi2).toBeLessThan(13.82); // chi-square quantile, 2 degrees of freedom, p = 0.001 (statistical tables)
  });

  it('the 32-bit hash is a pure integer function (same bits in every JavaScript engine)', () => {
    const h = siteHash(1, 2, 3, 4);
    expect(Number.isInteger(h) && h >= 0 && h < 2 ** 32).toBe(true);
    expect(siteHash(1, 2, 3, 4)).toBe(h);
    expect(siteHash(1, -2, 3, 4)).not.toBe(h);
  });
});

describe('periodic and non-periodic rules', () => {
  it('checkerboard puts a where x+y is even', () => {
    const p = problem({ lattice: { preset: 'square' }, chips: 0, background: { kind: 'checkerboard', a: 2, b: 1 } });
    expect([p.background.heightAt(0, 0, 0), p.background.heightAt(1, 0, 0), p.background.heightAt(-1, -1, 0), p.background.heightAt(-3, 0, 0)]).toEqual([2, 1, 2, 1]);
  });
  it('motif repeats cells[y mod rows][x mod cols]', () => {
    const p = problem({ lattice: { preset: 'square' }, chips: 0, background: { kind: 'motif', cells: [[0, 1, 2], [2, 1, 0]] } });
    expect([p.background.heightAt(0, 0, 0), p.background.heightAt(4, 0, 0), p.background.heightAt(-1, 1, 0), p.background.heightAt(2, -1, 0)]).toEqual([0, 1, 0, 0]);
  });
  it('annuli: ring k covers k(k+1)/2 <= floor(|x|) < (k+1)(k+2)/2, alternating a, b', () => {
    const p = problem({ lattice: { preset: 'square' }, chips: 0, background: { kind: 'annuli', a: 2, b: 0 } });
    // rho = 0 -> ring 0 (a); 1, 2 -> ring 1 (b); 3..5 -> ring 2 (a); 6..9 -> ring 3 (b)
    expect([0, 1, 2, 3, 5, 6, 9, 10].map((x) => p.background.heightAt(x, 0, 0))).toEqual([2, 0, 0, 2, 2, 0, 0, 2]);
    expect(p.background.heightAt(3, 4, 0)).toBe(2); // |(3,4)| = 5
  });
});

describe('uploaded arrays', () => {
  it('sit with element floor(size/2) on the origin and 0 outside', async () => {
    // a 3 x 4 upload: its element [1][2] is the origin
    const data = Int32Array.from([0, 0, 0, 0, 0, 0, 9, 0, 0, 0, 0, 1]);
    const p = problem({ lattice: { preset: 'square' }, chips: 0, background: { kind: 'array', sha256: 'b'.repeat(64), shape: [3, 4] } }, { background: { shape: [3, 4], data } });
    expect(p.background.heightAt(0, 0, 0)).toBe(9);
    expect(p.background.heightAt(1, 1, 0)).toBe(1);
    expect(p.background.heightAt(5, 5, 0)).toBe(0);
    // the 9 grains there topple like 9 grains added at the origin of an empty lattice (plus the 1)
    const o = await stabilize(p, { threads: 1 });
    const q = problem({ lattice: { preset: 'square' }, chips: 9, sources: [{ at: [1, 1], chips: 1 }] });
    const r = await stabilize(q, { threads: 1 });
    for (let y = -3; y <= 3; y++) for (let x = -3; x <= 3; x++) expect(heightAt(o, x, y) ?? 0).toBe(heightAt(r, x, y) ?? 0);
    expect(o.stats.totalTopplings).toBe(r.stats.totalTopplings);
    expect(comparable(o)).toEqual(comparable(stabilizeReference(p)));
  });

  it('apply to the line and the cubic lattice with their own dimension', async () => {
    const line = problem({ lattice: { preset: 'line' }, chips: 0, background: { kind: 'array', sha256: 'c'.repeat(64), shape: [5] } }, { background: { shape: [5], data: Int32Array.from([0, 0, 7, 0, 0]) } });
    const o = await stabilize(line, { threads: 1 });
    // 7 = 2*3+1 grains at the origin of Z^1 end as one grain on each of -3..3 (Amer. Math. Monthly 1989)
    expect([-4, -3, -2, -1, 0, 1, 2, 3, 4].map((x) => heightAt(o, x) ?? 0)).toEqual([0, 1, 1, 1, 1, 1, 1, 1, 0]);
    const cube = problem({ lattice: { preset: 'cubic' }, chips: 0, background: { kind: 'array', sha256: 'c'.repeat(64), shape: [1, 1, 1] } }, { background: { shape: [1, 1, 1], data: Int32Array.from([6]) } });
    const c = await stabilize(cube, { threads: 1 });
    expect(c.stats.toppledSites).toBe(1);
    expect(c.shape).toEqual([3, 3, 3]);
  });
});
