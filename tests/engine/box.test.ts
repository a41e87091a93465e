/** Finite-box mode (boundary edges go to a sink): the sandpile group of small wired grids. */
import { all, create } from 'mathjs';
import { describe, expect, it } from 'vitest';
import { boxStabilizer, stabilizeBox } from '../../renderer/src/engine/index.js';

const square = (n: number, v: number) => new Int32Array(n * n).fill(v);
const stab = (h: Int32Array, shape: number[]) => stabilizeBox('square', h, shape).heights;
const matrix = (h: Int32Array, n: number) => Array.from({ length: n }, (_, y) => Array.from(h.subarray(y * n, y * n + n)));

/** e = stab(6 - stab(6)) on the wired n x n grid: OEIS A307652, FORMULA. */
function identity(n: number): Int32Array {
  const s6 = stab(square(n, 6), [n, n]);
  return stab(s6.map((v) => 6 - v), [n, n]);
}

describe('identity element of the sandpile group (OEIS A307652)', () => {
  it('has the published number of grains on grids of side 2..9', () => {
    // OEIS A307652 (offset 1, grid side n+1): 8, 12, 40, 52, 72, 88, 136, 160
    const got = [2, 3, 4, 5, 6, 7, 8, 9].map((n) => identity(n).reduce((a, v) => a + v, 0));
    expect(got).toEqual([8, 12, 40, 52, 72, 88, 136, 160]);
  });

  it('matches the worked examples 2x2 .. 5x5', () => {
    // OEIS A307652, EXAMPLE
    expect(matrix(identity(2), 2)).toEqual([[2, 2], [2, 2]]);
    expect(matrix(identity(3), 3)).toEqual([[2, 1, 2], [1, 0, 1], [2, 1, 2]]);
    expect(matrix(identity(4), 4)).toEqual([[2, 3, 3, 2], [3, 2, 2, 3], [3, 2, 2, 3], [2, 3, 3, 2]]);
    expect(matrix(identity(5), 5)).toEqual([[2, 3, 2, 3, 2], [3, 2, 1, 2, 3], [2, 1, 0, 1, 2], [3, 2, 1, 2, 3], [2, 3, 2, 3, 2]]);
  });

  it('is neutral: e + c stabilizes to c for recurrent c (group identity; common practice)', () => {
    const n = 6;
    const e = identity(n);
    // all-3 is recurrent (the maximal stable configuration); so is stab(all-3 + e) by closure
    const max = square(n, 3);
    expect(Array.from(stab(max.map((v, i) => v + e[i]!), [n, n]))).toEqual(Array.from(max));
    expect(Array.from(stab(e.map((v, i) => v + e[i]!), [n, n]))).toEqual(Array.from(e));
  });
});

/**
 * Dhar's burning test: a stable c is recurrent iff adding to each site its number of edges to the sink
 * and stabilizing makes every site topple exactly once (Dhar, PRL 64 (1990) 1613; common practice).
 */
function countRecurrent(rows: number, cols: number): number {
  const n = rows * cols;
  const burn = new Int32Array(n);
  for (let y = 0; y < rows; y++)
    for (let x = 0; x < cols; x++) burn[y * cols + x] = (x === 0 ? 1 : 0) + (x === cols - 1 ? 1 : 0) + (y === 0 ? 1 : 0) + (y === rows - 1 ? 1 : 0);
  let count = 0;
  const c = new Int32Array(n);
  const run = boxStabilizer('square', [rows, cols]);
  for (let code = 0; code < 4 ** n; code++) {
    let k = code;
    for (let i = 0; i < n; i++) ((c[i] = (k & 3) + burn[i]!), (k >>= 2));
    const { odometer } = run(c);
    if (odometer.every((u) => u === 1)) count++;
  }
  return count;
}

/** Reduced Laplacian of the wired rows x cols grid (4 on the diagonal, -1 per grid neighbour). */
function reducedLaplacian(rows: number, cols: number): number[][] {
  const n = rows * cols;
  const L = Array.from({ length: n }, () => Array<number>(n).fill(0));
  for (let y = 0; y < rows; y++)
    for (let x = 0; x < cols; x++) {
      const i = y * cols + x;
      L[i]![i] = 4;
      for (const [dx, dy] of [[1, 0], [-1, 0], [0, 1], [0, -1]] as const) {
        const X = x + dx, Y = y + dy;
        if (X >= 0 && X < cols && Y >= 0 && Y < rows) L[i]![Y * cols + X] = -1;
      }
    }
  return L;
}

