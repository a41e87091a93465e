import { describe, expect, test } from 'vitest';
import { titleHint } from './titleHint.js';

describe('the title field\'s example', () => {
  test('names the chosen run\'s lattice and grain count as the app writes them', () => {
    expect(titleHint({ lattice: { preset: 'square' }, chips: 1_000_000 })).toBe('Square lattice (Z²), n = 10⁶');
    expect(titleHint({ lattice: { preset: 'triangular' }, chips: 40_000 })).toBe('Triangular lattice, n = 40,000');
    expect(titleHint({ lattice: { preset: 'line' }, chips: 1000 })).toBe('Line (Z¹), n = 10³');
    expect(titleHint({ lattice: { periodic: { period: [2, 2], neighbours: [[[[1, 0], [-1, 0]], [[0, 1], [0, -1]]], [[[0, 1], [0, -1]], [[1, 0], [-1, 0]]]] }, name: 'f-lattice' }, chips: 2500 })).toBe(
      'F-lattice (2×2 cell), n = 2,500',
    );
  });
});
