import { describe, expect, test } from 'vitest';
import { backgroundOfSpec } from './labels.js';

describe('backgroundOfSpec', () => {
  test('gives the parameters that define each kind of background', () => {
    expect(backgroundOfSpec({ kind: 'constant', height: 2 })).toBe('constant 2');
    expect(backgroundOfSpec({ kind: 'constant', height: 0 })).toBe('constant 0');
    expect(backgroundOfSpec({ kind: 'checkerboard', a: 3, b: 1 })).toBe('checkerboard 3 / 1');
    expect(backgroundOfSpec({ kind: 'annuli', a: 2, b: 0 })).toBe('annuli 2 / 0');
    expect(backgroundOfSpec({ kind: 'motif', cells: [[0, 1, 2], [2, 1, 0]] })).toBe('periodic motif 3×2 [0 1 2; 2 1 0]');
    expect(backgroundOfSpec({ kind: 'random', seed: 7, weights: [1, 2, 1] })).toBe('random i.i.d. heights 0–2, weights 1 : 2 : 1, seed 7');
    expect(backgroundOfSpec({ kind: 'random', seed: 0, weights: [0.25, 0.75] })).toBe('random i.i.d. heights 0–1, weights 0.25 : 0.75, seed 0');
    expect(backgroundOfSpec({ kind: 'array', sha256: 'ab12cd34'.repeat(8), shape: [101, 99] })).toBe('uploaded array 101×99, sha256 ab12cd34…');
  });

  test('stays one short line for large motifs and many weights', () => {
    const motif = Array.from({ length: 5 }, () => [0, 1, 2, 3, 0]);
    expect(backgroundOfSpec({ kind: 'motif', cells: motif })).toBe('periodic motif 5×5');
    const weights = Array.from({ length: 12 }, (_, i) => i + 1);
    expect(backgroundOfSpec({ kind: 'random', seed: 3, weights })).toBe('random i.i.d. heights 0–11, seed 3');
  });
});
