/**
 * Where rendered objects go, one at a time, so a pyramid streams out with bounded memory. The same
 * shape as the API's BlobStore.put, so a BlobStore can be passed as a sink as it is.
 */
export interface TileSink {
  put(key: string, body: Buffer, contentType: string): Promise<void>;
}

/** Keys are relative slash-separated paths: no empty, `.` or `..` segments, no backslashes. */
export function assertSafeKey(key: string): void {
  const parts = key.split('/');
  if (key.length === 0 || key.length > 1024 || key.includes('\\') || parts.some((p) => p === '' || p === '.' || p === '..')) {
    throw new Error(`unsafe object key "${key}"`);
  }
}
