import sharp from 'sharp';
import type { Rgba } from '../../../shared/palettes.js';

/**
 * The one place the renderer talks to sharp. Tiles are small and every one is new, so libvips's
 * operation cache would only hold memory; parallelism comes from encoding several tiles at once on
 * libuv's pool rather than from splitting one 256-pixel tile across threads.
 */
sharp.cache(false);
sharp.concurrency(1);

/**
 * libimagequant keeps colours exact only at its slow settings: effort 1 posterises (1-unit channel
 * errors, seen on this stack), effort 10 reproduced every one of 255 distinct colours. The tests decode
 * tiles and compare them with the arrays, so a change here that loses exactness fails them.
 */
const PNG_OPTIONS = { palette: true, colours: 256, dither: 0, effort: 10, compressionLevel: 6, adaptiveFiltering: false } as const;

/** Palette table packed as little-endian RGBA words, one per index (256 entries, unused ones black). */
export function packColourTable(table: readonly Rgba[]): Uint32Array {
  const lut = new Uint32Array(256);
  table.forEach((c, i) => (lut[i] = (c[0] | (c[1] << 8) | (c[2] << 16) | (c[3] << 24)) >>> 0));
  return lut;
}

/** RGBA bytes of an index image; little-endian words give R, G, B, A byte order. */
export function indicesToRgba(indices: Uint8Array, lut: Uint32Array): Buffer {
  const px = new Uint32Array(indices.length);
  for (let i = 0; i < indices.length; i++) px[i] = lut[indices[i]];
  return Buffer.from(px.buffer, px.byteOffset, px.byteLength);
}

/** Encode an index image as a palette (colour-type 3) PNG. */
export function encodeIndexedPng(indices: Uint8Array, width: number, height: number, lut: Uint32Array): Promise<Buffer> {
  const rgba = indicesToRgba(indices.subarray(0, width * height), lut);
  return sharp(rgba, { raw: { width, height, channels: 4 }, limitInputPixels: false }).png(PNG_OPTIONS).toBuffer();
}

/** Decode any PNG to RGBA bytes (for tests, previews and checks). */
export async function decodePngRgba(png: Buffer): Promise<{ data: Buffer; width: number; height: number }> {
  const { data, info } = await sharp(png).ensureAlpha().raw().toBuffer({ resolveWithObject: true });
  return { data, width: info.width, height: info.height };
}
