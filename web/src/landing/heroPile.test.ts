import { describe, expect, test } from 'vitest';
import { stabiliseSquare } from './heroPile.js';

describe('landing-page pile', () => {
  test('16 grains on Z^2 topple 9 times over 5 sites', () => {
    // regression value from an independent numpy run (computed only, not a published source): n=16: 9 topplings, 5 toppled sites
    const pile = stabiliseSquare(16, 11);
    expect(pile.topplings).toBe(9);
    expect(pile.toppled.reduce((a, b) => a + b, 0)).toBe(5);
    // grains are conserved on an infinite lattice (common practice: toppling only moves grains)
    expect(pile.heights.reduce((a, b) => a + b, 0)).toBe(16);
  });

  test('n = 1000 topples 18,226 times over 421 sites, and every height is stable', () => {
    // regression value from an independent numpy run (computed only): n=1000: 18226 topplings, 421 toppled sites
    const pile = stabiliseSquare(1000, 41);
    expect(pile.topplings).toBe(18226);
    expect(pile.toppled.reduce((a, b) => a + b, 0)).toBe(421);
    expect(Math.max(...pile.heights)).toBeLessThan(4);
    expect(pile.heights.reduce((a, b) => a + b, 0)).toBe(1000);
  });

  test('a grid too small for the pile is refused rather than drawn wrong', () => {
    expect(() => stabiliseSquare(1000, 11)).toThrow(/edge/);
  });
});