// exact rational arithmetic: doubles are not exact beyond 2^53 (mathjs "Configuration" docs)
const mf = create(all, { number: 'Fraction' });
function exactDet(L: number[][]): bigint {
  const f = mf.det(mf.matrix(L.map((r) => r.map((v) => mf.fraction(v))))) as unknown as { s: bigint; n: bigint; d: bigint };
  expect(BigInt(f.d)).toBe(1n);
  return BigInt(f.s) * BigInt(f.n);
}

describe('order of the sandpile group = number of spanning trees (matrix-tree theorem)', () => {
  // OEIS A007341 (spanning trees of the n x n grid graph, offset 1); the wired n x n box is the planar
  // dual of the (n+1) x (n+1) grid graph, so its group has order A007341(n+1)
  const A007341 = [1n, 4n, 192n, 100352n, 557568000n, 32565539635200n, 19872369301840986112n];

  it('det of the reduced Laplacian (mathjs, exact fractions) equals A007341(n+1) for n = 1..6', () => {
    for (let n = 1; n <= 6; n++) expect(exactDet(reducedLaplacian(n, n))).toBe(A007341[n]);
  });

  it('the engine finds exactly that many recurrent configurations on wired 1x1, 2x2 and 3x3 grids', () => {
    expect(countRecurrent(1, 1)).toBe(4);
    expect(countRecurrent(2, 2)).toBe(192); // also OEIS A300006: the 2 x 2 group has 192 elements
    expect(countRecurrent(3, 3)).toBe(100352);
  });

  it('and on 1 x m strips and a 2 x 4 rectangle, equal to the determinant', () => {
    // 1 x m strips: 4, 15, 56, 209 (OEIS A001353, from memory); checked against the determinant
    for (const [r, c] of [[1, 1], [1, 2], [1, 3], [1, 4], [2, 4]] as const) expect(BigInt(countRecurrent(r, c))).toBe(exactDet(reducedLaplacian(r, c)));
    expect([1, 2, 3, 4].map((m) => exactDet(reducedLaplacian(1, m)))).toEqual([4n, 15n, 56n, 209n]);
  });
});

describe('finite box mass balance', () => {
  it('grains in = grains left + grains lost to the sink', () => {
    const h = new Int32Array(49).fill(0);
    h[24] = 1000;
    const r = stabilizeBox('square', h, [7, 7]);
    expect(BigInt(r.heights.reduce((a, v) => a + v, 0)) + r.grainsLost).toBe(1000n);
    expect(r.heights.every((v) => v >= 0 && v < 4)).toBe(true);
  });
});

describe('identity element on wired n x n x n cubes (OEIS A351379)', () => {
  it('has 24, 54, 288, 480, 744 grains for n = 2..6, and the published 3 x 3 x 3 centre layer', () => {
    // e = stab(k - stab(k)) for an all-k box with k large enough (OEIS A307652 FORMULA, stated for
    // any k large enough; here k = 10 = twice the maximal stable height of Z^3)
    const identity3 = (n: number) => {
      const s = stabilizeBox('cubic', new Int32Array(n ** 3).fill(10), [n, n, n]).heights;
      return stabilizeBox('cubic', s.map((v) => 10 - v), [n, n, n]).heights;
    };
    // OEIS A351379, DATA (offset 2)
    expect([2, 3, 4, 5, 6].map((n) => identity3(n).reduce((a, v) => a + v, 0))).toEqual([24, 54, 288, 480, 744]);
    // OEIS A351379: the 2 x 2 x 2 identity is all 3s; the 3 x 3 x 3 centre layer is [[2,1,2],[1,0,1],[2,1,2]]
    expect(Array.from(identity3(2))).toEqual(Array(8).fill(3));
    expect(Array.from(identity3(3).subarray(9, 18))).toEqual([2, 1, 2, 1, 0, 1, 2, 1, 2]);
  });
});
