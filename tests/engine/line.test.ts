/** The line Z^1 (threshold 2): exact final configurations. */
import { describe, expect, it } from 'vitest';
import { stabilize } from '../../renderer/src/engine/index.js';
import { heightAt, odometerAt, problem } from './helpers.js';

describe('Z^1, N grains at the origin', () => {
  it('2n+1 grains end as one grain on each of -n..n', async () => {
    // Anderson, Lovasz, Shor, Spencer, Tardos, Winograd, "Disks, balls, and walls: analysis of a
    // combinatorial game", Amer. Math. Monthly 96(6) (1989) 481-493
    for (const n of [0, 1, 2, 5, 17, 60]) {
      const o = await stabilize(problem({ lattice: { preset: 'line' }, chips: 2 * n + 1 }), { threads: 1 });
      const row = Array.from({ length: 2 * n + 5 }, (_, k) => heightAt(o, k - n - 2) ?? 0);
      expect(row).toEqual([0, 0, ...Array(2 * n + 1).fill(1), 0, 0]);
    }
  });

  it('2n grains leave a hole at the origin and one grain on every other site of -n..n', async () => {
    // from memory (folklore, same 1989 Monthly paper)
    for (const n of [1, 3, 12, 40]) {
      const o = await stabilize(problem({ lattice: { preset: 'line' }, chips: 2 * n }), { threads: 1 });
      for (let x = -n - 2; x <= n + 2; x++) expect(heightAt(o, x) ?? 0).toBe(Math.abs(x) <= n && x !== 0 ? 1 : 0);
    }
  });

  it('the odometer solves the discrete Laplace equation: u(x-1) - 2u(x) + u(x+1) = h_final - h_initial', async () => {
    // the toppling identity: each site loses deg grains per toppling and gains one per neighbour toppling
    // (common practice)
    const N = 101;
    const o = await stabilize(problem({ lattice: { preset: 'line' }, chips: N }), { threads: 1 });
    for (let x = -60; x <= 60; x++) {
      const lap = odometerAt(o, x - 1) - 2 * odometerAt(o, x) + odometerAt(o, x + 1);
      expect(lap).toBe((heightAt(o, x) ?? 0) - (x === 0 ? N : 0));
    }
  });
});
