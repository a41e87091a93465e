import { describe, expect, it } from 'vitest';
import { parseCliArgs } from '../../renderer/src/cli/args.js';
import { groupThousands, parseCount, powerOfTen } from '../../renderer/src/cli/numbers.js';

describe('grain counts from the command line', () => {
  it.each([
    ['0', 0], ['25', 25], ['1_000_000', 1e6], ['1,000,000', 1e6], ['1e6', 1e6], ['25e4', 250000],
    ['9007199254740991', Number.MAX_SAFE_INTEGER], // 2^53 − 1, the largest exact double integer (IEEE 754)
  ])('%s → %d', (raw, value) => expect(parseCount('--chips', raw)).toBe(value));

  it.each([
    ['-5', /must be at least 0/], ['2.5', /whole number/], ['1e-3', /whole number/], ['ten', /whole number/], ['', /whole number/],
    ['9007199254740992', /larger than 2\^53 − 1/], ['1e16', /larger than 2\^53 − 1/],
  ])('%s is refused', (raw, message) => expect(() => parseCount('--chips', raw)).toThrow(message));
});

describe('number formatting', () => {
  it('groups thousands, also for decimal strings past 2^53', () => {
    expect(groupThousands(1234567)).toBe('1,234,567');
    expect(groupThousands('178641503')).toBe('178,641,503');
    expect(groupThousands(12n ** 20n)).toBe('3,833,759,992,447,475,122,176');
    expect(groupThousands(999)).toBe('999');
  });
  it('shows n as a power of ten', () => {
    expect(powerOfTen(1e6)).toBe('10^6');
    expect(powerOfTen(1)).toBe('10^0');
    expect(powerOfTen(250000)).toBe('10^5.40'); // log10(2.5e5) = 5.398 (arithmetic)
  });
});

describe('argument parsing', () => {
  it('reads repeated sources and the odometer dtype', () => {
    const o = parseCliArgs(['--lattice', 'square', '--chips', '10', '--source', '1,2:3', '--source', '-4,0:5', '--odometer-dtype', 'float64']);
    expect(o.sources).toEqual(['1,2:3', '-4,0:5']);
    expect(o.odometerDtype).toBe('float64');
  });
  it('treats a negative number after a value flag as its value', () => {
    expect(() => parseCliArgs(['--lattice', 'square', '--chips', '-5'])).toThrow(/--chips must be at least 0, got -5/);
  });
  it.each([
    [['--lattice', 'square', '--chips', '5', '--heights', 'out.bin'], /--heights must name a \.npy file/],
    [['--lattice', 'square', '--chips', '5', '--heights', 'a.npy', '--odometer', 'a.npy'], /must be different files/],
    [['--lattice', 'square', '--chips', '5', '--odometer-dtype', 'int32'], /int64 or float64/],
    [['--lattice', 'square', '--chips', '5', 'stray'], /Unexpected argument 'stray'/],
    [['--chips', '5'], /--lattice is required/],
  ])('%j is refused', (argv, message) => expect(() => parseCliArgs(argv)).toThrow(message));
});
