import { eq } from 'drizzle-orm';
import { backgroundUploads } from '../../../drizzle/schema.js';
import { NPY_MAGIC, readNpy, writeNpy } from '../../../renderer/src/npy/index.js';
import { heightsFromPng } from '../../../renderer/src/cli/png-background.js';
import { heightsFromNpy, uploadHash, type UploadedArray } from '../../../renderer/src/cli/upload-array.js';
import { uploadKey } from '../../../renderer/src/farm/artifacts.js';
import { UPLOAD_COUNTED_HEIGHTS, UPLOAD_MAX_CELLS, UPLOAD_MAX_SIDE, type BackgroundUpload } from '../../../shared/api/uploads.js';
import { latticeShape } from '../../../shared/estimate.js';
import type { Background, LatticeChoice } from '../../../shared/run-spec.js';

/** The lattice's dimension, or null for a preset we do not know here (the engine names those itself). */
function dimensionOf(lattice: LatticeChoice): number | null {
  try {
    return latticeShape(lattice).dimension;
  } catch {
    return null;
  }
}
import type { Db } from '../db/client.js';
import { badRequest, HttpError } from '../http/http-error.js';
import type { BlobStore } from '../storage/blob-store.js';

/**
 * Uploaded backgrounds: recognised by their bytes (the .npy magic or the PNG signature, never the
 * name or the declared type), decoded with the same helpers as the CLI, stored as int32 .npy at
 * uploads/<sha256>.npy (renderer/src/farm/artifacts.ts), and recorded in `background_uploads`.
 */

const PNG_SIGNATURE = Uint8Array.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]);
const startsWith = (bytes: Uint8Array, sig: Uint8Array) => bytes.length >= sig.length && sig.every((b, k) => bytes[k] === b);
const LABEL = 'uploaded background';

export type UploadKind = 'npy' | 'png';

export function sniffUpload(bytes: Uint8Array): UploadKind | null {
  if (startsWith(bytes, NPY_MAGIC)) return 'npy';
  if (startsWith(bytes, PNG_SIGNATURE)) return 'png';
  return null;
}

function checkShape(shape: readonly number[]): void {
  const cells = shape.reduce((a, b) => a * b, 1);
  const tooLong = shape.find((n) => n > UPLOAD_MAX_SIDE);
  if (tooLong !== undefined) throw new HttpError(413, `${LABEL}: an axis of ${tooLong} cells exceeds the limit of ${UPLOAD_MAX_SIDE} per axis`);
  if (cells > UPLOAD_MAX_CELLS) throw new HttpError(413, `${LABEL}: ${cells} cells exceed the limit of ${UPLOAD_MAX_CELLS}`);
}

/** The helpers report bad content as CliInputError (a one-line message); here that is the client's 400. */
async function asBadRequest<T>(work: () => T | Promise<T>): Promise<T> {
  try {
    return await work();
  } catch (err) {
    const { name, message } = err as Error;
    if (name === 'CliInputError' || name === 'NpyFormatError') throw badRequest(message.startsWith(LABEL) ? message : `${LABEL}: ${message}`);
    throw err;
  }
}

export interface DecodedBackground extends UploadedArray {
  sha256: string;
  source: string;
  levels?: number[];
  min: number;
  max: number;
  mean: number;
  heightCounts: number[];
  countAbove: number;
}

/** Summary numbers of the heights in one pass: range, mean, and the counts the form draws. */
export function summarize(data: Int32Array): Pick<DecodedBackground, 'min' | 'max' | 'mean' | 'heightCounts' | 'countAbove'> {
  const counts = new Array<number>(UPLOAD_COUNTED_HEIGHTS).fill(0);
  let min = Infinity;
  let max = -Infinity;
  let sum = 0;
  let above = 0;
  for (let k = 0; k < data.length; k++) {
    const v = data[k]!;
    if (v < min) min = v;
    if (v > max) max = v;
    sum += v;
    if (v < UPLOAD_COUNTED_HEIGHTS) counts[v]!++;
    else above++;
  }
  let last = counts.length;
  while (last > 0 && counts[last - 1] === 0) last--;
  return { min, max, mean: sum / data.length, heightCounts: counts.slice(0, last), countAbove: above };
}

