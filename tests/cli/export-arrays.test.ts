import { describe, expect, it } from 'vitest';
import { heightsForExport, odometerForExport } from '../../renderer/src/cli/export-arrays.js';

describe('array dtypes chosen for export', () => {
  it('keeps heights as uint8 when all fit and int32 otherwise', () => {
    expect(heightsForExport(Int32Array.from([0, 3, 255]))).toBeInstanceOf(Uint8Array);
    expect(heightsForExport(Int32Array.from([0, 256]))).toBeInstanceOf(Int32Array);
    expect(heightsForExport(Int32Array.from([-1, 2]))).toBeInstanceOf(Int32Array);
  });

  it('writes int64 odometers exactly up to 2^53 − 1 (IEEE 754 doubles are exact integers below 2^53)', () => {
    const values = [0, 1, 2 ** 32 - 1, 2 ** 32, 2 ** 40 + 3, Number.MAX_SAFE_INTEGER];
    const out = odometerForExport(Float64Array.from(values), 'int64') as BigInt64Array;
    expect(Array.from(out)).toEqual(values.map((v) => BigInt(v)));
    expect(odometerForExport(Float64Array.from(values), 'float64')).toBeInstanceOf(Float64Array);
  });

  it('refuses odometer values that are not exact integers', () => {
    expect(() => odometerForExport(Float64Array.from([1.5]), 'int64')).toThrow(/not an exact non-negative integer/);
    expect(() => odometerForExport(Float64Array.from([2 ** 54]), 'int64')).toThrow(/not an exact/);
  });
});
