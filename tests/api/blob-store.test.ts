import { randomUUID } from 'node:crypto';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { BlobStore } from '../../api/src/storage/blob-store.js';
import { createS3BlobStore, ensureBucket } from '../../api/src/storage/s3-blob-store.js';
import { testEnv } from './support/harness.js';

/** The BlobStore contract, run against the S3 implementation and the local S3 fake (S3_ENDPOINT). */
const env = testEnv();
let store: BlobStore;
const prefix = `test/blob-${randomUUID().slice(0, 8)}/`;

beforeAll(async () => {
  await ensureBucket(env);
  store = createS3BlobStore(env);
});
afterAll(async () => {
  for (const key of await store.list(prefix)) await store.delete(key);
  store.close();
});

describe('S3 blob store', () => {
  it('round-trips bytes and text exactly', async () => {
    const bytes = Buffer.from(Array.from({ length: 4096 }, (_, i) => (i * 31) % 256));
    await store.put(`${prefix}a.bin`, bytes, 'application/octet-stream');
    await store.put(`${prefix}b.json`, '{"n":1}', 'application/json');
    expect(Buffer.compare((await store.get(`${prefix}a.bin`))!, bytes)).toBe(0);
    expect((await store.get(`${prefix}b.json`))!.toString('utf8')).toBe('{"n":1}');
  });

  it('lists by prefix, deletes, and answers null for a missing key', async () => {
    await store.put(`${prefix}dir/x`, 'x', 'text/plain');
    expect((await store.list(prefix)).sort()).toEqual([`${prefix}a.bin`, `${prefix}b.json`, `${prefix}dir/x`]);
    expect(await store.usage(`${prefix}dir/`)).toEqual({ bytes: 1, objects: 1 });
    expect(await store.usage(`${prefix}nothing/`)).toEqual({ bytes: 0, objects: 0 });
    await store.delete(`${prefix}dir/x`);
    expect(await store.get(`${prefix}dir/x`)).toBeNull();
    expect(await store.list(`${prefix}dir/`)).toEqual([]);
  });

  it('opens an object as a stream with its size, type and entity tag, and tells whether keys exist', async () => {
    const bytes = Buffer.from(Array.from({ length: 70_000 }, (_, i) => (i * 7) % 251));
    await store.put(`${prefix}c.bin`, bytes, 'image/png');
    const obj = await store.open(`${prefix}c.bin`);
    expect(obj).not.toBeNull();
    const chunks: Buffer[] = [];
    for await (const chunk of obj!.body) chunks.push(chunk as Buffer);
    expect(Buffer.compare(Buffer.concat(chunks), bytes)).toBe(0);
    expect(obj!.size).toBe(bytes.length);
    expect(obj!.contentType).toBe('image/png');
    // S3 entity tags are quoted strings (RFC 9110 section 8.8.3)
    expect(obj!.etag).toMatch(/^"[^"]+"$/);
    expect(await store.exists(`${prefix}c.bin`)).toBe(true);
    expect(await store.exists(`${prefix}nothing-here`)).toBe(false);
    expect(await store.open(`${prefix}nothing-here`)).toBeNull();
  });

  it('signs a GET address a plain fetch can read', async () => {
    const url = await store.signedUrl(`${prefix}b.json`, 60);
    const res = await fetch(url);
    expect(res.status).toBe(200);
    expect(await res.text()).toBe('{"n":1}');
  });

  it('reports liveness', async () => {
    expect(await store.ping()).toBe(true);
    const nowhere = createS3BlobStore({ ...env, S3_ENDPOINT: 'http://127.0.0.1:9' });
    expect(await nowhere.ping()).toBe(false);
    nowhere.close();
  });
});
