import { HOST_ENDIAN, itemSize, parseDescr, typedArrayFor, type Endian, type NpyData, type NpyDtype } from './dtype.js';
import { NpyFormatError } from './errors.js';
import { parsePyLiteral } from './header.js';

export const NPY_MAGIC = new Uint8Array([0x93, 0x4e, 0x55, 0x4d, 0x50, 0x59]); // "\x93NUMPY"

export interface NpyArray<D extends NpyData = NpyData> {
  dtype: NpyDtype;
  /** row-major (C order); [] is a scalar */
  shape: number[];
  data: D;
}

export interface NpyReadResult extends NpyArray {
  version: '1.0' | '2.0' | '3.0';
  /** byte order of the file (the returned data is always in host order) */
  endian: Endian;
}

export interface NpyReadOptions {
  /** accept f4/f8 as well as integers (off by default: uploads must be integer arrays) */
  allowFloat?: boolean;
}

/**
 * Parse .npy bytes (format versions 1.0, 2.0 and 3.0) into a typed array in host byte order.
 * When the file is already in host order and aligned the result is a view on `bytes`, not a copy.
 * @throws NpyFormatError with a one-line message for anything that is not a plain C-order array.
 */
export function readNpy(bytes: Uint8Array, options: NpyReadOptions = {}): NpyReadResult {
  if (bytes.length < 10 || !NPY_MAGIC.every((b, k) => bytes[k] === b)) {
    throw new NpyFormatError('not a .npy file (the magic string \\x93NUMPY is missing)');
  }
  const major = bytes[6]!;
  const minor = bytes[7]!;
  if (minor !== 0 || major < 1 || major > 3) throw new NpyFormatError(`unsupported .npy format version ${major}.${minor}`);
  const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  const lengthBytes = major === 1 ? 2 : 4;
  if (bytes.length < 8 + lengthBytes) throw new NpyFormatError('truncated .npy header');
  const headerLength = major === 1 ? view.getUint16(8, true) : view.getUint32(8, true);
  const dataStart = 8 + lengthBytes + headerLength;
  if (dataStart > bytes.length) throw new NpyFormatError('truncated .npy header');
  const headerBytes = bytes.subarray(8 + lengthBytes, dataStart);
  // 1.0 and 2.0 headers are latin1 (in practice ASCII); 3.0 allows UTF-8.
  const headerText = new TextDecoder(major === 3 ? 'utf-8' : 'latin1').decode(headerBytes);
  const header = parsePyLiteral(headerText.trimEnd());
  if (header === null || typeof header !== 'object' || Array.isArray(header)) {
    throw new NpyFormatError('malformed header: not a dict');
  }
  for (const key of ['descr', 'fortran_order', 'shape']) {
    if (!(key in header)) throw new NpyFormatError(`malformed header: '${key}' is missing`);
  }
  if (header.fortran_order !== false) {
    throw new NpyFormatError('Fortran-order arrays are not supported; save with C order (numpy.ascontiguousarray)');
  }
  const shape = header.shape;
  if (!Array.isArray(shape) || !shape.every((d) => typeof d === 'number' && Number.isSafeInteger(d) && d >= 0)) {
    throw new NpyFormatError('malformed header: shape is not a tuple of non-negative integers');
  }
  const { dtype, endian } = parseDescr(header.descr, options.allowFloat ?? false);
  const dims = shape as number[];
  const count = dims.reduce((a, b) => a * b, 1);
  const size = itemSize(dtype);
  const expected = count * size;
  const found = bytes.length - dataStart;
  if (!Number.isSafeInteger(expected) || found < expected) {
    throw new NpyFormatError(`truncated .npy data: shape (${dims.join(', ')}) needs ${expected} bytes, found ${found}`);
  }
  if (found > expected) throw new NpyFormatError(`corrupt .npy: ${found - expected} unexpected bytes after the array data`);
  const version = `${major}.0` as NpyReadResult['version'];
  return { version, endian, dtype, shape: dims, data: decode(bytes, dataStart, count, dtype, endian) };
}

function decode(bytes: Uint8Array, start: number, count: number, dtype: NpyDtype, endian: Endian): NpyData {
  const Ctor = typedArrayFor(dtype);
  const size = Ctor.BYTES_PER_ELEMENT;
  const absolute = bytes.byteOffset + start;
  if ((endian === HOST_ENDIAN || size === 1) && absolute % size === 0) {
    return new Ctor(bytes.buffer, absolute, count);
  }
  const copy = new Uint8Array(count * size);
  copy.set(bytes.subarray(start, start + count * size));
  if (endian !== HOST_ENDIAN && size > 1) swapBytes(copy, size);
  return new Ctor(copy.buffer, 0, count);
}

/** Reverse each `size`-byte group in place (byte-order conversion). */
export function swapBytes(buf: Uint8Array, size: number): void {
  for (let k = 0; k < buf.length; k += size) {
    for (let a = k, b = k + size - 1; a < b; a++, b--) {
      const t = buf[a]!;
      buf[a] = buf[b]!;
      buf[b] = t;
    }
  }
}
