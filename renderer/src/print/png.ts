import { once } from 'node:events';
import { Readable, type Writable } from 'node:stream';
import { pipeline } from 'node:stream/promises';
import { constants, crc32, createDeflate } from 'node:zlib';
import type { Rgba } from '../../../shared/palettes.js';

/**
 * A streaming PNG writer (PNG spec, W3C Recommendation / ISO/IEC 15948: signature, IHDR, pHYs,
 * PLTE, IDAT, IEND; every chunk's CRC-32 over type and data). Rows go through one zlib deflate
 * stream and leave as IDAT chunks as soon as they are compressed, so only a strip of rows and
 * zlib's window are ever in memory, for pages of any size.
 */

const SIGNATURE = Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]);

export interface PngImage {
  width: number;
  height: number;
  /** resolution recorded in pHYs */
  dpi: number;
  /** indexed (colour type 3) with this PLTE, at most 256 entries; omitted: RGB (colour type 2) */
  palette?: readonly Rgba[];
}

export interface PngRows {
  rows: number;
  /** rows × width bytes (indexed) or rows × width × 3 (RGB) */
  data: Uint8Array;
}

export function pngChunk(type: string, data: Uint8Array = new Uint8Array(0)): Buffer {
  const out = Buffer.alloc(12 + data.length);
  out.writeUInt32BE(data.length, 0);
  out.write(type, 4, 'latin1');
  out.set(data, 8);
  out.writeUInt32BE(crc32(out.subarray(4, 8 + data.length)), 8 + data.length);
  return out;
}

/** pHYs stores pixels per metre (unit specifier 1); 600 DPI → 23,622 px/m. */
export function pixelsPerMetre(dpi: number): number {
  return Math.round(dpi / 0.0254);
}

export function pngHead(img: PngImage): Buffer {
  if (!Number.isInteger(img.width) || !Number.isInteger(img.height) || img.width < 1 || img.height < 1 || img.width > 2 ** 31 - 1 || img.height > 2 ** 31 - 1) {
    throw new RangeError(`PNG size must be positive whole pixels, received ${img.width} × ${img.height}`);
  }
  if (img.palette && (img.palette.length < 1 || img.palette.length > 256)) throw new RangeError(`a PNG palette holds 1 to 256 colours, received ${img.palette.length}`);
  const ihdr = Buffer.alloc(13);
  ihdr.writeUInt32BE(img.width, 0);
  ihdr.writeUInt32BE(img.height, 4);
  ihdr[8] = 8; // bit depth
  ihdr[9] = img.palette ? 3 : 2; // colour type: indexed or truecolour
  // compression 0, filter method 0, interlace 0 (none)
  const phys = Buffer.alloc(9);
  const ppm = pixelsPerMetre(img.dpi);
  phys.writeUInt32BE(ppm, 0);
  phys.writeUInt32BE(ppm, 4);
  phys[8] = 1;
  const parts = [SIGNATURE, pngChunk('IHDR', ihdr), pngChunk('pHYs', phys)];
  if (img.palette) {
    const plte = Buffer.alloc(img.palette.length * 3);
    img.palette.forEach((c, i) => plte.set([c[0], c[1], c[2]], i * 3));
    parts.push(pngChunk('PLTE', plte));
  }
  return Buffer.concat(parts);
}

/**
 * Row filters (PNG spec §9): indexed rows use type 0 (None), as the spec recommends for palette
 * images, except that a row equal to the one above uses type 2 (Up) and becomes all zeros; RGB rows
 * always use Up. Either way the repeated rows of magnified cells cost almost nothing, even when a row
 * is longer than deflate's 32 KiB window.
 */
function filterRows(rows: PngRows, rowBytes: number, indexed: boolean, prev: Uint8Array, out: Uint8Array): Uint8Array {
  const { data } = rows;
  for (let r = 0; r < rows.rows; r++) {
    const o = r * (rowBytes + 1);
    const s = r * rowBytes;
    const row = data.subarray(s, s + rowBytes);
    if (indexed && !sameBytes(row, prev)) {
      out[o] = 0;
      out.set(row, o + 1);
    } else if (indexed) {
      out[o] = 2;
      out.fill(0, o + 1, o + 1 + rowBytes);
    } else {
      out[o] = 2;
      for (let i = 0; i < rowBytes; i++) out[o + 1 + i] = (row[i] - prev[i]) & 255;
    }
    prev.set(row);
  }
  return out.subarray(0, rows.rows * (rowBytes + 1));
}

function sameBytes(a: Uint8Array, b: Uint8Array): boolean {
  return Buffer.from(a.buffer, a.byteOffset, a.byteLength).equals(Buffer.from(b.buffer, b.byteOffset, b.byteLength));
}

/**
 * zlib level 2 by default: on this kind of picture (few colours, little long-range repetition beyond
 * whole rows) level 6 was about 12 times slower for 5% smaller files (measured on the bench's
 * A4 page at 600 DPI; tests/bench/print.ts).
 */
export const DEFAULT_PNG_LEVEL = 2;

/** The PNG as a byte stream: head, IDAT chunks while rows are compressed, IEND. */
export async function* pngBytes(img: PngImage, strips: Iterable<PngRows> | AsyncIterable<PngRows>, level = DEFAULT_PNG_LEVEL): AsyncGenerator<Buffer> {
  yield pngHead(img);
  const indexed = img.palette !== undefined;
  const rowBytes = img.width * (indexed ? 1 : 3);
  const deflate = createDeflate({ level, chunkSize: 1 << 17, strategy: constants.Z_DEFAULT_STRATEGY });
  let rowsSeen = 0;
  const feeding = (async () => {
    const prev = new Uint8Array(rowBytes);
    let scratch = new Uint8Array(0);
    for await (const s of strips) {
      if (s.data.length !== s.rows * rowBytes) throw new RangeError(`a strip of ${s.rows} rows needs ${s.rows * rowBytes} bytes, received ${s.data.length}`);
      rowsSeen += s.rows;
      if (rowsSeen > img.height) throw new RangeError(`more rows than the image height ${img.height}`);
      const need = s.rows * (rowBytes + 1);
      if (scratch.length < need) scratch = new Uint8Array(need);
      // deflate may keep the buffer until it is consumed, so each write gets its own copy
      if (!deflate.write(Buffer.from(filterRows(s, rowBytes, indexed, prev, scratch)))) await once(deflate, 'drain');
    }
    if (rowsSeen !== img.height) throw new RangeError(`the image has ${img.height} rows but ${rowsSeen} were given`);
    deflate.end();
  })().catch((err) => deflate.destroy(err));
  for await (const chunk of deflate) yield pngChunk('IDAT', chunk as Buffer);
  await feeding;
  yield pngChunk('IEND');
}

/** Write a PNG to a stream (ended when done). */
export async function writePng(out: Writable, img: PngImage, strips: Iterable<PngRows> | AsyncIterable<PngRows>, level = DEFAULT_PNG_LEVEL): Promise<void> {
  await pipeline(Readable.from(pngBytes(img, strips, level)), out);
}
