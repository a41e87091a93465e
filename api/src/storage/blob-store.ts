/**
 * Where run artifacts (.npy arrays, statistics, tiles, print files) live. An interface so the API,
 * the worker and tests share one contract; S3 (or its local fake) is the implementation.
 */
export interface BlobStore {
  put(key: string, body: Buffer | string, contentType: string): Promise<void>;
  /** null when there is no such object */
  get(key: string): Promise<Buffer | null>;
  delete(key: string): Promise<void>;
  list(prefix: string): Promise<string[]>;
  /** a time-limited GET address for a reader's browser */
  signedUrl(key: string, expiresInSeconds: number): Promise<string>;
  /** cheap liveness check for /api/health/ready */
  ping(): Promise<boolean>;
  close(): void;
}
