import sharp from 'sharp';
import type supertest from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import { figureVersions, runs } from '../../drizzle/schema.js';
import { printThumbnailKey } from '../../renderer/src/farm/artifacts.js';
import { startFarmWorker } from '../../renderer/src/farm/farm-worker.js';
import { THUMBNAIL_MAX_SIDE } from '../../shared/api/artifacts.js';
import { figureResponseSchema, type FigureDetail, type FigureVersion } from '../../shared/api/figures.js';
import type { Run } from '../../shared/api/runs.js';
import { as, createLab, createUser, runSettled, signIn, startHarness, TEST_PASSWORD, type Harness, type Session } from './support/harness.js';

/**
 * Small pictures for the run and figure lists, from a run computed and drawn by the real farm worker
 * and figures it printed: what is served (type, size, the very pixels the pyramid stores), to whom,
 * and how long it may be cached.
 */

let h: Harness;
let author: Session;
let outsider: Session;
let labId: string;
let authorId: string;
let farm: Awaited<ReturnType<typeof startFarmWorker>>;
let run: Run;

const PNG_SIGNATURE = [0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a];
const JPEG_SIGNATURE = [0xff, 0xd8, 0xff];

/** supertest: keep a binary body as one Buffer */
const binary = (r: supertest.Response, cb: (err: Error | null, body: unknown) => void) => {
  const chunks: Buffer[] = [];
  r.on('data', (c: Buffer) => chunks.push(c));
  r.on('end', () => cb(null, Buffer.concat(chunks)));
};
const getImage = (path: string, who: Session | null) => as(h.http.get(path), who).buffer(true).parse(binary);

const detail = (body: unknown): FigureDetail => {
  const parsed = figureResponseSchema.parse(body);
  if (parsed.withdrawn) throw new Error('figure withdrawn');
  return parsed.figure;
};

async function printed(slug: string, number: number, timeoutMs = 90_000): Promise<FigureVersion> {
  const end = Date.now() + timeoutMs;
  for (;;) {
    const v = detail((await as(h.http.get(`/api/figures/${slug}`), author).expect(200)).body).versions.find((x) => x.number === number);
    if (v?.status === 'failed') throw new Error(`print failed: ${v.error}`);
    if (v?.status === 'ready') return v;
    if (Date.now() > end) throw new Error(`version ${number} of ${slug} not ready after ${timeoutMs} ms`);
    await new Promise((r) => setTimeout(r, 250));
  }
}

async function compose(title: string): Promise<FigureDetail> {
  const spec = { panels: [{ runId: run.id, layer: 'heights' }], size: { kind: 'column', column: 'single', heightMm: 60 }, dpi: 300 };
  return detail((await as(h.http.post('/api/figures'), author).send({ labId, title: `${title} ${h.tag}`, spec }).expect(201)).body);
}

beforeAll(async () => {
  h = await startHarness('thumbnails');
  const a = await createUser(h, 'Thumb Author');
  const o = await createUser(h, 'Thumb Outsider');
  authorId = a.id;
  labId = await createLab(h, 'Thumbnails Lab', [{ userId: a.id, role: 'author' }]);
  await createLab(h, 'Thumbnails Other Lab', [{ userId: o.id, role: 'manager' }]);
  author = await signIn(h, a.email, TEST_PASSWORD);
  outsider = await signIn(h, o.email, TEST_PASSWORD);
  farm = await startFarmWorker(h.env, { prefix: h.queuePrefix, threads: 1 });
  const res = await as(h.http.post('/api/runs'), author).send({ labId, title: 'Pile to recognise', spec: { lattice: { preset: 'square' }, chips: 1000 } }).expect(201);
  run = await runSettled(h, author, res.body.run.id, 90_000);
}, 120_000);
afterAll(async () => {
  await farm?.close();
  await h?.close();
});

