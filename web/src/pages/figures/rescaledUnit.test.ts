import { describe, expect, test } from 'vitest';
import { rescaledUnitName } from './rescaledUnit.js';

describe('the composer names the rescaled unit by the panels’ dimension', () => {
  // a pile's radius grows like n^(1/d) (mass conservation at bounded density, common practice): x/√n is only the plane's unit
  test('one dimension: x/n, x/√n or x/∛n', () => {
    expect(rescaledUnitName([2, 2])).toBe('x/√n');
    expect(rescaledUnitName([3])).toBe('x/∛n');
    expect(rescaledUnitName([1])).toBe('x/n');
  });
  test('mixed dimensions say so', () => {
    expect(rescaledUnitName([3, 2, 2])).toBe('x/n^(1/d), each panel by its own d (2-D and 3-D runs mixed)');
    expect(rescaledUnitName([])).toBe('x/n^(1/d)');
  });
});
