import { parseDescr, itemSize, type Endian, type NpyDtype } from '../../../renderer/src/npy/dtype.js';
import { parsePyLiteral } from '../../../renderer/src/npy/header.js';
import { NpyFormatError } from '../../../renderer/src/npy/errors.js';

/**
 * Reading single cells of a large .npy array over HTTP without downloading it: the header gives dtype,
 * shape and where the data starts, and cell i of a C-order array sits at `dataOffset + i·itemsize`.
 * The header parser and dtype rules are the renderer's own (pure, no Node APIs), so the browser and the
 * worker read the format the same way.
 */

export interface NpyLayout {
  dtype: NpyDtype;
  endian: Endian;
  shape: number[];
  itemsize: number;
  /** byte offset of the first cell */
  dataOffset: number;
  cells: number;
}

/** Bytes needed to know the header length: magic (6), version (2), length (2 or 4). */
export const NPY_PREAMBLE = 12;

/**
 * Parse the header at the start of a .npy file. `prefix` must hold at least the whole header;
 * returns the number of bytes still needed when it does not.
 * @throws NpyFormatError for anything that is not a plain C-order array
 */
export function parseNpyLayout(prefix: Uint8Array): NpyLayout | { needBytes: number } {
  const magic = [0x93, 0x4e, 0x55, 0x4d, 0x50, 0x59];
  if (prefix.length < 10) return { needBytes: NPY_PREAMBLE };
  if (!magic.every((b, k) => prefix[k] === b)) throw new NpyFormatError('not a .npy file (the magic string \\x93NUMPY is missing)');
  const major = prefix[6]!;
  if (major < 1 || major > 3 || prefix[7] !== 0) throw new NpyFormatError(`unsupported .npy format version ${major}.${prefix[7]}`);
  const view = new DataView(prefix.buffer, prefix.byteOffset, prefix.byteLength);
  const lengthBytes = major === 1 ? 2 : 4;
  if (prefix.length < 8 + lengthBytes) return { needBytes: 8 + lengthBytes };
  const headerLength = major === 1 ? view.getUint16(8, true) : view.getUint32(8, true);
  const dataOffset = 8 + lengthBytes + headerLength;
  if (prefix.length < dataOffset) return { needBytes: dataOffset };
  const text = new TextDecoder(major === 3 ? 'utf-8' : 'latin1').decode(prefix.subarray(8 + lengthBytes, dataOffset));
  const header = parsePyLiteral(text.trimEnd());
  if (header === null || typeof header !== 'object' || Array.isArray(header)) throw new NpyFormatError('malformed header: not a dict');
  if (header.fortran_order !== false) throw new NpyFormatError('Fortran-order arrays are not supported');
  const shape = header.shape;
  if (!Array.isArray(shape) || !shape.every((d) => typeof d === 'number' && Number.isSafeInteger(d) && d >= 0)) {
    throw new NpyFormatError('malformed header: shape is not a tuple of non-negative integers');
  }
  const { dtype, endian } = parseDescr(header.descr, true);
  const dims = shape as number[];
  return { dtype, endian, shape: dims, itemsize: itemSize(dtype), dataOffset, cells: dims.reduce((a, b) => a * b, 1) };
}

/** One cell's value from its bytes; 64-bit integers stay exact as bigint. */
export function decodeCell(bytes: Uint8Array, at: number, layout: Pick<NpyLayout, 'dtype' | 'endian'>): number | bigint {
  const v = new DataView(bytes.buffer, bytes.byteOffset + at);
  const le = layout.endian === 'little';
  switch (layout.dtype) {
    case 'i1':
      return v.getInt8(0);
    case 'u1':
      return v.getUint8(0);
    case 'i2':
      return v.getInt16(0, le);
    case 'u2':
      return v.getUint16(0, le);
    case 'i4':
      return v.getInt32(0, le);
    case 'u4':
      return v.getUint32(0, le);
    case 'i8':
      return v.getBigInt64(0, le);
    case 'u8':
      return v.getBigUint64(0, le);
    case 'f4':
      return v.getFloat32(0, le);
    case 'f8':
      return v.getFloat64(0, le);
  }
}

/** Fetches bytes [start, end) of a file; answers the bytes and whether the server honoured the range. */
export type ByteFetcher = (start: number, end: number) => Promise<{ bytes: Uint8Array; partial: boolean }>;

/** `fetch` with a Range header; a server that ignores Range answers 200 with the whole file, which also works. */
export function httpByteFetcher(url: string): ByteFetcher {
  return async (start, end) => {
    const res = await fetch(url, { headers: { Range: `bytes=${start}-${end - 1}` }, credentials: 'same-origin' });
    if (!res.ok) throw new Error(`${url.split('/').pop()}: the server answered ${res.status}`);
    return { bytes: new Uint8Array(await res.arrayBuffer()), partial: res.status === 206 };
  };
}

export interface CellReader {
  layout(): Promise<NpyLayout>;
  /** the value of cell `index` (C order) */
  cell(index: number): Promise<number | bigint>;
}

/** Cells per fetched block: 4096 cells of int64 is 32 KiB, a few rows of a large pile. */
export const BLOCK_CELLS = 4096;
const MAX_BLOCKS = 256;

/**
 * Cell reader with a small block cache (least recently used blocks are dropped beyond 256). If the
 * server sends the whole file instead of a range, the whole file is kept and every later read is local.
 */
export function createCellReader(fetchBytes: ByteFetcher, blockCells = BLOCK_CELLS): CellReader {
  let whole: Uint8Array | null = null;
  let layoutP: Promise<NpyLayout> | null = null;
  const blocks = new Map<number, Promise<Uint8Array>>();

  const layout = () =>
    (layoutP ??= (async () => {
      let size = 256;
      for (;;) {
        const { bytes, partial } = await fetchBytes(0, size);
        if (!partial) whole = bytes;
        const r = parseNpyLayout(bytes);
        if (!('needBytes' in r)) return r;
        if (!partial || r.needBytes <= bytes.length) throw new NpyFormatError('truncated .npy header');
        size = r.needBytes;
      }
    })().catch((e) => {
      layoutP = null;
      throw e;
    }));

  async function block(b: number, l: NpyLayout): Promise<Uint8Array> {
    const hit = blocks.get(b);
    if (hit) {
      blocks.delete(b);
      blocks.set(b, hit);
      return hit;
    }
    const start = l.dataOffset + b * blockCells * l.itemsize;
    const end = Math.min(l.dataOffset + l.cells * l.itemsize, start + blockCells * l.itemsize);
    const p = fetchBytes(start, end).then(({ bytes, partial }) => {
      if (partial) return bytes;
      whole = bytes;
      return bytes.subarray(start, end);
    });
    p.catch(() => blocks.delete(b));
    blocks.set(b, p);
    if (blocks.size > MAX_BLOCKS) blocks.delete(blocks.keys().next().value!);
    return p;
  }

  return {
    layout,
    async cell(index) {
      const l = await layout();
      if (!Number.isInteger(index) || index < 0 || index >= l.cells) throw new RangeError(`cell ${index} is outside the array of ${l.cells} cells`);
      if (whole) return decodeCell(whole, l.dataOffset + index * l.itemsize, l);
      const b = Math.floor(index / blockCells);
      const bytes = whole ?? (await block(b, l));
      if (whole) return decodeCell(whole, l.dataOffset + index * l.itemsize, l);
      return decodeCell(bytes, (index - b * blockCells) * l.itemsize, l);
    },
  };
}
