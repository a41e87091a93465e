import { describe, expect, test } from 'vitest';
import { heightText, odometerText, readoutCoordinates } from './readoutText.js';

describe('the cell readout in words', () => {
  test('a line names its cell by a bare x, the plane and space by tuples, each rescaled by its own n^(1/d)', () => {
    expect(readoutCoordinates([2], [0.0004])).toEqual({ coordinatesLabel: 'x', coordinates: '2', rescaledLabel: 'x/n', rescaled: '0.0004' });
    expect(readoutCoordinates([0, -3], [0, -0.01])).toEqual({ coordinatesLabel: '(x, y)', coordinates: '(0, −3)', rescaledLabel: '(x/√n, y/√n)', rescaled: '(0.0000, −0.0100)' });
    expect(readoutCoordinates([1, 0, 0], [])).toMatchObject({ coordinatesLabel: '(x, y, z)', coordinates: '(1, 0, 0)', rescaledLabel: '(x/∛n, y/∛n, z/∛n)', rescaled: '—' });
  });

  test('one grain and one toppling are singular; large odometers are grouped and float ones rounded', () => {
    expect(heightText(1)).toBe('1 grain');
    expect(heightText(0)).toBe('0 grains');
    expect(heightText(3n)).toBe('3 grains');
    expect(odometerText(1n)).toBe('1 toppling');
    expect(odometerText(3_121_251n)).toBe('3,121,251 topplings');
    expect(odometerText(94_007.4)).toBe('94,007 topplings');
  });
});
