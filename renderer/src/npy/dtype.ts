import { NpyFormatError } from './errors.js';

/**
 * The dtypes we read and write, as NumPy spells them without the byte-order mark.
 * Integers cover every width; floats exist only so the float64 odometer can be written and read back.
 */
export const INTEGER_DTYPES = ['i1', 'u1', 'i2', 'u2', 'i4', 'u4', 'i8', 'u8'] as const;
export const FLOAT_DTYPES = ['f4', 'f8'] as const;
export type IntegerDtype = (typeof INTEGER_DTYPES)[number];
export type FloatDtype = (typeof FLOAT_DTYPES)[number];
export type NpyDtype = IntegerDtype | FloatDtype;
export type Endian = 'little' | 'big';

export type NpyData =
  | Int8Array
  | Uint8Array
  | Int16Array
  | Uint16Array
  | Int32Array
  | Uint32Array
  | BigInt64Array
  | BigUint64Array
  | Float32Array
  | Float64Array;

type TypedArrayConstructor = {
  new (length: number): NpyData;
  new (buffer: ArrayBufferLike, byteOffset: number, length: number): NpyData;
  readonly BYTES_PER_ELEMENT: number;
};

const CONSTRUCTORS: Record<NpyDtype, TypedArrayConstructor> = {
  i1: Int8Array,
  u1: Uint8Array,
  i2: Int16Array,
  u2: Uint16Array,
  i4: Int32Array,
  u4: Uint32Array,
  i8: BigInt64Array,
  u8: BigUint64Array,
  f4: Float32Array,
  f8: Float64Array,
};

export function typedArrayFor(dtype: NpyDtype): TypedArrayConstructor {
  return CONSTRUCTORS[dtype];
}

export function itemSize(dtype: NpyDtype): number {
  return CONSTRUCTORS[dtype].BYTES_PER_ELEMENT;
}

export function isIntegerDtype(dtype: string): dtype is IntegerDtype {
  return (INTEGER_DTYPES as readonly string[]).includes(dtype);
}

/** The dtype whose typed array is `data`, so callers can hand us a typed array and nothing else. */
export function dtypeOf(data: NpyData): NpyDtype {
  for (const [dtype, ctor] of Object.entries(CONSTRUCTORS) as [NpyDtype, TypedArrayConstructor][]) {
    if (data.constructor === ctor) return dtype;
  }
  throw new TypeError('unsupported typed array for .npy');
}

export const HOST_ENDIAN: Endian = new Uint8Array(new Uint16Array([1]).buffer)[0] === 1 ? 'little' : 'big';

/**
 * Split a NumPy dtype string such as '<i4', '>u2', '|u1' or '=i8' into dtype and byte order.
 * `allowFloat` is off for uploads: heights and backgrounds are integers by definition.
 */
export function parseDescr(descr: unknown, allowFloat: boolean): { dtype: NpyDtype; endian: Endian } {
  if (typeof descr !== 'string') {
    throw new NpyFormatError('structured (record) dtypes are not supported; save a plain integer array');
  }
  const m = /^([<>|=]?)([a-zA-Z])(\d+)$/.exec(descr);
  if (!m) throw new NpyFormatError(`unsupported dtype '${descr}'`);
  const [, order, kind, width] = m;
  const dtype = `${kind}${width}`;
  const integer = isIntegerDtype(dtype);
  const float = (FLOAT_DTYPES as readonly string[]).includes(dtype);
  if (!integer && !(float && allowFloat)) {
    throw new NpyFormatError(`dtype '${descr}' is not an integer type; expected one of int8..int64 or uint8..uint64`);
  }
  const endian: Endian = order === '<' ? 'little' : order === '>' ? 'big' : HOST_ENDIAN;
  return { dtype: dtype as NpyDtype, endian };
}

export function formatDescr(dtype: NpyDtype, endian: Endian): string {
  if (itemSize(dtype) === 1) return `|${dtype}`;
  return `${endian === 'little' ? '<' : '>'}${dtype}`;
}
