import { describe, expect, test } from 'vitest';
import { latticeName, latticeOfSpec } from './lattice-names.js';
import { LATTICE_PRESETS, type LatticeChoice } from './run-spec.js';

type PeriodicGraph = Extract<LatticeChoice, { periodic: unknown }>['periodic'];

describe('lattice names', () => {
  test('one rule for every preset: lowercase as said mid-sentence, proper names capitalised, Zᵈ in brackets', () => {
    expect(LATTICE_PRESETS.map(latticeName)).toEqual([
      'line (Z¹)',
      'square lattice (Z²)',
      'cubic lattice (Z³)',
      'triangular lattice',
      'honeycomb lattice',
      'F-lattice',
      'Manhattan lattice',
    ]);
  });

  test('a periodic preset sent as its unit cell keeps its name; an uploaded graph its own', () => {
    const cell: PeriodicGraph = { period: [2, 2], neighbours: [[[[1, 0]], [[0, 1]]], [[[0, 1]], [[1, 0]]]] };
    expect(latticeOfSpec({ periodic: cell, name: 'manhattan' })).toBe('Manhattan lattice (2×2 cell)');
    expect(latticeOfSpec({ periodic: cell, name: 'my brick wall' })).toBe('my brick wall (2×2 cell)');
    expect(latticeOfSpec({ periodic: cell })).toBe('periodic graph (2×2 cell)');
    expect(latticeOfSpec({ preset: 'honeycomb' })).toBe('honeycomb lattice');
  });
});
