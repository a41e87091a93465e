import { count } from 'drizzle-orm';
import sharp from 'sharp';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { backgroundUploads } from '../../drizzle/schema.js';
import { backgroundUploadResponseSchema } from '../../shared/api/uploads.js';
import { as, createLab, createUser, signIn, startHarness, TEST_PASSWORD, type Harness, type Session } from './support/harness.js';
import { heightsHash, intBody, npyBytes } from './support/npy-bytes.js';

let h: Harness;
let author: Session;
let unverified: Session;
let labId: string;

beforeAll(async () => {
  h = await startHarness('uploads');
  const a = await createUser(h, 'Upload Author');
  const u = await createUser(h, 'Upload Unverified', { verified: false });
  labId = await createLab(h, 'Uploads Lab', [
    { userId: a.id, role: 'author' },
    { userId: u.id, role: 'author' },
  ]);
  author = await signIn(h, a.email, TEST_PASSWORD);
  unverified = await signIn(h, u.email, TEST_PASSWORD);
});
afterAll(async () => {
  await h.close();
});

const upload = (body: Buffer, type = 'application/octet-stream', who: Session = author) =>
  as(h.http.post(`/api/uploads/background?labId=${labId}`), who).set('Content-Type', type).send(body);

/** A unique first value per test so each upload is new to a database shared across runs. */
const salt = () => 1000 + Math.floor(Math.random() * 1_000_000);

async function stored(): Promise<{ rows: number; objects: number }> {
  const [row] = await h.deps.db.select({ n: count() }).from(backgroundUploads);
  return { rows: row!.n, objects: (await h.deps.blobs.list('uploads/')).length };
}

/** The int32 .npy the store holds: header by the format rules, then 4-byte little-endian values. */
function readStoredInt32(bytes: Buffer): { header: string; values: number[] } {
  const len = bytes.readUInt16LE(8);
  const header = bytes.subarray(10, 10 + len).toString('latin1');
  const body = bytes.subarray(10 + len);
  return { header, values: Array.from({ length: body.length / 4 }, (_, k) => body.readInt32LE(k * 4)) };
}

describe('POST /api/uploads/background', () => {
  it('stores an unsigned 8-bit .npy as int32 heights under its content hash and describes it', async () => {
    const values = [salt() % 200, salt() % 200, salt() % 200, 1, 2, 3];
    const res = await upload(npyBytes('|u1', [2, 3], intBody(values, 1, 'le', false)));
    expect(res.status).toBe(201);
    const { upload: up } = backgroundUploadResponseSchema.parse(res.body);
    expect(up.sha256).toBe(heightsHash(values));
    expect(up).toMatchObject({ shape: [2, 3], max: Math.max(...values), source: '|u1', created: true });
    expect(up.mean).toBeCloseTo(values.reduce((a, b) => a + b, 0) / 6, 10);
    const counts = new Array(Math.max(...values) + 1).fill(0);
    for (const v of values) counts[v]++;
    expect(up.preview).toEqual({ heightCounts: counts, countAbove: 0 });
    expect(up.min).toBe(Math.min(...values));
    const bytes = await h.deps.blobs.get(`uploads/${up.sha256}.npy`);
    const npy = readStoredInt32(bytes!);
    expect(npy.header).toMatch(/'descr': '<i4'/);
    expect(npy.header).toMatch(/'shape': \(2, 3\)/);
    expect(npy.values).toEqual(values);
  });

  it('recognises the same heights in another dtype and byte order, and stores nothing twice', async () => {
    const values = [salt() % 30000, 7, 0, 300, 2];
    const first = await upload(npyBytes('>i2', [5], intBody(values, 2, 'be')));
    expect(first.status).toBe(201);
    const before = await stored();
    // declared as a PNG, but the bytes say .npy: content decides
    const again = await upload(npyBytes('<i8', [5], intBody(values, 8, 'le')), 'image/png');
    expect(again.status).toBe(200);
    expect(again.body.upload).toMatchObject({ sha256: heightsHash(values), created: false, source: '<i8', shape: [5] });
    // 300 and the salt lie above the per-height counts
    expect(again.body.upload.preview.countAbove).toBe(2);
    expect(await stored()).toEqual(before);
  });

  it('turns the grey levels of an 8-bit grayscale PNG into heights 0, 1, 2, ... in (H, W) order', async () => {
    const greys = [0, 128, 255, 128, 0, 64];
    const png = await sharp(Buffer.from(greys), { raw: { width: 3, height: 2, channels: 1 } }).toColourspace('b-w').png().toBuffer();
    const res = await upload(png, 'image/png');
    expect([200, 201], JSON.stringify(res.body)).toContain(res.status);
    const levels = [0, 64, 128, 255];
    const heights = greys.map((g) => levels.indexOf(g));
    expect(res.body.upload).toMatchObject({ shape: [2, 3], levels, source: 'png', sha256: heightsHash(heights), min: 0, max: 3 });
  });

  it('refuses bad content with a clear 4xx and stores nothing', async () => {
    const before = await stored();
    const rgb = await sharp({ create: { width: 2, height: 2, channels: 3, background: '#336699' } }).png().toBuffer();
    const cases: [Buffer, string, number, RegExp][] = [
      [Buffer.from('x,y\n1,2\n'), 'application/octet-stream', 415, /neither a NumPy .npy file nor a PNG/],
      [Buffer.from('{"a":1}'), 'text/plain', 415, /Content-Type application\/octet-stream or image\/png/],
      [npyBytes('<f8', [2], Buffer.alloc(16)), 'application/octet-stream', 400, /dtype|integer/i],
      [npyBytes('<i2', [3], intBody([1, -1, 2], 2)), 'application/octet-stream', 400, /heights must lie in 0/],
      [npyBytes('<i4', [4], intBody([1, 2, 3], 4)), 'application/octet-stream', 400, /truncated/],
      [npyBytes('|u1', [1, 8193], Buffer.alloc(8193)), 'application/octet-stream', 413, /8192 per axis/],
      [rgb, 'image/png', 400, /8-bit grayscale/],
      [Buffer.alloc(0), 'application/octet-stream', 400, /empty/],
      // the right magic numbers followed by junk
      [Buffer.concat([Buffer.from([0x93, 0x4e, 0x55, 0x4d, 0x50, 0x59, 1, 0, 40, 0]), Buffer.from("{'descr': <<<, 'shape': (((( }         \n")]), 'application/octet-stream', 400, /uploaded background/],
      [Buffer.concat([Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]), Buffer.alloc(40, 0)]), 'image/png', 400, /cannot decode PNG/],
      // a PNG whose header claims 117,901,063 columns is refused before it is decoded
      [Buffer.concat([Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]), Buffer.alloc(40, 7)]), 'image/png', 413, /8192 per axis/],
    ];
    for (const [body, type, status, message] of cases) {
      const res = await upload(body, type);
      expect({ status: res.status, error: res.body.error }).toMatchObject({ status, error: expect.stringMatching(message) });
    }
    expect(await stored()).toEqual(before);
  });

  it('refuses a body over 64 MB with 413 naming the limit', async () => {
    const res = await upload(Buffer.alloc(64 * 1024 * 1024 + 1));
    expect(res.status).toBe(413);
    expect(res.body.error).toMatch(/limit 64 MB/);
  });

  it('needs a verified e-mail', async () => {
    const res = await upload(npyBytes('|u1', [1], Buffer.from([1])), 'application/octet-stream', unverified);
    expect(res.status).toBe(403);
  });
});

