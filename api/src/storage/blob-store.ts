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
