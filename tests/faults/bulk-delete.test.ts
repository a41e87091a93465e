import { eq } from 'drizzle-orm';
import { PutObjectCommand } from '@aws-sdk/client-s3';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runs } from '../../drizzle/schema.js';
import { runSpecSchema } from '../../shared/run-spec.js';
import { clearExpiredRun } from '../../api/src/services/admin-retention.js';
import { createS3BlobStore } from '../../api/src/storage/s3-blob-store.js';
import { BlobDeleteError, type BlobStore } from '../../api/src/storage/blob-store.js';
import { batchesOf, DELETE_BATCH_KEYS, notDeleted } from '../../api/src/storage/delete-batches.js';
import { dependencyPorts, unavailable } from '../../api/src/http/unavailable.js';
import { createS3Client } from '../../renderer/src/render/s3-sink.js';
import { createLab, createUser, startHarness, type Harness } from '../api/support/harness.js';
import { privateS3 } from './support/services.js';

/**
 * Deleting a big pyramid: more than 2,500 objects under runs/<id>/ (S3's DeleteObjects takes at
 * most 1,000 keys per request, so at least three requests), against a real s3rver of its own, and
 * the same deletion with the store away, which must fail loudly and leave the run marked not cleared.
 */

const BUCKET = 'tw-faults-delete';
const OBJECTS = 2_600;
let h: Harness;
let s3: Awaited<ReturnType<typeof privateS3>>;
let blobs: BlobStore;
let labId: string;
let authorId: string;

beforeAll(async () => {
  h = await startHarness('bulkdelete');
  s3 = await privateS3('bulk-delete', BUCKET);
  blobs = createS3BlobStore({ ...h.env, S3_ENDPOINT: s3.endpoint, S3_BUCKET: BUCKET });
  const a = await createUser(h, 'Delete Author');
  authorId = a.id;
  labId = await createLab(h, 'Delete Lab', [{ userId: a.id, role: 'author' }]);
}, 60_000);
afterAll(async () => {
  blobs?.close();
  await s3?.close();
  await h?.close();
});

/** Tile-shaped keys (IIIF region/size/rotation/quality.format) of one view, as the renderer writes them. */
function pyramidKeys(runId: string, count: number): string[] {
  const keys: string[] = [];
  for (let k = 0; keys.length < count; k++) keys.push(`runs/${runId}/heights/tidewater/iiif/${(k % 60) * 256},${Math.floor(k / 60) * 256},256,256/256,/0/default.png`);
  return keys;
}

async function putAll(keys: string[]): Promise<void> {
  const client = createS3Client({ endpoint: s3.endpoint, region: h.env.S3_REGION, accessKeyId: h.env.S3_ACCESS_KEY_ID, secretAccessKey: h.env.S3_SECRET_ACCESS_KEY });
  try {
    const left = [...keys];
    const lane = async () => {
      for (let k = left.pop(); k !== undefined; k = left.pop()) await client.send(new PutObjectCommand({ Bucket: BUCKET, Key: k, Body: 'p', ContentType: 'image/png' }));
    };
    await Promise.all(Array.from({ length: 48 }, lane));
  } finally {
    client.destroy();
  }
}

async function expiredRun(title: string): Promise<string> {
  const [row] = await h.deps.db
    .insert(runs)
    .values({ labId, authorId, title, spec: runSpecSchema.parse({ lattice: { preset: 'square' }, chips: 1000 }), status: 'finished', finishedAt: new Date(), artifactsExpiredAt: new Date() })
    .returning();
  return row!.id;
}

describe('deleting a run with a large pyramid', () => {
  it('removes more than 2,500 objects under its prefix completely, and nothing beside it', { timeout: 120_000 }, async () => {
    const id = await expiredRun('big pyramid');
    const keys = [...pyramidKeys(id, OBJECTS), `runs/${id}/arrays/heights.npy`, `runs/${id}/arrays/run.json`];
    // a neighbour whose id starts with the same characters, and another run: both must stay
    const keep = [`runs/${id}x/arrays/run.json`, `runs/00000000-0000-4000-8000-000000000000/heights/tidewater/iiif/info.json`];
    let t = Date.now();
    await putAll([...keys, ...keep]);
    const putMs = Date.now() - t;
    expect((await blobs.list(`runs/${id}/`)).length).toBe(keys.length);

    t = Date.now();
    const out = await clearExpiredRun({ db: h.deps.db, blobs }, id, 'big pyramid');
    console.log(`bulk delete: ${keys.length} objects stored in ${putMs} ms, deleted in ${Date.now() - t} ms (${Math.ceil(keys.length / 1000)} listing pages and DeleteObjects requests)`);
    expect(out.objects).toBe(keys.length);
    expect(await blobs.list(`runs/${id}/`)).toEqual([]);
    for (const k of keep) expect(await blobs.exists(k), k).toBe(true);
    const [row] = await h.deps.db.select().from(runs).where(eq(runs.id, id));
    expect(row!.artifactsClearedAt).not.toBeNull();
  });

  it('fails loudly while the store is away, leaves the run not cleared, and the next attempt finishes', { timeout: 120_000 }, async () => {
    const id = await expiredRun('store away');
    // more than one batch would add nothing here: every request fails alike
    const keys = pyramidKeys(id, 40);
    await putAll(keys);
    // the store goes away: every batch fails as a whole, is sent again a few times, and the error comes out
    await s3.stop();
    let err: unknown;
    try {
      await blobs.deleteMany(keys);
    } catch (e) {
      err = e;
    }
    expect(err, 'deleteMany resolved with the store away').toBeInstanceOf(Error);
    // answered as the object store being unavailable (503), never as done
    expect(unavailable(err, dependencyPorts({ ...h.env, S3_ENDPOINT: s3.endpoint }))?.message).toMatch(/object store is not answering/);
    await expect(clearExpiredRun({ db: h.deps.db, blobs }, id, 'store away')).rejects.toThrow();
    const [row] = await h.deps.db.select().from(runs).where(eq(runs.id, id));
    expect(row!.artifactsClearedAt).toBeNull();

    await s3.start();
    expect((await blobs.list(`runs/${id}/`)).length).toBe(keys.length);
    expect((await clearExpiredRun({ db: h.deps.db, blobs }, id, 'store away')).objects).toBe(keys.length);
    expect(await blobs.list(`runs/${id}/`)).toEqual([]);
  });
});

describe('DeleteObjects answers', () => {
  it('reads the keys a 200 answer says were not deleted', () => {
    // the shape of the S3 API reference's DeleteObjects example answer with one key deleted and one
    // refused (AccessDenied), as the SDK parses it (from memory of the API reference)
    const failed = notDeleted({ Errors: [{ Key: 'sample2.txt', Code: 'AccessDenied', Message: 'Access Denied' }] });
    expect(failed).toEqual([{ key: 'sample2.txt', code: 'AccessDenied', message: 'Access Denied' }]);
    expect(notDeleted({})).toEqual([]);
    const e = new BlobDeleteError(failed);
    expect(e.message).toBe('the object store did not delete 1 object: sample2.txt (AccessDenied: Access Denied)');
  });

  it('never puts more than 1,000 keys in one request (the S3 API limit)', () => {
    const keys = Array.from({ length: 2_501 }, (_, k) => `k${k}`);
    expect(batchesOf(keys).map((b) => b.length)).toEqual([1000, 1000, 501]);
    expect(batchesOf(keys).flat()).toEqual(keys);
    expect(DELETE_BATCH_KEYS).toBe(1000);
    expect(() => batchesOf(keys, 1001)).toThrow(/1 to 1000 keys/);
  });
});