describe('a run\'s thumbnail', () => {
  it('is the smallest whole image its pyramid stores: a PNG of at most 256 px, byte for byte the IIIF size', async () => {
    expect(run.status).toBe('finished');
    const res = await getImage(`/api/runs/${run.id}/thumbnail`, author);
    expect(res.status).toBe(200);
    expect(res.headers['content-type']).toBe('image/png');
    const body = res.body as Buffer;
    expect([...body.subarray(0, 8)]).toEqual(PNG_SIGNATURE);
    expect(Number(res.headers['content-length'])).toBe(body.length);
    const meta = await sharp(body).metadata();
    expect(meta.format).toBe('png');
    expect(Math.max(meta.width!, meta.height!)).toBeLessThanOrEqual(THUMBNAIL_MAX_SIDE);
    // larger than a quarter tile: the coarsest level of a pyramid whose finer level did not fit one tile
    expect(Math.max(meta.width!, meta.height!)).toBeGreaterThan(THUMBNAIL_MAX_SIDE / 2);

    // nothing new was drawn: it is the size info.json advertises, as the deep-zoom address serves it
    const base = `/api/runs/${run.id}/views/heights/tidewater/iiif`;
    const info = (await as(h.http.get(`${base}/info.json`), author).expect(200)).body as { sizes: { width: number; height: number }[] };
    expect(info.sizes).toContainEqual({ width: meta.width, height: meta.height });
    const tile = await getImage(`${base}/full/${meta.width},${meta.height}/0/default.png`, author);
    expect(Buffer.compare(tile.body as Buffer, body)).toBe(0);
  });

  it('is cached privately for its lab and answers a conditional request with 304', async () => {
    const res = await getImage(`/api/runs/${run.id}/thumbnail`, author);
    expect(res.headers['cache-control']).toBe('private, max-age=86400');
    expect(res.headers['access-control-allow-origin']).toBeUndefined();
    expect(res.headers.etag).toBeTruthy();
    await as(h.http.get(`/api/runs/${run.id}/thumbnail`), author).set('If-None-Match', res.headers.etag!).expect(304);
  });

  it('is refused, as the run is, to another lab and to anonymous readers', async () => {
    const stranger = await as(h.http.get(`/api/runs/${run.id}/thumbnail`), outsider).expect(404);
    expect(stranger.body.error).toBe('run not found');
    const anonymous = await h.http.get(`/api/runs/${run.id}/thumbnail`).expect(404);
    expect(anonymous.body.error).toBe('run not found');
  });

  it('is a 404 no cache keeps while the run is queued, and 410 once its artifacts expired', async () => {
    const [queued] = await h.deps.db
      .insert(runs)
      .values({ labId, authorId, title: `waiting ${h.tag}`, spec: { lattice: { preset: 'square' }, chips: 10, sources: [], background: { kind: 'constant', height: 0 } } as never })
      .returning();
    const waiting = await as(h.http.get(`/api/runs/${queued!.id}/thumbnail`), author).expect(404);
    expect(waiting.headers['cache-control']).toBe('no-store');
    expect(waiting.body.error).toMatch(/no picture \(yet\)/);

    await h.deps.db.update(runs).set({ status: 'finished', artifactsExpiredAt: new Date('2025-01-02T00:00:00Z') }).where(eq(runs.id, queued!.id));
    const gone = await as(h.http.get(`/api/runs/${queued!.id}/thumbnail`), author).expect(410);
    expect(gone.body.error).toMatch(/^expired — artifacts removed/);
  });

  it('refuses a malformed run id with 400 and a message', async () => {
    const res = await as(h.http.get('/api/runs/not-a-run/thumbnail'), author).expect(400);
    expect(res.body.error).toBeTruthy();
    expect(JSON.stringify(res.body.issues)).toMatch(/id/);
  });
});