/**
 * Decode an upload by its content.
 * @throws HttpError 415 (neither .npy nor PNG), 413 (too many cells), 400 (unreadable or invalid heights)
 */
export async function decodeBackground(bytes: Uint8Array): Promise<DecodedBackground> {
  const kind = sniffUpload(bytes);
  if (!kind) throw new HttpError(415, `${LABEL}: neither a NumPy .npy file nor a PNG image (checked by content, not by name)`);
  let array: UploadedArray & { levels?: number[] };
  let source: string;
  if (kind === 'npy') {
    const header = await asBadRequest(() => readNpy(bytes));
    checkShape(header.shape);
    source = `${header.endian === 'big' ? '>' : header.dtype.endsWith('1') ? '|' : '<'}${header.dtype}`;
    array = await asBadRequest(() => heightsFromNpy(bytes, LABEL));
  } else {
    // width and height sit in the IHDR chunk right after the signature; refuse huge images before decoding
    if (bytes.length >= 24) {
      const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
      checkShape([view.getUint32(20), view.getUint32(16)]);
    }
    source = 'png';
    array = await asBadRequest(() => heightsFromPng(bytes, LABEL));
  }
  checkShape(array.shape);
  return { ...array, source, sha256: uploadHash(array), ...summarize(array.data) };
}

export function uploadView(d: Omit<DecodedBackground, 'data'>, created: boolean): BackgroundUpload {
  return {
    sha256: d.sha256,
    shape: d.shape,
    min: d.min,
    max: d.max,
    mean: d.mean,
    source: d.source,
    ...(d.levels ? { levels: d.levels } : {}),
    preview: { heightCounts: d.heightCounts, countAbove: d.countAbove },
    created,
  };
}

/**
 * Store a decoded upload: the array first, the row last, so a recorded upload always has its bytes.
 * The same heights uploaded again store nothing new.
 */
export async function saveBackground(db: Db, blobs: BlobStore, decoded: DecodedBackground, uploadedById: string): Promise<BackgroundUpload> {
  const [known] = await db.select({ sha256: backgroundUploads.sha256 }).from(backgroundUploads).where(eq(backgroundUploads.sha256, decoded.sha256));
  const key = uploadKey(decoded.sha256);
  if (known && (await blobs.exists(key))) return uploadView(decoded, false);
  await blobs.put(key, Buffer.from(writeNpy(decoded.shape, decoded.data)), 'application/octet-stream');
  const inserted = await db
    .insert(backgroundUploads)
    .values({
      sha256: decoded.sha256,
      shape: decoded.shape,
      minHeight: decoded.min,
      maxHeight: decoded.max,
      meanHeight: decoded.mean,
      source: decoded.source,
      levels: decoded.levels ?? null,
      heightCounts: decoded.heightCounts,
      countAbove: decoded.countAbove,
      uploadedById,
    })
    .onConflictDoNothing()
    .returning({ sha256: backgroundUploads.sha256 });
  return uploadView(decoded, inserted.length > 0);
}

export async function findBackground(db: Db, sha256: string) {
  const [row] = await db.select().from(backgroundUploads).where(eq(backgroundUploads.sha256, sha256));
  return row ?? null;
}

/**
 * A run may use an uploaded background only if it was uploaded and the shape matches exactly.
 * @throws HttpError 400 naming the problem
 */
export async function checkArrayBackground(db: Db, background: Background, lattice?: LatticeChoice): Promise<void> {
  if (background.kind !== 'array') return;
  // the engine needs one axis per lattice dimension (renderer/src/engine/background.ts); say so before queueing
  const dimension = lattice ? dimensionOf(lattice) : null;
  if (dimension !== null && background.shape.length !== dimension) {
    throw badRequest(`spec.background.shape: the lattice is ${dimension}-dimensional but the uploaded background has ${background.shape.length} axes`);
  }
  const row = await findBackground(db, background.sha256);
  if (!row) throw badRequest(`spec.background: no uploaded background has sha256 ${background.sha256}; upload it first (POST /api/uploads/background)`);
  const same = row.shape.length === background.shape.length && row.shape.every((n, k) => n === background.shape[k]);
  if (!same) throw badRequest(`spec.background.shape: the upload has shape (${row.shape.join(', ')}), the spec says (${background.shape.join(', ')})`);
}
