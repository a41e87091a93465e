import { PutObjectCommand, S3Client } from '@aws-sdk/client-s3';
import { assertSafeKey, type TileSink } from './sink.js';

export interface S3Settings {
  endpoint: string;
  region: string;
  accessKeyId: string;
  secretAccessKey: string;
}

/** An S3 client for S3-compatible stores, configured as the stack notes require (§6). */
export function createS3Client(s: S3Settings): S3Client {
  return new S3Client({
    region: s.region,
    endpoint: s.endpoint,
    forcePathStyle: true,
    credentials: { accessKeyId: s.accessKeyId, secretAccessKey: s.secretAccessKey },
    // default checksums store stream bodies aws-chunked on the local fake; only send them when required
    requestChecksumCalculation: 'WHEN_REQUIRED',
    responseChecksumValidation: 'WHEN_REQUIRED',
  });
}

export interface S3SinkOptions {
  client: S3Client;
  bucket: string;
  /**
   * Cache-Control of every object. A run's pyramid for one layer and palette never changes once
   * info.json exists, so the default lets browsers and proxies keep tiles for a year.
   */
  cacheControl?: string;
}

/** Uploads each object with one PutObject (tiles are a few kB, so multipart would only add requests). */
export function createS3Sink(opts: S3SinkOptions): TileSink {
  const cacheControl = opts.cacheControl ?? 'public, max-age=31536000, immutable';
  return {
    async put(key, body, contentType) {
      assertSafeKey(key);
      await opts.client.send(
        new PutObjectCommand({ Bucket: opts.bucket, Key: key, Body: body, ContentType: contentType, ContentLength: body.length, CacheControl: cacheControl }),
      );
    },
  };
}
