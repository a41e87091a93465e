import sharp, { type Metadata } from 'sharp';
import { CliInputError } from './errors.js';
import type { UploadedArray } from './upload-array.js';

/**
 * Largest PNG background we decode: 8192 × 8192 pixels (256 MiB as int32 heights). Set on purpose
 * below sharp's default (16383²) so an upload cannot make the CLI allocate gigabytes.
 */
export const PNG_PIXEL_LIMIT = 8192 * 8192;

sharp.cache(false); // one-shot decode; nothing to reuse

/**
 * Decode an 8-bit grayscale PNG into heights. The distinct grey levels present, sorted ascending,
 * become heights 0, 1, 2, … (so a two-level mask gives 0/1 whatever greys were used).
 * Rows are y, columns x: the array has shape (H, W), the PNG's own layout.
 */
export async function heightsFromPng(bytes: Uint8Array, label: string): Promise<UploadedArray & { levels: number[] }> {
  const image = sharp(bytes, { limitInputPixels: PNG_PIXEL_LIMIT, failOn: 'error' });
  let meta: Metadata;
  try {
    meta = await image.metadata();
  } catch (error) {
    throw new CliInputError(`${label}: cannot decode PNG (${oneLine(error)})`);
  }
  if (meta.format !== 'png') throw new CliInputError(`${label}: not a PNG file (detected ${meta.format ?? 'unknown format'})`);
  const width = meta.width ?? 0;
  const height = meta.height ?? 0;
  if (width * height > PNG_PIXEL_LIMIT) {
    throw new CliInputError(`${label}: ${width}×${height} pixels exceeds the limit of ${PNG_PIXEL_LIMIT} pixels`);
  }
  const describe = `${meta.channels}-channel ${meta.depth ?? ''}${meta.isPalette ? ' palette' : ''} image (space ${meta.space})`;
  if (meta.isPalette || meta.channels !== 1 || meta.depth !== 'uchar' || (meta.bitsPerSample ?? 8) !== 8) {
    throw new CliInputError(`${label}: PNG backgrounds must be 8-bit grayscale without alpha, got a ${describe}`);
  }
  let raw: Buffer;
  try {
    // extractChannel keeps the stored grey values; a plain raw() would expand grey to sRGB triples
    raw = await image.extractChannel(0).raw().toBuffer();
  } catch (error) {
    throw new CliInputError(`${label}: cannot decode PNG (${oneLine(error)})`);
  }
  if (raw.length !== width * height) throw new CliInputError(`${label}: unexpected decoded size; save as 8-bit grayscale`);
  const present = new Uint8Array(256);
  for (let k = 0; k < raw.length; k++) present[raw[k]!] = 1;
  const levels: number[] = [];
  const rank = new Int32Array(256);
  for (let g = 0; g < 256; g++) if (present[g]) rank[g] = levels.push(g) - 1;
  const data = new Int32Array(raw.length);
  for (let k = 0; k < raw.length; k++) data[k] = rank[raw[k]!]!;
  return { shape: [height, width], data, levels };
}

function oneLine(error: unknown): string {
  return String((error as Error).message ?? error).split('\n')[0]!;
}
