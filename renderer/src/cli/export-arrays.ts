import { createHash } from 'node:crypto';
import type { OdometerArray } from '../engine/outcome.js';

/** uint8 when every height fits (the common case: stable heights are below the degree), else int32. */
export function heightsForExport(heights: Int32Array): Uint8Array | Int32Array {
  for (let k = 0; k < heights.length; k++) {
    const h = heights[k]!;
    if (h < 0 || h > 255) return heights;
  }
  return Uint8Array.from(heights);
}

/**
 * The odometer as int64 (exact integers, the default) or float64. The engine keeps counts in
 * float64, exact below 2^53, or uint32 (the fast path); int64 is written as two 32-bit halves to
 * avoid a BigInt per cell.
 */
export function odometerForExport(odometer: OdometerArray, dtype: 'int64' | 'float64'): BigInt64Array | Float64Array {
  if (dtype === 'float64') return odometer instanceof Float64Array ? odometer : Float64Array.from(odometer);
  const out = new BigInt64Array(odometer.length);
  const halves = new Uint32Array(out.buffer);
  const little = new Uint8Array(new Uint16Array([1]).buffer)[0] === 1;
  const [lo, hi] = little ? [0, 1] : [1, 0];
  for (let k = 0; k < odometer.length; k++) {
    const v = odometer[k]!;
    if (!(v >= 0 && v <= Number.MAX_SAFE_INTEGER && Number.isInteger(v))) {
      throw new RangeError(`odometer value ${v} at flat index ${k} is not an exact non-negative integer`);
    }
    const low = v % 4294967296;
    halves[2 * k + lo] = low;
    halves[2 * k + hi] = (v - low) / 4294967296;
  }
  return out;
}

/** sha256 of an array's data bytes exactly as they sit after the .npy header (little-endian). */
export function arrayHash(data: ArrayBufferView): string {
  return createHash('sha256').update(new Uint8Array(data.buffer, data.byteOffset, data.byteLength)).digest('hex');
}

export function dtypeName(data: Uint8Array | Int32Array | BigInt64Array | Float64Array): 'uint8' | 'int32' | 'int64' | 'float64' {
  if (data instanceof Uint8Array) return 'uint8';
  if (data instanceof Int32Array) return 'int32';
  if (data instanceof BigInt64Array) return 'int64';
  return 'float64';
}
