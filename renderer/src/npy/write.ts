import { dtypeOf, formatDescr, HOST_ENDIAN, type Endian, type NpyData } from './dtype.js';
import { formatHeaderDict } from './header.js';
import { NPY_MAGIC, swapBytes } from './read.js';

export interface NpyWriteOptions {
  /** '1.0' unless the header needs more than 65535 bytes, which requires '2.0' (NumPy does the same) */
  version?: 'auto' | '1.0' | '2.0';
  /** byte order of the file; defaults to little-endian, what NumPy writes on common machines */
  endian?: Endian;
}

const ALIGN = 64; // the format documentation: total header length is divisible by 64 for aligned loads
const GROWTH_AXIS_MAX_DIGITS = 21; // NumPy leaves room for the first axis to grow in place; we match its bytes

/** Lay out the preamble and padded header for an array of `shape` and `descr`. */
export function npyHeader(descr: string, shape: readonly number[], version: 'auto' | '1.0' | '2.0' = 'auto'): Uint8Array {
  let dict = formatHeaderDict(descr, shape);
  if (shape.length > 0) dict += ' '.repeat(Math.max(0, GROWTH_AXIS_MAX_DIGITS - String(shape[0]).length));
  const padded = (preamble: number) => {
    const total = preamble + dict.length + 1;
    return dict + ' '.repeat((ALIGN - (total % ALIGN)) % ALIGN) + '\n';
  };
  let major = version === '2.0' ? 2 : 1;
  let text = padded(major === 1 ? 10 : 12);
  if (major === 1 && text.length > 0xffff) {
    if (version === '1.0') throw new RangeError('header too long for .npy version 1.0');
    major = 2;
    text = padded(12);
  }
  const preamble = major === 1 ? 10 : 12;
  const out = new Uint8Array(preamble + text.length);
  out.set(NPY_MAGIC, 0);
  out[6] = major;
  out[7] = 0;
  const view = new DataView(out.buffer);
  if (major === 1) view.setUint16(8, text.length, true);
  else view.setUint32(8, text.length, true);
  for (let k = 0; k < text.length; k++) out[preamble + k] = text.charCodeAt(k);
  return out;
}

/**
 * Encode a C-order typed array as .npy bytes. The dtype follows the typed array
 * (Uint8Array → |u1, Int32Array → <i4, BigInt64Array → <i8, Float64Array → <f8, ...).
 * Returns [header, data] chunks so large arrays are not copied just to be written.
 */
export function encodeNpy(shape: readonly number[], data: NpyData, options: NpyWriteOptions = {}): Uint8Array[] {
  const count = shape.reduce((a, b) => a * b, 1);
  if (count !== data.length) throw new RangeError(`shape (${shape.join(', ')}) has ${count} elements, data has ${data.length}`);
  const endian = options.endian ?? 'little';
  const dtype = dtypeOf(data);
  const header = npyHeader(formatDescr(dtype, endian), shape, options.version ?? 'auto');
  let body = new Uint8Array(data.buffer, data.byteOffset, data.byteLength);
  if (endian !== HOST_ENDIAN && data.BYTES_PER_ELEMENT > 1) {
    body = body.slice();
    swapBytes(body, data.BYTES_PER_ELEMENT);
  }
  return [header, body];
}

/** encodeNpy joined into one buffer, for small arrays and tests. */
export function writeNpy(shape: readonly number[], data: NpyData, options: NpyWriteOptions = {}): Uint8Array {
  const [header, body] = encodeNpy(shape, data, options) as [Uint8Array, Uint8Array];
  const out = new Uint8Array(header.length + body.length);
  out.set(header, 0);
  out.set(body, header.length);
  return out;
}
