/** Single-source piles against OEIS: number of nonempty sites after n grains at the origin. */
import { describe, expect, it } from 'vitest';
import { stabilize } from '../../renderer/src/engine/index.js';
import { problem } from './helpers.js';

const nonempty = async (lattice: string, n: number) => {
  const o = await stabilize(problem({ lattice: { preset: lattice }, chips: n }), { threads: 1 });
  return o.heights.reduce((a, v) => a + (v > 0 ? 1 : 0), 0);
};

describe('OEIS A349990: Z^2, nonempty sites after n grains at the origin, n = 0..68', () => {
  // OEIS A349990, DATA (offset 0)
  const A349990 = [
    0, 1, 1, 1, 4, 5, 5, 5, 4, 5, 5, 5, 4, 5, 5, 5, 12, 13, 13, 13, 12, 13, 13, 13, 12, 13, 13, 13, 16, 17, 17, 17, 20, 21, 21, 21, 20, 21, 21,
    21, 20, 21, 21, 21, 24, 25, 25, 25, 24, 25, 25, 25, 24, 25, 25, 25, 32, 33, 33, 33, 36, 37, 37, 37, 36, 37, 37, 37, 36,
  ];
  it('matches every published term', async () => {
    const got: number[] = [];
    for (let n = 0; n <= 68; n++) got.push(await nonempty('square', n));
    expect(got).toEqual(A349990);
  });

  it('n = 25 ends as the diamond of the EXAMPLE section', async () => {
    // OEIS A349990, EXAMPLE: rows 1 / 2 3 2 / 1 3 1 3 1 / 2 3 2 / 1
    const o = await stabilize(problem({ lattice: { preset: 'square' }, chips: 25 }), { threads: 1 });
    const pick = (dy: number) => Array.from({ length: 5 }, (_, dx) => o.heights[(o.origin[0]! + dy) * o.shape[1]! + o.origin[1]! + dx - 2]);
    expect([pick(-2), pick(-1), pick(0), pick(1), pick(2)]).toEqual([
      [0, 0, 1, 0, 0],
      [0, 2, 3, 2, 0],
      [1, 3, 1, 3, 1],
      [0, 2, 3, 2, 0],
      [0, 0, 1, 0, 0],
    ]);
  });
});

describe('OEIS A349991: the 6-neighbour (triangular) lattice, threshold 6', () => {
  // OEIS A349991, DATA (offset 0)
  const first42 = [0, 1, 1, 1, 1, 1, ...Array.from({ length: 5 }, () => [6, 7, 7, 7, 7, 7]).flat(), 18, 19, 19, 19, 19, 19];
  it('matches the published terms n = 0..41, a(54) = 18, a(72) = 24, a(73) = 25', async () => {
    const got: number[] = [];
    for (let n = 0; n <= 73; n++) got.push(await nonempty('triangular', n));
    expect(got.slice(0, 42)).toEqual(first42);
    expect(got[54]).toBe(18);
    expect([got[72], got[73]]).toEqual([24, 25]);
    // OEIS A349991, FORMULA: a(6n) + 1 = a(6n + k) for k = 1..5
    for (let n = 0; 6 * n + 5 <= 73; n++) for (let k = 1; k <= 5; k++) expect(got[6 * n + k]).toBe(got[6 * n]! + 1);
  });
});
