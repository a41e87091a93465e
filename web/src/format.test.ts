import { describe, expect, test } from 'vitest';
import fc from 'fast-check';
import { format as mathFormat } from 'mathjs';
import { estimateSecondsLeft, formatCountText, formatDuration, formatElapsed, formatPercent, groupThousands, powerOfTen, superscriptDigits } from './format.js';

describe('exact number display', () => {
  test('the brief’s own worked example: one million reads "1,000,000 (10^6)", the power as a real superscript', () => {
    expect(formatCountText(1_000_000)).toBe('1,000,000 (10⁶)');
    expect(formatCountText(2_500_000)).toBe('2,500,000 (2.5 × 10⁶)');
    expect(formatCountText(10n ** 20n)).toBe('100,000,000,000,000,000,000 (10²⁰)');
    expect(formatCountText(123_456)).not.toContain('^');
  });

  test('superscript digits for exponents where markup cannot go', () => {
    expect(superscriptDigits(0)).toBe('⁰');
    expect(superscriptDigits(1234567890)).toBe('¹²³⁴⁵⁶⁷⁸⁹⁰');
    expect(superscriptDigits(-12)).toBe('⁻¹²');
  });

  test('thousands grouping stays exact beyond 2^53 with bigint', () => {
    // 2^64 = 18446744073709551616 (common practice: the unsigned 64-bit range)
    expect(groupThousands(2n ** 64n)).toBe('18,446,744,073,709,551,616');
    expect(groupThousands(Number.MAX_SAFE_INTEGER)).toBe('9,007,199,254,740,991');
  });

  test('power of ten agrees with mathjs exponential notation for every safe integer from 1,000 up', () => {
    // mathjs (general-purpose npm library) prints e.g. 2500000 as "2.5e+6", and to three significant
    // digits 1234567 as "1.23e+6": exact when three digits say it all, else rounded and marked so
    fc.assert(
      fc.property(fc.integer({ min: 1000, max: 10 ** 15 }), (n) => {
        const p = powerOfTen(n)!;
        const exact = mathFormat(n, { notation: 'exponential' });
        const rounded = mathFormat(n, { notation: 'exponential', precision: 3 });
        const [mantissa, exponent] = (p.approximate ? rounded : exact).split('e');
        expect(p.approximate).toBe(exact.split('e')[0]!.replace(/[-.]/g, '').length > 3);
        expect(p.mantissa).toBe(mantissa!.replace(/\.?0+$/, ''));
        expect(p.exponent).toBe(Number(exponent));
      }),
    );
  });

  test('a count of more than three significant digits gets a rounded power of ten, marked approximate', () => {
    expect(formatCountText(641_601)).toBe('641,601 (≈ 6.42 × 10⁵)');
    expect(formatCountText(1_706_141_972)).toBe('1,706,141,972 (≈ 1.71 × 10⁹)');
    expect(formatCountText(99_960)).toBe('99,960 (≈ 10⁵)');
    expect(formatCountText(12_350_001)).toBe('12,350,001 (≈ 1.24 × 10⁷)');
    expect(formatCountText(4_250_000)).toBe('4,250,000 (4.25 × 10⁶)');
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

  test('long durations read in days and years, with grouped digits, never as a wall of hours', () => {
    expect(formatDuration(86_399)).toBe('23 h 59 min');
    expect(formatDuration(86_400)).toBe('1 day 0 h');
    expect(formatDuration(3 * 86_400 + 4 * 3600 + 59)).toBe('3 days 4 h');
    const year = 365.25 * 86_400;
    expect(formatDuration(year)).toBe('1 year');
    expect(formatDuration(1.5 * year)).toBe('1.5 years');
    // the estimate an author saw for n = 10^12 on the square lattice: "27959728007 h 36 min"
    expect(formatDuration(27_959_728_007 * 3600 + 36 * 60)).toBe('3,189,565 years');
    for (const s of [1e9, 1e12, 1e15, Number.MAX_SAFE_INTEGER]) {
      const text = formatDuration(s);
      expect(text).toMatch(/^\d{1,3}(,\d{3})* years$/);
      expect(text.length).toBeLessThan(30);
    }
  });

  test('a measured time under a few seconds keeps its fraction instead of reading "0 s"', () => {
    expect(formatElapsed(0)).toBe('under 1 ms');
    expect(formatElapsed(0.0004)).toBe('under 1 ms');
    expect(formatElapsed(0.035)).toBe('35 ms');
    expect(formatElapsed(0.4)).toBe('400 ms');
    expect(formatElapsed(0.9996)).toBe('1.0 s');
    expect(formatElapsed(2.44)).toBe('2.4 s');
    expect(formatElapsed(45)).toBe('45 s');
    expect(formatElapsed(7500)).toBe('2 h 05 min');
    expect(formatElapsed(-1)).toBe('unknown');
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
