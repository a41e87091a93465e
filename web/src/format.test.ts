import { describe, expect, test } from 'vitest';
import fc from 'fast-check';
import { format as mathFormat } from 'mathjs';
import { estimateSecondsLeft, formatCountText, formatDuration, formatPercent, groupThousands, powerOfTen } from './format.js';

describe('exact number display', () => {
  test('the brief’s own worked example: one million reads "1,000,000 (10^6)"', () => {
    expect(formatCountText(1_000_000)).toBe('1,000,000 (10^6)');
  });

  test('thousands grouping stays exact beyond 2^53 with bigint', () => {
    // 2^64 = 18446744073709551616 (common practice: the unsigned 64-bit range)
    expect(groupThousands(2n ** 64n)).toBe('18,446,744,073,709,551,616');
    expect(groupThousands(Number.MAX_SAFE_INTEGER)).toBe('9,007,199,254,740,991');
  });

  test('power of ten agrees with mathjs exponential notation for every safe integer from 1,000 up', () => {
    // mathjs (general-purpose npm library) prints e.g. 1234567 as "1.234567e+6"
    fc.assert(
      fc.property(fc.integer({ min: 1000, max: 10 ** 15 }), (n) => {
        const p = powerOfTen(n)!;
        const [mantissa, exponent] = mathFormat(n, { notation: 'exponential' }).split('e');
        expect(p.mantissa).toBe(mantissa);
        expect(p.exponent).toBe(Number(exponent));
      }),
    );
  });

  test('small counts carry no power of ten', () => {
    expect(powerOfTen(999)).toBeNull();
    expect(formatCountText(16)).toBe('16');
  });

  test('grouping keeps every digit: without commas it equals mathjs fixed notation', () => {
    fc.assert(
      fc.property(fc.integer({ min: 0, max: Number.MAX_SAFE_INTEGER }), (n) => {
        expect(groupThousands(n).replaceAll(',', '')).toBe(mathFormat(n, { notation: 'fixed' }));
        expect(groupThousands(n)).toMatch(/^\d{1,3}(,\d{3})*$/);
      }),
    );
  });
});

describe('time left and progress', () => {
  test('durations read in named units', () => {
    expect(formatDuration(45)).toBe('45 s');
    expect(formatDuration(200)).toBe('3 min 20 s');
    expect(formatDuration(7500)).toBe('2 h 05 min');
  });

  test('time left extrapolates the rate so far: a quarter done in 60 s leaves 180 s', () => {
    expect(estimateSecondsLeft(0.25, 60)).toBe(180);
    expect(estimateSecondsLeft(0, 60)).toBeNull();
    expect(estimateSecondsLeft(1, 60)).toBeNull();
  });

  test('progress never shows 100 % before the end', () => {
    expect(formatPercent(0.999)).toBe('99 %');
    expect(formatPercent(1)).toBe('100 %');
  });
});
