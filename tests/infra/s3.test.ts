import { createHash, randomBytes } from 'node:crypto';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { GetObjectCommand, HeadBucketCommand, ListObjectsV2Command, PutObjectCommand, S3Client, S3ServiceException } from '@aws-sdk/client-s3';
import { getSignedUrl } from '@aws-sdk/s3-request-presigner';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startS3Fake, type S3Fake } from '../../infra/fakes/s3.js';

/**
 * The S3 fake (s3rver) driven by @aws-sdk/client-s3 with the settings the product uses. The stream
 * upload is the case that silently corrupts with the SDK's default checksum settings (aws-chunked
 * bodies), so it is read back and compared byte for byte.
 */
let fake: S3Fake;
let dir: string;
let s3: S3Client;
const Bucket = 'toppleworks';
const sha256 = (b: Uint8Array) => createHash('sha256').update(b).digest('hex');

function client(endpoint: string) {
  return new S3Client({
    region: 'us-east-1',
    endpoint,
    forcePathStyle: true,
    credentials: { accessKeyId: 'S3RVER', secretAccessKey: 'S3RVER' },
    requestChecksumCalculation: 'WHEN_REQUIRED',
    responseChecksumValidation: 'WHEN_REQUIRED',
  });
}

beforeAll(async () => {
  dir = fs.mkdtempSync(path.join(os.tmpdir(), 'tw-s3-'));
  fake = await startS3Fake({ port: 0, directory: path.join(dir, 'data') });
  s3 = client(fake.endpoint);
});

afterAll(async () => {
  s3?.destroy();
  await fake?.close();
  fs.rmSync(dir, { recursive: true, force: true });
});

const body = async (key: string) => {
  const got = await s3.send(new GetObjectCommand({ Bucket, Key: key }));
  return Buffer.from(await got.Body!.transformToByteArray());
};

describe('S3 fake', () => {
  it('creates the project bucket at start', async () => {
    const head = await s3.send(new HeadBucketCommand({ Bucket }));
    expect(head.$metadata.httpStatusCode).toBe(200);
  });

  it('stores strings and buffers', async () => {
    await s3.send(new PutObjectCommand({ Bucket, Key: 'runs/r1/stats.json', Body: '{"topplings":1830917}', ContentType: 'application/json' }));
    expect((await body('runs/r1/stats.json')).toString()).toBe('{"topplings":1830917}');
    const bytes = randomBytes(70_000);
    await s3.send(new PutObjectCommand({ Bucket, Key: 'runs/r1/heights.npy', Body: bytes }));
    expect(sha256(await body('runs/r1/heights.npy'))).toBe(sha256(bytes));
  });

  it('stores a file stream byte-identical (no aws-chunked framing left in the object)', async () => {
    const file = path.join(dir, 'upload.bin');
    const bytes = randomBytes(3 * 1024 * 1024 + 17);
    fs.writeFileSync(file, bytes);
    await s3.send(new PutObjectCommand({ Bucket, Key: 'runs/r1/odometer.npy', Body: fs.createReadStream(file), ContentLength: bytes.length }));
    const back = await body('runs/r1/odometer.npy');
    expect(back.length).toBe(bytes.length);
    expect(sha256(back)).toBe(sha256(bytes));
  });

  it('lists objects under a prefix', async () => {
    const listed = await s3.send(new ListObjectsV2Command({ Bucket, Prefix: 'runs/r1/' }));
    expect(listed.Contents?.map((o) => o.Key).sort()).toEqual(['runs/r1/heights.npy', 'runs/r1/odometer.npy', 'runs/r1/stats.json']);
  });

  it('serves a presigned GET to plain fetch, with CORS for the viewer', async () => {
    const url = await getSignedUrl(s3, new GetObjectCommand({ Bucket, Key: 'runs/r1/stats.json' }), { expiresIn: 300 });
    const res = await fetch(url, { headers: { Origin: 'http://127.0.0.1:5180' } });
    expect(res.status).toBe(200);
    expect(await res.text()).toBe('{"topplings":1830917}');
    expect(res.headers.get('access-control-allow-origin')).toBe('*');
  });

  it('answers a missing key with NoSuchKey', async () => {
    const err = await s3.send(new GetObjectCommand({ Bucket, Key: 'runs/none' })).catch((e: unknown) => e);
    expect(err).toBeInstanceOf(S3ServiceException);
    expect((err as S3ServiceException).name).toBe('NoSuchKey');
  });

  it('keeps objects across a restart', async () => {
    await fake.close();
    s3.destroy();
    fake = await startS3Fake({ port: 0, directory: path.join(dir, 'data') });
    s3 = client(fake.endpoint);
    expect((await body('runs/r1/stats.json')).toString()).toBe('{"topplings":1830917}');
  });

  it('refuses a bucket name S3 does not allow', async () => {
    // S3 bucket names are 3 to 63 characters (AWS S3 user guide, bucket naming rules)
    await expect(startS3Fake({ port: 0, directory: path.join(dir, 'x'), bucket: 'tw' })).rejects.toThrow(/3 to 63/);
  });
});
