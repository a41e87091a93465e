import { describe, expect, test } from 'vitest';
import { typedNumber } from './typedNumber.js';

describe('the number a field means while it is typed', () => {
  test('"-120" typed key by key means nothing until the first digit, then follows every key', () => {
    // "-" alone is what a person has typed on the way to a negative lattice coordinate; it is not 0
    expect(['-', '-1', '-12', '-120'].map((t) => typedNumber(t, true))).toEqual([null, -1, -12, -120]);
    expect(typedNumber('')).toBeNull();
    expect(typedNumber('  ')).toBeNull();
  });

  test('decimals stay decimals unless whole numbers are asked for', () => {
    expect(typedNumber('2.5')).toBe(2.5);
    expect(typedNumber('2.6', true)).toBe(3);
    expect(typedNumber('05')).toBe(5);
  });

  test('text that is no finite number means none', () => {
    expect(typedNumber('1e999')).toBeNull();
    expect(typedNumber('abc')).toBeNull();
  });
});
