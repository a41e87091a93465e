import { execFileSync, spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { FLOAT_DTYPES, INTEGER_DTYPES, readNpy, writeNpy, type NpyData, type NpyDtype } from '../../renderer/src/npy/index.js';

const FIXTURES = join(import.meta.dirname, 'fixtures');
const fixture = (name: string) => new Uint8Array(readFileSync(join(FIXTURES, name)));

// Integer ranges per dtype: NumPy's np.iinfo (the fixtures were written with these extremes).
const LIMITS: Record<string, [bigint, bigint]> = {
  i1: [-128n, 127n], u1: [0n, 255n], i2: [-32768n, 32767n], u2: [0n, 65535n],
  i4: [-(2n ** 31n), 2n ** 31n - 1n], u4: [0n, 2n ** 32n - 1n], i8: [-(2n ** 63n), 2n ** 63n - 1n], u8: [0n, 2n ** 64n - 1n],
};

/** The typed array for a dtype holding the given values. */
function typed(dtype: NpyDtype, values: (number | bigint)[]): NpyData {
  switch (dtype) {
    case 'i1': return Int8Array.from(values.map(Number));
    case 'u1': return Uint8Array.from(values.map(Number));
    case 'i2': return Int16Array.from(values.map(Number));
    case 'u2': return Uint16Array.from(values.map(Number));
    case 'i4': return Int32Array.from(values.map(Number));
    case 'u4': return Uint32Array.from(values.map(Number));
    case 'i8': return BigInt64Array.from(values.map((v) => BigInt(v)));
    case 'u8': return BigUint64Array.from(values.map((v) => BigInt(v)));
    case 'f4': return Float32Array.from(values.map(Number));
    case 'f8': return Float64Array.from(values.map(Number));
  }
}

/** Decode the preamble by hand, following the format documentation (numpy.lib.format, NEP 1). */
function preamble(bytes: Uint8Array) {
  const major = bytes[6]!;
  const view = new DataView(bytes.buffer, bytes.byteOffset);
  const headerLength = major === 1 ? view.getUint16(8, true) : view.getUint32(8, true);
  const start = major === 1 ? 10 : 12;
  const header = new TextDecoder('latin1').decode(bytes.subarray(start, start + headerLength));
  return { major, minor: bytes[7]!, headerLength, dataStart: start + headerLength, header };
}

describe('.npy files written by NumPy itself', () => {
  const files = readdirSync(FIXTURES).filter((f) => /^[iuf]\d-(le|be|na)-v[12]\.npy$/.test(f));

  it('covers every dtype, byte order and both header versions', () => {
    expect(files).toHaveLength((2 + 8 * 2) * 2); // (i1, u1 once; 6 wider ints + 2 floats in both orders) × 2 versions
  });

  it.each(files)('%s reads to the values NumPy wrote and is rewritten byte for byte', (name) => {
    const [, dtype, order, version] = /^(\w\d)-(le|be|na)-v(\d)\.npy$/.exec(name)!;
    const bytes = fixture(name);
    const array = readNpy(bytes, { allowFloat: true });
    expect(array.dtype).toBe(dtype);
    expect(array.shape).toEqual([2, 3]);
    expect(array.version).toBe(`${version}.0`);
    const values = Array.from(array.data as ArrayLike<number | bigint>);
    if (dtype!.startsWith('f')) {
      expect(values).toEqual([-1.5, 0, 1, 2, 2 ** 100, 0.25]);
    } else {
      const [lo, hi] = LIMITS[dtype!]!;
      expect(values.map((v) => BigInt(v))).toEqual([lo, 0n, 1n, 2n, hi, 7n]);
    }
    const rewritten = writeNpy(array.shape, array.data, {
      version: version === '1' ? '1.0' : '2.0',
      endian: order === 'be' ? 'big' : 'little',
    });
    expect(Buffer.from(rewritten).equals(Buffer.from(bytes))).toBe(true);
  });

  it('reads a 3-D array in C order, a 0-d scalar and an empty array', () => {
    const cube = readNpy(fixture('i4-3d-v1.npy'));
    expect(cube.shape).toEqual([2, 3, 4]);
    expect(Array.from(cube.data as Int32Array)).toEqual(Array.from({ length: 24 }, (_, k) => k)); // arange(24)
    const scalar = readNpy(fixture('i8-scalar-v1.npy'));
    expect(scalar.shape).toEqual([]);
    expect(Array.from(scalar.data as BigInt64Array)).toEqual([-5n]);
    const empty = readNpy(fixture('u2-empty-v1.npy'));
    expect(empty.shape).toEqual([0, 3]);
    expect(empty.data.length).toBe(0);
    for (const [name, a] of [['i4-3d-v1.npy', cube], ['i8-scalar-v1.npy', scalar], ['u2-empty-v1.npy', empty]] as const) {
      expect(Buffer.from(writeNpy(a.shape, a.data)).equals(Buffer.from(fixture(name)))).toBe(true);
    }
  });

  it('refuses Fortran order, structured and non-integer dtypes with a clear message', () => {
    expect(() => readNpy(fixture('i4-fortran.npy'))).toThrow(/Fortran-order arrays are not supported/);
    expect(() => readNpy(fixture('structured.npy'))).toThrow(/structured \(record\) dtypes are not supported/);
    expect(() => readNpy(fixture('bool.npy'))).toThrow(/'\|b1' is not an integer type/);
    expect(() => readNpy(fixture('f8-le-v1.npy'))).toThrow(/'<f8' is not an integer type/);
  });
});

describe('our writer follows the format specification', () => {
  // numpy.lib.format documentation: magic "\x93NUMPY", major/minor version bytes, a little-endian
  // header length (uint16 in 1.0, uint32 in 2.0), an ASCII dict literal padded with spaces and
  // terminated by '\n' so that the whole preamble + header is divisible by 64.
  const dtypes: NpyDtype[] = [...INTEGER_DTYPES, ...FLOAT_DTYPES];
  const cases = dtypes.flatMap((dtype) => (['1.0', '2.0'] as const).flatMap((version) => (['little', 'big'] as const).map((endian) => ({ dtype, version, endian }))));

  it.each(cases)('$dtype, version $version, $endian-endian', ({ dtype, version, endian }) => {
    const shape = [3, 2, 5];
    const values = Array.from({ length: 30 }, (_, k) => (dtype.startsWith('f') ? k / 4 - 3 : dtype.startsWith('u') ? k * 3 : k - 15));
    const data = typed(dtype, values);
    const bytes = writeNpy(shape, data, { version, endian });
    expect(Array.from(bytes.subarray(0, 6))).toEqual([0x93, 0x4e, 0x55, 0x4d, 0x50, 0x59]);
    const p = preamble(bytes);
    expect(`${p.major}.${p.minor}`).toBe(version);
    expect(p.dataStart % 64).toBe(0);
    expect(p.header.endsWith('\n')).toBe(true);
    expect(/^[\x20-\x7e]*\n$/.test(p.header)).toBe(true);
    const size = dtype === 'i1' || dtype === 'u1' ? '|' : endian === 'little' ? '<' : '>';
    expect(p.header.startsWith(`{'descr': '${size}${dtype}', 'fortran_order': False, 'shape': (3, 2, 5), }`)).toBe(true);
    expect(bytes.length - p.dataStart).toBe(30 * data.BYTES_PER_ELEMENT);
    // first element decoded by hand from the raw data bytes in the stated byte order
    const view = new DataView(bytes.buffer, bytes.byteOffset + p.dataStart);
    const little = endian === 'little';
    const first = {
      i1: () => view.getInt8(0), u1: () => view.getUint8(0), i2: () => view.getInt16(0, little), u2: () => view.getUint16(0, little),
      i4: () => view.getInt32(0, little), u4: () => view.getUint32(0, little), i8: () => view.getBigInt64(0, little),
      u8: () => view.getBigUint64(0, little), f4: () => view.getFloat32(0, little), f8: () => view.getFloat64(0, little),
    }[dtype]();
    expect(first).toEqual(data[0]);
    const back = readNpy(bytes, { allowFloat: true });
    expect(back.shape).toEqual(shape);
    expect(back.endian).toBe(data.BYTES_PER_ELEMENT === 1 ? 'little' : endian);
    expect(Array.from(back.data as ArrayLike<unknown>)).toEqual(Array.from(data as ArrayLike<unknown>));
  });

  it('round-trips arbitrary int32 and int64 arrays of any shape (property test)', () => {
    fc.assert(
      fc.property(
        fc.array(fc.integer({ min: 0, max: 4 }), { minLength: 0, maxLength: 3 }),
        fc.constantFrom('1.0', '2.0'),
        fc.constantFrom('little', 'big'),
        fc.integer(),
        (shape, version, endian, seed) => {
          const count = shape.reduce((a, b) => a * b, 1);
          const i32 = Int32Array.from({ length: count }, (_, k) => (seed * 2654435761 + k * 40503) | 0);
          const i64 = BigInt64Array.from(i32, (v) => BigInt(v) * 4294967296n + BigInt(v >>> 0));
          for (const data of [i32, i64]) {
            const back = readNpy(writeNpy(shape, data, { version, endian }));
            expect(back.shape).toEqual(shape);
            expect(Array.from(back.data as ArrayLike<unknown>)).toEqual(Array.from(data as ArrayLike<unknown>));
          }
        },
      ),
      { numRuns: 200 },
    );
  });

  it('reads headers NumPy 1.x wrote with 16-byte alignment and Python 2 long literals', () => {
    // The original 1.0 format aligned to 16 bytes and Python 2 wrote shapes like (3L,) — common practice in old files.
    const header = "{'descr': '<u2', 'fortran_order': False, 'shape': (3L,), }";
    const padded = header + ' '.repeat(16 - ((10 + header.length + 1) % 16)) + '\n';
    const bytes = new Uint8Array(10 + padded.length + 6);
    bytes.set([0x93, 0x4e, 0x55, 0x4d, 0x50, 0x59, 1, 0, padded.length, 0]);
    bytes.set(Buffer.from(padded, 'latin1'), 10);
    bytes.set([1, 0, 2, 0, 0, 1], 10 + padded.length);
    const array = readNpy(bytes);
    expect(array.shape).toEqual([3]);
    expect(Array.from(array.data as Uint16Array)).toEqual([1, 2, 256]);
  });
});

describe('corrupt input is refused with a one-line message', () => {
  const good = writeNpy([2, 2], new Int32Array([1, 2, 3, 4]));
  const cases: [string, Uint8Array, RegExp][] = [
    ['no magic', Buffer.from('P5\n2 2\n255\n'), /not a \.npy file/],
    ['empty file', new Uint8Array(0), /not a \.npy file/],
    ['version 9.0', Uint8Array.from([...good.subarray(0, 6), 9, 0, ...good.subarray(8)]), /unsupported \.npy format version 9\.0/],
    ['truncated data', good.subarray(0, good.length - 3), /truncated \.npy data: shape \(2, 2\) needs 16 bytes, found 13/],
    ['truncated header', good.subarray(0, 40), /truncated \.npy header/],
    ['trailing bytes', Uint8Array.from([...good, 0, 0]), /2 unexpected bytes after the array data/],
    ['garbled header', Uint8Array.from(good).fill(0x3f, 12, 20), /malformed header/],
  ];
  it.each(cases)('%s', (_label, bytes, message) => {
    let thrown: unknown;
    try {
      readNpy(bytes);
    } catch (error) {
      thrown = error;
    }
    expect((thrown as Error).name).toBe('NpyFormatError');
    expect((thrown as Error).message).toMatch(message);
    expect((thrown as Error).message).not.toContain('\n');
  });
});

// Optional cross-check with NumPy itself when python3 + numpy happen to be installed (never required).
const hasNumpy = spawnSync('python3', ['-c', 'import numpy'], { stdio: 'ignore' }).status === 0;

describe.skipIf(!hasNumpy)('numpy.load agrees with our writer (live, optional)', () => {
  it('loads every dtype we write with the same values', () => {
    const dir = mkdtempSync(join(tmpdir(), 'tw-npy-'));
    try {
      const written: string[] = [];
      for (const dtype of [...INTEGER_DTYPES, 'f8'] as NpyDtype[]) {
        for (const endian of ['little', 'big'] as const) {
          const path = join(dir, `${dtype}-${endian}.npy`);
          written.push(path);
          writeFileSync(path, writeNpy([2, 2], typed(dtype, [0, 1, 2, 100]), { endian, version: endian === 'big' ? '2.0' : '1.0' }));
        }
      }
      const out = execFileSync('python3', ['-c', 'import sys, numpy as np\nfor p in sys.argv[1:]: a = np.load(p); print(a.dtype.str, a.shape, a.ravel().tolist())', ...written], { encoding: 'utf8' });
      for (const line of out.trim().split('\n')) expect(line).toMatch(/\(2, 2\) \[0(\.0)?, 1(\.0)?, 2(\.0)?, 100(\.0)?\]$/);
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });
});