describe('a figure\'s thumbnail', () => {
  it('shows the first panel until a print is ready, then the printed page shrunk to a JPEG of at most 256 px', { timeout: 120_000 }, async () => {
    const f = await compose('Page to recognise');
    // nothing printed yet: the panel's view, the same picture as the run's
    const before = await getImage(`/api/figures/${f.slug}/thumbnail`, author);
    expect(before.status).toBe(200);
    expect(before.headers['content-type']).toBe('image/png');
    const runPicture = (await getImage(`/api/runs/${run.id}/thumbnail`, author)).body as Buffer;
    expect(Buffer.compare(before.body as Buffer, runPicture)).toBe(0);
    expect(before.headers['cache-control']).toBe('private, no-cache');
    // a draft is its lab's only
    await h.http.get(`/api/figures/${f.slug}/thumbnail`).expect(404);
    await as(h.http.get(`/api/figures/${f.slug}/thumbnail`), outsider).expect(404);

    await as(h.http.post(`/api/figures/${f.slug}/versions`), author).send({ formats: ['png', 'pdf'] }).expect(202);
    const v = await printed(f.slug, 1);
    const page = v.files.find((x) => x.format === 'png')!;
    const res = await getImage(`/api/figures/${f.slug}/thumbnail`, author);
    expect(res.status).toBe(200);
    expect(res.headers['content-type']).toBe('image/jpeg');
    const body = res.body as Buffer;
    expect([...body.subarray(0, 3)]).toEqual(JPEG_SIGNATURE);
    const meta = await sharp(body).metadata();
    expect(meta.format).toBe('jpeg');
    expect(Math.max(meta.width!, meta.height!)).toBe(THUMBNAIL_MAX_SIDE);
    // the page's proportions, to the pixel
    expect(Math.abs(meta.width! / meta.height! - page.widthPx / page.heightPx)).toBeLessThan(2 / Math.min(meta.width!, meta.height!));

    // the printed page itself, shrunk: its average colour is the page's (paper, ink and the pile)
    const row = (await h.deps.db.select().from(figureVersions).where(eq(figureVersions.figureId, f.id)))[0]!;
    const printedPng = (await h.deps.blobs.get(row.files.find((x) => x.format === 'png')!.key))!;
    const [small, full] = await Promise.all([sharp(body).stats(), sharp(printedPng).removeAlpha().stats()]);
    for (let c = 0; c < 3; c++) expect(Math.abs(small.channels[c]!.mean - full.channels[c]!.mean)).toBeLessThan(4);
    expect(small.channels[0]!.stdev).toBeGreaterThan(10);
    expect(await h.deps.blobs.exists(printThumbnailKey(f.id, 1))).toBe(true);
  });

  it('is public once the figure is published: anyone, cached for an hour, readable across origins; so is its run\'s', { timeout: 120_000 }, async () => {
    const f = await compose('Published page');
    await as(h.http.post(`/api/figures/${f.slug}/versions`), author).send({ formats: ['png'] }).expect(202);
    await printed(f.slug, 1);
    await as(h.http.post(`/api/figures/${f.slug}/publish`), author).expect(200);

    const res = await getImage(`/api/figures/${f.slug}/thumbnail`, null);
    expect(res.status).toBe(200);
    expect(res.headers['content-type']).toBe('image/jpeg');
    expect(res.headers['cache-control']).toBe('public, max-age=3600');
    expect(res.headers['access-control-allow-origin']).toBe('*');
    expect((await sharp(res.body as Buffer).metadata()).format).toBe('jpeg');
    // the lab sees the same published page (one cached answer for everyone)
    const mine = await getImage(`/api/figures/${f.slug}/thumbnail`, author);
    expect(Buffer.compare(mine.body as Buffer, res.body as Buffer)).toBe(0);

    // its run is public now, as its tiles are
    const runPic = await getImage(`/api/runs/${run.id}/thumbnail`, null);
    expect(runPic.status).toBe(200);
    expect(runPic.headers['cache-control']).toBe('public, max-age=31536000, immutable');

    // withdrawn: readers are refused again
    await as(h.http.post(`/api/figures/${f.slug}/unpublish`), author).expect(200);
    await h.http.get(`/api/figures/${f.slug}/thumbnail`).expect(404);
    const lab = await getImage(`/api/figures/${f.slug}/thumbnail`, author);
    expect(lab.headers['cache-control']).toBe('private, no-cache');
  });

  it('shows a PDF-only print\'s page too: the same JPEG a PNG print of the figure gets; refuses a malformed slug', { timeout: 120_000 }, async () => {
    const f = await compose('Vector only');
    await as(h.http.post(`/api/figures/${f.slug}/versions`), author).send({ formats: ['pdf'] }).expect(202);
    const v1 = await printed(f.slug, 1);
    expect(v1.files.map((x) => x.format)).toEqual(['pdf']);
    const pdfOnly = await h.deps.blobs.get(printThumbnailKey(f.id, 1));
    expect(pdfOnly).not.toBeNull();
    const res = await getImage(`/api/figures/${f.slug}/thumbnail`, author);
    expect(res.status).toBe(200);
    expect(res.headers['content-type']).toBe('image/jpeg');
    expect([...(res.body as Buffer).subarray(0, 3)]).toEqual(JPEG_SIGNATURE);
    expect(Buffer.compare(res.body as Buffer, pdfOnly!)).toBe(0);
    const meta = await sharp(res.body as Buffer).metadata();
    expect(Math.max(meta.width!, meta.height!)).toBe(THUMBNAIL_MAX_SIDE);
    expect(Math.abs(meta.width! / meta.height! - v1.files[0]!.widthPx / v1.files[0]!.heightPx)).toBeLessThan(2 / Math.min(meta.width!, meta.height!));

    // the same figure printed as PNG: its thumbnail, shrunk from the PNG, is the very same file
    await as(h.http.post(`/api/figures/${f.slug}/versions`), author).send({ formats: ['png'] }).expect(202);
    await printed(f.slug, 2);
    const fromPng = await h.deps.blobs.get(printThumbnailKey(f.id, 2));
    expect(Buffer.compare(fromPng!, pdfOnly!)).toBe(0);

    const bad = await h.http.get('/api/figures/Not_A_Slug/thumbnail').expect(400);
    expect(JSON.stringify(bad.body.issues)).toMatch(/slug/);
  });
});
