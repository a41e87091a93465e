import { readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, test } from 'vitest';
import { createCellReader, parseNpyLayout, type ByteFetcher } from './npyRange.js';

/**
 * The header NumPy writes for np.arange(12, dtype='<i4').reshape(3, 4), byte for byte as the
 * NumPy format description (numpy.lib.format, "Format Version 1.0") lays it out: magic "\x93NUMPY",
 * version 1.0, a little-endian uint16 header length, then the dict repr padded with spaces and a
 * newline so the data starts at a multiple of 64 bytes.
 */
function numpyStyleFile(descr: string, shape: number[], data: Uint8Array): Uint8Array {
  const dict = `{'descr': '${descr}', 'fortran_order': False, 'shape': (${shape.join(', ')}${shape.length === 1 ? ',' : ''}), }`;
  const unpadded = 10 + dict.length + 1;
  const total = Math.ceil(unpadded / 64) * 64;
  const header = dict + ' '.repeat(total - unpadded) + '\n';
  const out = new Uint8Array(total + data.length);
  out.set([0x93, 0x4e, 0x55, 0x4d, 0x50, 0x59, 1, 0, header.length & 255, header.length >> 8]);
  out.set(new TextEncoder().encode(header), 10);
  out.set(data, total);
  return out;
}

const int32s = (xs: number[]) => new Uint8Array(new Int32Array(xs).buffer);

/** A fake HTTP server over a byte array: honours ranges, or ignores them like a server without Range support. */
function server(file: Uint8Array, ranges: boolean): { fetch: ByteFetcher; requests: [number, number][] } {
  const requests: [number, number][] = [];
  return {
    requests,
    fetch: async (start, end) => {
      requests.push([start, end]);
      return ranges ? { bytes: file.slice(start, Math.min(end, file.length)), partial: true } : { bytes: file.slice(), partial: false };
    },
  };
}

describe('.npy layout from the header', () => {
  test('a version 1.0 header of a 3×4 int32 array: data at byte 128, four bytes per cell', () => {
    const file = numpyStyleFile('<i4', [3, 4], int32s([...Array(12).keys()]));
    // NumPy pads version-1.0 headers so the data starts at a multiple of 64 (numpy.lib.format docs)
    expect(file.length - 48).toBe(128);
    expect(parseNpyLayout(file)).toEqual({ dtype: 'i4', endian: 'little', shape: [3, 4], itemsize: 4, dataOffset: 128, cells: 12 });
  });

  test('a prefix shorter than the header asks for the bytes it needs', () => {
    const file = numpyStyleFile('<i8', [2, 2], new Uint8Array(32));
    expect(parseNpyLayout(file.subarray(0, 20))).toEqual({ needBytes: 128 });
  });

  test('a file that is not .npy is refused with a one-line reason', () => {
    expect(() => parseNpyLayout(new TextEncoder().encode('PK\u0003\u0004 not a numpy file'))).toThrow(/magic string/);
  });
});

/** Files written by NumPy 2.4.6's own writer (tests/npy/fixtures/README.md): [[min, 0, 1], [2, max, 7]] per dtype. */
const fixture = (name: string) => new Uint8Array(readFileSync(path.join(import.meta.dirname, '..', '..', '..', 'tests', 'npy', 'fixtures', name)));

describe('files written by NumPy itself', () => {
  const cases: [string, (number | bigint)[]][] = [
    ['i4-le-v1.npy', [-(2 ** 31), 0, 1, 2, 2 ** 31 - 1, 7]],
    ['i4-be-v2.npy', [-(2 ** 31), 0, 1, 2, 2 ** 31 - 1, 7]],
    ['u1-na-v1.npy', [0, 0, 1, 2, 255, 7]],
    ['i8-le-v1.npy', [-(2n ** 63n), 0n, 1n, 2n, 2n ** 63n - 1n, 7n]],
  ];
  for (const [name, expected] of cases) {
    test(`${name}: each cell read by byte range equals NumPy's value`, async () => {
      const reader = createCellReader(server(fixture(name), true).fetch, 2);
      expect((await reader.layout()).shape).toEqual([2, 3]);
      for (let i = 0; i < 6; i++) expect(await reader.cell(i)).toBe(expected[i]);
    });
  }

  test('a 3-D int32 arange(24): cell (z, y, x) is at offset + ((z·H + y)·W + x)·4', async () => {
    const file = fixture('i4-3d-v1.npy');
    const reader = createCellReader(server(file, true).fetch);
    const l = await reader.layout();
    const [, h, w] = l.shape as [number, number, number];
    expect(await reader.cell((1 * h + 2) * w + 3)).toBe((1 * h + 2) * w + 3);
  });

  test('Fortran order is refused', () => {
    expect(() => parseNpyLayout(fixture('i4-fortran.npy'))).toThrow(/Fortran/);
  });
});

describe('reading single cells', () => {
  const values = [...Array(30).keys()].map((i) => i * i - 7);
  const file = numpyStyleFile('<i4', [5, 6], int32s(values));

  test('cell (row 3, column 2) of a 5×6 array is data[3·6 + 2], fetched by byte ranges of a small block', async () => {
    const s = server(file, true);
    const reader = createCellReader(s.fetch, 8);
    expect(await reader.cell(3 * 6 + 2)).toBe(values[20]);
    // header, then one block of 8 cells (32 bytes) starting at data offset + 16·4
    expect(s.requests.at(-1)).toEqual([128 + 16 * 4, 128 + 24 * 4]);
    const before = s.requests.length;
    expect(await reader.cell(23)).toBe(values[23]);
    expect(s.requests.length).toBe(before);
  });

  test('every cell reads back the same when the server ignores Range and sends the whole file', async () => {
    const s = server(file, false);
    const reader = createCellReader(s.fetch, 8);
    for (let i = 0; i < values.length; i++) expect(await reader.cell(i)).toBe(values[i]);
    expect(s.requests.length).toBe(1);
  });

  test('int64 odometers stay exact beyond 2^53', async () => {
    const big = new BigInt64Array([2n ** 53n + 1n, 5n]);
    const s = server(numpyStyleFile('<i8', [2], new Uint8Array(big.buffer)), true);
    expect(await createCellReader(s.fetch).cell(0)).toBe(2n ** 53n + 1n);
  });

  test('an index outside the array is a RangeError, not a wrong cell', async () => {
    const reader = createCellReader(server(file, true).fetch);
    await expect(reader.cell(30)).rejects.toThrow(RangeError);
  });
});
