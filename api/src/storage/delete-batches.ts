import type { DeleteObjectsCommandOutput } from '@aws-sdk/client-s3';
import { BlobDeleteError } from './blob-store.js';

/**
 * Deleting many objects with S3 DeleteObjects: at most 1,000 keys per request (the S3 API limit),
 * and the answer is 200 even when some keys were not deleted: those are listed under `Errors`
 * (with Quiet, only those), so a caller that looks only at the status loses them. Each batch is
 * sent again for the keys that failed, and for the whole batch when the request itself failed,
 * a few times with a growing pause; what is still left then is thrown as BlobDeleteError.
 */

/** S3's limit on keys per DeleteObjects request (API reference, DeleteObjects). */
export const DELETE_BATCH_KEYS = 1000;
const ATTEMPTS = 4;
const PAUSE_MS = [200, 800, 2000];

export type NotDeleted = { key: string; code: string; message: string };

/** The keys of a DeleteObjects answer that were not deleted, with the store's code and message. */
export function notDeleted(out: Pick<DeleteObjectsCommandOutput, 'Errors'>): NotDeleted[] {
  return (out.Errors ?? []).map((e) => ({ key: e.Key ?? '(no key)', code: e.Code ?? 'unknown', message: e.Message ?? 'no message' }));
}

/** Split keys into batches of at most `size` (1,000 unless a store needs fewer). */
export function batchesOf<T>(items: T[], size = DELETE_BATCH_KEYS): T[][] {
  if (!(size >= 1 && size <= DELETE_BATCH_KEYS)) throw new RangeError(`a delete batch holds 1 to ${DELETE_BATCH_KEYS} keys, not ${size}`);
  const out: T[][] = [];
  for (let i = 0; i < items.length; i += size) out.push(items.slice(i, i + size));
  return out;
}

const pause = (ms: number) => new Promise((r) => setTimeout(r, ms));

/**
 * Delete `keys` (at most one batch) with `send`, retrying failed keys; throws BlobDeleteError with
 * what is left, or the request's own error when the store never answered.
 */
export async function deleteBatch(send: (keys: string[]) => Promise<Pick<DeleteObjectsCommandOutput, 'Errors'>>, keys: string[]): Promise<void> {
  let left = keys;
  let failed: NotDeleted[] = [];
  for (let attempt = 0; attempt < ATTEMPTS && left.length > 0; attempt++) {
    if (attempt > 0) await pause(PAUSE_MS[attempt - 1] ?? 2000);
    let out: Pick<DeleteObjectsCommandOutput, 'Errors'>;
    try {
      out = await send(left);
    } catch (err) {
      // the request failed as a whole (store away, 5xx): send the same keys again, or give up with its error
      if (attempt === ATTEMPTS - 1) throw err;
      continue;
    }
    failed = notDeleted(out);
    const again = new Set(failed.map((f) => f.key));
    left = left.filter((k) => again.has(k));
  }
  if (left.length > 0) throw new BlobDeleteError(failed.filter((f) => left.includes(f.key)));
}
