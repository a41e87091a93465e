import { createHash } from 'node:crypto';
import { readNpy, NpyFormatError, type NpyArray } from '../npy/index.js';
import { CliInputError } from './errors.js';

/** An uploaded background as the engine takes it: integer heights in C order. */
export interface UploadedArray {
  shape: number[];
  data: Int32Array;
}

const MAX_HEIGHT = 2 ** 31 - 1;

/** Read .npy bytes as heights: any integer dtype, each value within 0 .. 2^31 − 1. */
export function heightsFromNpy(bytes: Uint8Array, label: string): UploadedArray {
  let array: NpyArray;
  try {
    array = readNpy(bytes);
  } catch (error) {
    if (error instanceof NpyFormatError) throw new CliInputError(`${label}: ${error.message}`);
    throw error;
  }
  if (array.shape.length < 1 || array.shape.length > 3) {
    throw new CliInputError(`${label}: expected a 1-, 2- or 3-dimensional array, got shape (${array.shape.join(', ')})`);
  }
  if (array.data.length === 0) throw new CliInputError(`${label}: the array is empty`);
  const out = new Int32Array(array.data.length);
  const src = array.data;
  for (let k = 0; k < src.length; k++) {
    const v = Number(src[k]!);
    if (!(v >= 0 && v <= MAX_HEIGHT)) {
      throw new CliInputError(`${label}: heights must lie in 0 .. 2^31−1, found ${String(src[k])} at flat index ${k}`);
    }
    out[k] = v;
  }
  return { shape: array.shape, data: out };
}

/**
 * The content hash recorded in the run specification for an uploaded background: sha256 of the
 * heights as int32 little-endian in C order, so the same array hashes alike from .npy or .png.
 */
export function uploadHash(upload: UploadedArray): string {
  const bytes = new Uint8Array(upload.data.buffer, upload.data.byteOffset, upload.data.byteLength);
  return createHash('sha256').update(bytes).digest('hex');
}
