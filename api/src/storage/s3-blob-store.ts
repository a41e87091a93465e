import {
  CreateBucketCommand,
  DeleteObjectCommand,
  DeleteObjectsCommand,
  GetObjectCommand,
  HeadBucketCommand,
  HeadObjectCommand,
  ListObjectsV2Command,
  NoSuchKey,
  PutObjectCommand,
  S3Client,
  type _Object,
} from '@aws-sdk/client-s3';
import { getSignedUrl } from '@aws-sdk/s3-request-presigner';
import type { Env } from '../../../shared/env.js';
import { Readable } from 'node:stream';
import type { BlobStore } from './blob-store.js';
import { batchesOf, deleteBatch } from './delete-batches.js';
// one place configures S3 clients for the local fake's needs (checksums only when required)
import { createS3Client } from '../../../renderer/src/render/s3-sink.js';

type S3Settings = Pick<Env, 'S3_ENDPOINT' | 'S3_REGION' | 'S3_BUCKET' | 'S3_ACCESS_KEY_ID' | 'S3_SECRET_ACCESS_KEY'>;

function s3Client(env: S3Settings): S3Client {
  return createS3Client({ endpoint: env.S3_ENDPOINT, region: env.S3_REGION, accessKeyId: env.S3_ACCESS_KEY_ID, secretAccessKey: env.S3_SECRET_ACCESS_KEY });
}

export function createS3BlobStore(env: S3Settings): BlobStore {
  const client = s3Client(env);
  const Bucket = env.S3_BUCKET;
  /** Quiet: the answer lists only the keys that were not deleted */
  const sendDelete = (keys: string[]) => client.send(new DeleteObjectsCommand({ Bucket, Delete: { Objects: keys.map((Key) => ({ Key })), Quiet: true } }));
  /** every object under a prefix, page by page */
  async function eachObject(prefix: string, visit: (o: _Object) => void): Promise<void> {
    let token: string | undefined;
    do {
      const page = await client.send(new ListObjectsV2Command({ Bucket, Prefix: prefix, ContinuationToken: token }));
      for (const o of page.Contents ?? []) visit(o);
      token = page.IsTruncated ? page.NextContinuationToken : undefined;
    } while (token);
  }
  return {
    async put(key, body, contentType) {
      await client.send(new PutObjectCommand({ Bucket, Key: key, Body: body, ContentType: contentType }));
    },
    async get(key) {
      try {
        const out = await client.send(new GetObjectCommand({ Bucket, Key: key }));
        return Buffer.from(await out.Body!.transformToByteArray());
      } catch (err) {
        if (err instanceof NoSuchKey || (err as Error).name === 'NoSuchKey') return null;
        throw err;
      }
    },
    async open(key, range) {
      try {
        const out = await client.send(new GetObjectCommand({ Bucket, Key: key, Range: range }));
        const body = out.Body instanceof Readable ? out.Body : Readable.fromWeb(out.Body!.transformToWebStream() as Parameters<typeof Readable.fromWeb>[0]);
        return { body, size: out.ContentLength ?? 0, contentRange: range ? out.ContentRange : undefined, contentType: out.ContentType, etag: out.ETag, lastModified: out.LastModified };
      } catch (err) {
        if (err instanceof NoSuchKey || (err as Error).name === 'NoSuchKey') return null;
        throw err;
      }
    },
    async exists(key) {
      try {
        await client.send(new HeadObjectCommand({ Bucket, Key: key }));
        return true;
      } catch (err) {
        const name = (err as Error).name;
        if (name === 'NotFound' || name === 'NoSuchKey' || (err as { $metadata?: { httpStatusCode?: number } }).$metadata?.httpStatusCode === 404) return false;
        throw err;
      }
    },
    async delete(key) {
      await client.send(new DeleteObjectCommand({ Bucket, Key: key }));
    },
    async deleteMany(keys) {
      for (const batch of batchesOf([...new Set(keys)])) await deleteBatch(sendDelete, batch);
      return new Set(keys).size;
    },
    async deletePrefix(prefix) {
      // one page at a time, so a pyramid of millions of tiles never sits in memory; StartAfter rather
      // than a continuation token, since the page just listed is gone by the time the next is asked for
      let deleted = 0;
      let after: string | undefined;
      for (;;) {
        const page = await client.send(new ListObjectsV2Command({ Bucket, Prefix: prefix, StartAfter: after, MaxKeys: 1000 }));
        const keys = (page.Contents ?? []).flatMap((o) => (o.Key ? [o.Key] : []));
        if (keys.length === 0) return deleted;
        await deleteBatch(sendDelete, keys);
        deleted += keys.length;
        after = keys[keys.length - 1];
        if (!page.IsTruncated) return deleted;
      }
    },
    async list(prefix) {
      const keys: string[] = [];
      await eachObject(prefix, (o) => void (o.Key && keys.push(o.Key)));
      return keys;
    },
    async usage(prefix) {
      const total = { bytes: 0, objects: 0 };
      await eachObject(prefix, (o) => {
        total.bytes += o.Size ?? 0;
        total.objects += 1;
      });
      return total;
    },
    signedUrl(key, expiresIn) {
      return getSignedUrl(client, new GetObjectCommand({ Bucket, Key: key }), { expiresIn });
    },
    async ping() {
      try {
        await client.send(new HeadBucketCommand({ Bucket }));
        return true;
      } catch {
        return false;
      }
    },
    close: () => client.destroy(),
  };
}

/** Create the bucket if it is missing (local fake and first deploys). */
export async function ensureBucket(env: S3Settings): Promise<void> {
  const client = s3Client(env);
  try {
    await client.send(new HeadBucketCommand({ Bucket: env.S3_BUCKET }));
  } catch {
    await client.send(new CreateBucketCommand({ Bucket: env.S3_BUCKET }));
  } finally {
    client.destroy();
  }
}
