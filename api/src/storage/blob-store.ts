import type { Readable } from 'node:stream';

/**
 * Where run artifacts (.npy arrays, statistics, tiles, print files) live. An interface so the API,
 * the worker and tests share one contract; S3 (or its local fake) is the implementation.
 */
export interface BlobStore {
  put(key: string, body: Buffer | string, contentType: string): Promise<void>;
  /** null when there is no such object */
  get(key: string): Promise<Buffer | null>;
  /**
   * A stored object as a stream with its metadata, for answering HTTP requests; null when missing.
   * `range` is an HTTP byte range (`bytes=0-99`); the answer then carries `contentRange`.
   */
  open(key: string, range?: string): Promise<BlobObject | null>;
  /** whether an object exists, without reading it */
  exists(key: string): Promise<boolean>;
  delete(key: string): Promise<void>;
  /**
   * Delete many objects: batches of at most 1,000 keys (the DeleteObjects limit), each key the store
   * reports as not deleted retried, and a BlobDeleteError naming what is left if some never go.
   * Deleting a missing key is not an error. Resolves to the number of keys sent.
   */
  deleteMany(keys: string[]): Promise<number>;
  /** delete everything under a prefix, one listing page (≤ 1,000 keys) at a time, as deleteMany does; resolves to the number deleted */
  deletePrefix(prefix: string): Promise<number>;
  list(prefix: string): Promise<string[]>;
  /** bytes and objects stored under a prefix, from the listing (no request per object) */
  usage(prefix: string): Promise<{ bytes: number; objects: number }>;
  /** a time-limited GET address for a reader's browser */
  signedUrl(key: string, expiresInSeconds: number): Promise<string>;
  /** cheap liveness check for /api/health/ready */
  ping(): Promise<boolean>;
  close(): void;
}

export interface BlobObject {
  body: Readable;
  /** bytes in `body` (the range's length when a range was asked for) */
  size: number;
  /** `bytes a-b/total` when a range was asked for */
  contentRange?: string;
  contentType: string | undefined;
  /** the store's entity tag, quoted as in HTTP */
  etag: string | undefined;
  lastModified: Date | undefined;
}

/** Keys the store would not delete after the retries: the caller must not record the deletion as done. */
export class BlobDeleteError extends Error {
  readonly dependency = 'the object store';
  constructor(readonly failed: { key: string; code: string; message: string }[]) {
    const first = failed.slice(0, 3).map((f) => `${f.key} (${f.code}: ${f.message})`).join(', ');
    super(`the object store did not delete ${failed.length} object${failed.length === 1 ? '' : 's'}: ${first}${failed.length > 3 ? ', …' : ''}`);
    this.name = 'BlobDeleteError';
  }
}