describe('runs on an uploaded background', () => {
  it('accepts the upload\'s hash and shape, and refuses an unknown hash or another shape', async () => {
    const values = [salt() % 60000, 1, 2, 1, 0, 2, 1, 0];
    const { body } = await upload(npyBytes('<u2', [2, 4], intBody(values, 2, 'le', false))).expect(201);
    const { sha256, shape } = body.upload;
    const create = (background: unknown) => as(h.http.post('/api/runs'), author).send({ labId, title: 'on upload', spec: { lattice: { preset: 'square' }, chips: 100, background } });

    const ok = await create({ kind: 'array', sha256, shape });
    expect(ok.status).toBe(201);
    expect(ok.body.run.spec.background).toEqual({ kind: 'array', sha256, shape: [2, 4] });

    const wrongShape = await create({ kind: 'array', sha256, shape: [4, 2] });
    expect(wrongShape.status).toBe(400);
    expect(wrongShape.body.error).toMatch(/shape \(2, 4\)/);
    const line = await as(h.http.post('/api/runs'), author).send({ labId, title: 'on upload', spec: { lattice: { preset: 'line' }, chips: 10, background: { kind: 'array', sha256, shape } } });
    expect(line.status).toBe(400);
    expect(line.body.error).toMatch(/1-dimensional but the uploaded background has 2 axes/);
    const unknown = await create({ kind: 'array', sha256: 'f'.repeat(64), shape });
    expect(unknown.status).toBe(400);
    expect(unknown.body.error).toMatch(/upload it first/);

    const estimate = await as(h.http.post('/api/estimates'), author).send({ spec: { lattice: { preset: 'square' }, chips: 10, background: { kind: 'array', sha256, shape } } }).expect(200);
    // the predicted array covers the uploaded one, centred on the origin
    expect(estimate.body.estimate.shape[0]).toBeGreaterThanOrEqual(2);
    expect(estimate.body.estimate.shape[1]).toBeGreaterThanOrEqual(4);

    const summary = await as(h.http.get(`/api/uploads/background/${sha256}`), author).expect(200);
    expect(summary.body.upload).toMatchObject({ sha256, shape: [2, 4], source: '<u2' });
  });
});
