import { describe, expect, test } from 'vitest';
import { neverStabilizesReason } from './stability.js';

/**
 * The words of a refused background. Which backgrounds are refused (every site at least its
 * threshold − 1 explodes on an infinite lattice: common practice) is tested with the API in
 * tests/api/estimates.test.ts; here, that the sentence reads right at the smallest numbers.
 */
describe('why a background can never stabilize, in words', () => {
  test('one grain is "1 grain", and a threshold of 2 asks for empty sites rather than "at most 0"', () => {
    // the line: two neighbours, threshold 2; a motif of 1s and 2s puts at least one grain everywhere
    const line = neverStabilizesReason({ preset: 'line' }, { kind: 'motif', cells: [[2, 1], [1, 2]] });
    expect(line).toMatch(/^this motif puts at least 1 grain on every site, and 1 is one below the toppling threshold 2 /);
    expect(line).toMatch(/; use a background with some empty sites \(height 0\)$/);
    expect(line).not.toContain('1 grains');
  });

  test('more grains stay plural, and larger thresholds name the height that would do', () => {
    const square = neverStabilizesReason({ preset: 'square' }, { kind: 'constant', height: 3 });
    expect(square).toMatch(/^this constant background puts at least 3 grains on every site, and 3 is one below the toppling threshold 4 /);
    expect(square).toMatch(/; use a background with heights of at most 2 on some sites$/);
    expect(neverStabilizesReason({ preset: 'square' }, { kind: 'constant', height: 2 })).toBeUndefined();
  });
});
