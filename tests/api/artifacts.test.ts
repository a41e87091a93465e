import http from 'node:http';
import type { AddressInfo } from 'node:net';
import sharp from 'sharp';
import type supertest from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { figures } from '../../drizzle/schema.js';
import { startFarmWorker } from '../../renderer/src/farm/farm-worker.js';
import type { Run } from '../../shared/api/runs.js';
import { sendRunOutcomeMail } from '../../api/src/services/run-outcome-mail.js';
import { as, createLab, createUser, runSettled, signIn, startHarness, TEST_PASSWORD, type Harness, type Session } from './support/harness.js';
import { waitForMail } from './support/outbox.js';

/**
 * Tiles and downloads of a run computed and drawn by the real farm worker, served by the API from
 * the S3 fake: IIIF addressing, caching, access, and keys that cannot leave the run's prefix.
 */

let h: Harness;
let author: Session;
let outsider: Session;
let authorEmail: string;
let labId: string;
let farm: Awaited<ReturnType<typeof startFarmWorker>>;
let run: Run;
let server: http.Server;
let base: string;

const settled = (id: string, timeoutMs = 90_000) => runSettled(h, author, id, timeoutMs);

/** A GET with the path sent exactly as written (no client-side URL normalisation of "..", "%2F" or "\"). */
function rawGet(path: string): Promise<{ status: number; body: string; headers: http.IncomingHttpHeaders }> {
  return new Promise((resolve, reject) => {
    const req = http.request(`${base}/`, { method: 'GET', path }, (res) => {
      const chunks: Buffer[] = [];
      res.on('data', (c: Buffer) => chunks.push(c));
      res.on('end', () => resolve({ status: res.statusCode!, body: Buffer.concat(chunks).toString('utf8'), headers: res.headers }));
    });
    req.on('error', reject);
    req.end();
  });
}

/** IIIF Image API 3.0 URI syntax: {id}/{region}/{size}/{rotation}/{quality}.{format}. */
const iiifUrl = (id: string, region: string, size: string) => `${id}/${region}/${size}/0/default.png`;
const pathOf = (url: string) => new URL(url).pathname;
/** supertest: keep a binary body as one Buffer */
const binary = (r: supertest.Response, cb: (err: Error | null, body: unknown) => void) => {
  const chunks: Buffer[] = [];
  r.on('data', (c: Buffer) => chunks.push(c));
  r.on('end', () => cb(null, Buffer.concat(chunks)));
};

beforeAll(async () => {
  h = await startHarness('artifacts');
  const a = await createUser(h, 'Tile Author');
  const o = await createUser(h, 'Tile Outsider');
  authorEmail = a.email;
  labId = await createLab(h, 'Tiles Lab', [{ userId: a.id, role: 'author' }]);
  await createLab(h, 'Other Lab', [{ userId: o.id, role: 'manager' }]);
  author = await signIn(h, a.email, TEST_PASSWORD);
  outsider = await signIn(h, o.email, TEST_PASSWORD);
  farm = await startFarmWorker(h.env, { prefix: h.queuePrefix, threads: 1 });
  const res = await as(h.http.post('/api/runs'), author).send({ labId, title: 'Tiled pile', spec: { lattice: { preset: 'square' }, chips: 1000 } }).expect(201);
  run = await settled(res.body.run.id);
  server = await new Promise<http.Server>((resolve) => {
    const s = h.app.listen(0, '127.0.0.1', () => resolve(s));
  });
  base = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
}, 120_000);
afterAll(async () => {
  await new Promise((r) => server?.close(r));
  await farm?.close();
  await h?.close();
});

const viewBase = () => `/api/runs/${run.id}/views/heights/tidewater/iiif`;

describe('views of an unpublished run', () => {
  it('serves info.json with its id set to the public address of the view', async () => {
    expect(run.status).toBe('finished');
    const res = await as(h.http.get(`${viewBase()}/info.json`), author).expect(200);
    expect(res.headers['content-type']).toMatch(/^application\/json/);
    expect(res.headers['cache-control']).toBe('private, no-cache');
    expect(res.body.id).toBe(`${h.env.PUBLIC_URL}${viewBase()}`);
    // the level-0 service description, as the IIIF Image API 3.0 requires of info.json
    expect(res.body).toMatchObject({ '@context': 'http://iiif.io/api/image/3/context.json', type: 'ImageService3', protocol: 'http://iiif.io/api/image', profile: 'level0' });
  });

  it('serves the deepest level tile by tile, cell-exact: one colour per height and cell', async () => {
    const info = (await as(h.http.get(`${viewBase()}/info.json`), author)).body;
    expect(info.tiles[0].scaleFactors[0]).toBe(1);
    const tileSize = info.tiles[0].width as number;

    // the arrays, downloaded through the API: an .npy whose header follows the NumPy format
    const npy = await as(h.http.get(`/api/runs/${run.id}/arrays/heights.npy`), author).buffer(true).parse(binary);
    expect(npy.status).toBe(200);
    expect(npy.headers['content-disposition']).toMatch(new RegExp(`^attachment; filename="?run-${run.id.slice(0, 8)}-heights.npy"?$`));
    const bytes = npy.body as Buffer;
    expect([...bytes.subarray(0, 6)]).toEqual([0x93, 0x4e, 0x55, 0x4d, 0x50, 0x59]);
    const headerLength = bytes.readUInt16LE(8);
    const header = bytes.subarray(10, 10 + headerLength).toString('latin1');
    const m = /'shape': \((\d+), (\d+)\)/.exec(header);
    expect(header).toMatch(/'descr': '\|u1'/);
    const [rows, cols] = [Number(m![1]), Number(m![2])];
    const heights = bytes.subarray(10 + headerLength);
    expect(heights.length).toBe(rows * cols);
    // one cell by an HTTP byte range (RFC 9110 §14): the origin's height, as the viewer's readout reads it
    const origin = run.stats!.origin as number[];
    const at = 10 + headerLength + origin[0]! * cols + origin[1]!;
    const cell = await as(h.http.get(`/api/runs/${run.id}/arrays/heights.npy`), author).set('Range', `bytes=${at}-${at}`).buffer(true).parse(binary);
    expect(cell.status).toBe(206);
    expect(cell.headers['content-range']).toBe(`bytes ${at}-${at}/${bytes.length}`);
    expect([...(cell.body as Buffer)]).toEqual([bytes[at]]);
    // a whole number of pixels per cell at the deepest level
    const ppc = info.width / cols;
    expect(Number.isInteger(ppc)).toBe(true);
    expect(info.height / rows).toBe(ppc);

    const colourOf = new Map<number, string>();
    const heightOf = new Map<string, number>();
    let etag = '';
    for (let y0 = 0; y0 < info.height; y0 += tileSize) {
      for (let x0 = 0; x0 < info.width; x0 += tileSize) {
        const w = Math.min(tileSize, info.width - x0);
        const hh = Math.min(tileSize, info.height - y0);
        const region = w === info.width && hh === info.height ? 'full' : `${x0},${y0},${w},${hh}`;
        const res = await as(h.http.get(pathOf(iiifUrl(info.id, region, `${w},${hh}`))), author).buffer(true).parse(binary);
        expect(res.status, `${region}`).toBe(200);
        expect(res.headers['content-type']).toBe('image/png');
        expect(res.headers['cache-control']).toBe('private, max-age=86400');
        etag = res.headers.etag as string;
        const { data, info: raw } = await sharp(res.body as Buffer).ensureAlpha().raw().toBuffer({ resolveWithObject: true });
        expect([raw.width, raw.height]).toEqual([w, hh]);
        // no smoothing: every pixel of a cell's block has that cell's colour, the same for equal heights
        for (let py = 0; py < hh; py++) {
          for (let px = 0; px < w; px++) {
            const hgt = heights[Math.floor((y0 + py) / ppc) * cols + Math.floor((x0 + px) / ppc)]!;
            const p = (py * w + px) * 4;
            const colour = `${data[p]},${data[p + 1]},${data[p + 2]},${data[p + 3]}`;
            if ((colourOf.get(hgt) ?? colour) !== colour || (heightOf.get(colour) ?? hgt) !== hgt) {
              throw new Error(`pixel (${x0 + px}, ${y0 + py}) of height ${hgt} has colour ${colour}`);
            }
            colourOf.set(hgt, colour);
            heightOf.set(colour, hgt);
          }
        }
      }
    }
    expect(etag).toMatch(/^"/);
    // stable heights on Z^2 are 0..3 (the threshold rule, common practice) and all four occur for n = 1000
    expect([...colourOf.keys()].sort()).toEqual([0, 1, 2, 3]);
  });

  it('answers a conditional GET of a tile with 304', async () => {
    const info = (await as(h.http.get(`${viewBase()}/info.json`), author)).body;
    const t = info.tiles[0].width as number;
    const path = pathOf(iiifUrl(info.id, `0,0,${t},${t}`, `${t},${t}`));
    const first = await as(h.http.get(path), author).expect(200);
    const again = await as(h.http.get(path), author).set('If-None-Match', first.headers.etag as string);
    expect(again.status).toBe(304);
  });

  it('streams odometer.npy and run.json; their numbers match the run', async () => {
    const sidecar = await as(h.http.get(`/api/runs/${run.id}/arrays/run.json`), author).expect(200);
    expect(sidecar.headers['content-type']).toMatch(/^application\/json/);
    // 18,226 topplings for n = 1000 on Z^2: regression value from an independent computation (not published)
    expect(JSON.parse(sidecar.text ?? JSON.stringify(sidecar.body)).stats.totalTopplings).toBe('18226');
    const odo = await as(h.http.get(`/api/runs/${run.id}/arrays/odometer.npy`), author).buffer(true).parse(binary);
    const bytes = odo.body as Buffer;
    const len = bytes.readUInt16LE(8);
    expect(bytes.subarray(10, 10 + len).toString('latin1')).toMatch(/'descr': '<i8'/);
    let total = 0n;
    let sites = 0;
    for (let k = 10 + len; k < bytes.length; k += 8) {
      const u = bytes.readBigInt64LE(k);
      total += u;
      if (u > 0n) sites++;
    }
    // the same independent computation: 421 sites toppled at least once
    expect({ total, sites }).toEqual({ total: 18226n, sites: 421 });
  });

  it('hides the run from strangers and signed-out readers (404, not 401 or 403)', async () => {
    expect((await as(h.http.get(`${viewBase()}/info.json`), outsider)).status).toBe(404);
    expect((await h.http.get(`${viewBase()}/info.json`)).status).toBe(404);
    expect((await h.http.get(`/api/runs/${run.id}/arrays/heights.npy`)).status).toBe(404);
  });

  it('answers a missing tile or layer with a 404 in the error format that no cache keeps', async () => {
    const tile = await as(h.http.get(`${viewBase()}/0,0,1,1/1,1/0/default.png`), author);
    expect(tile.headers['cross-origin-resource-policy']).toBe('same-origin');
    expect(tile.status).toBe(404);
    expect(tile.headers['cache-control']).toBe('no-store');
    expect(typeof tile.body.error).toBe('string');
    const layer = await as(h.http.get(`/api/runs/${run.id}/views/difference/tidewater/iiif/info.json`), author);
    expect(layer.status).toBe(404);
    const badLayer = await as(h.http.get(`/api/runs/${run.id}/views/sideways/tidewater/iiif/info.json`), author);
    expect(badLayer.status).toBe(400);
    const badPalette = await as(h.http.get(`/api/runs/${run.id}/views/heights/rainbow/iiif/info.json`), author);
    expect(badPalette.status).toBe(400);
  });
});

describe('keys never leave the view prefix', () => {
  it('refuses dot segments, backslashes and encoded separators, even for a public run', async () => {
    await h.deps.db.insert(figures).values({ slug: `public-${h.tag}`, title: 'Public pile', runId: run.id, createdById: run.author.id, publishedAt: new Date() }).onConflictDoNothing();
    const v = viewBase();
    const attempts = [
      `${v}/../../arrays/heights.npy`,
      `${v}/..%2F..%2Farrays%2Fheights.npy`,
      `${v}/%2e%2e/%2e%2e/arrays/heights.npy`,
      `${v}/%2E%2E%2F%2E%2E%2Farrays%2Fheights.npy`,
      `${v}/..\\..\\arrays\\heights.npy`,
      `${v}/..%5c..%5carrays%5cheights.npy`,
      `${v}/./info.json`,
      `${v}/full/max/0/..`,
      `${v}/info.json%00.png`,
      `/api/runs/${run.id}/views/heights/tidewater/..%2F..%2F..%2Fruns/iiif/info.json`,
      `/api/runs/${run.id}/views/heights/tidewater~clear/iiif/../../../../uploads/x.npy`,
      `/api/figures/public-${h.tag}/views/heights/tidewater/iiif/%2e%2e%2f%2e%2e%2farrays%2fheights.npy`,
    ];
    for (const path of attempts) {
      const res = await rawGet(path);
      expect({ path, status: res.status }).toMatchObject({ status: expect.toSatisfy((s: number) => s === 400 || s === 404) });
      expect(JSON.parse(res.body).error, path).toEqual(expect.any(String));
    }
    // the same server still answers a plain request
    expect((await rawGet(`${v}/info.json`)).status).toBe(200);
  });
});

describe('views of a published run', () => {
  it('are public, cached for a year, and also addressed by the figure slug', async () => {
    await h.deps.db.insert(figures).values({ slug: `public-${h.tag}`, title: 'Public pile', runId: run.id, createdById: run.author.id, publishedAt: new Date() }).onConflictDoNothing();
    const info = await h.http.get(`${viewBase()}/info.json`).expect(200);
    expect(info.headers['cache-control']).toBe('public, max-age=3600');
    const tilePath = pathOf(iiifUrl(info.body.id, 'full', `${info.body.sizes[0].width},${info.body.sizes[0].height}`));
    const tile = await h.http.get(tilePath).expect(200);
    expect(tile.headers['cache-control']).toBe('public, max-age=31536000, immutable');
    // readers' viewers on other sites may embed a published view
    expect(tile.headers['cross-origin-resource-policy']).toBe('cross-origin');

    const bySlug = await h.http.get(`/api/figures/public-${h.tag}/views/heights/tidewater/iiif/info.json`).expect(200);
    expect(bySlug.body.id).toBe(`${h.env.PUBLIC_URL}/api/figures/public-${h.tag}/views/heights/tidewater/iiif`);
    await h.http.get(pathOf(iiifUrl(bySlug.body.id, 'full', `${info.body.sizes[0].width},${info.body.sizes[0].height}`))).expect(200);
    const download = await h.http.get(`/api/figures/public-${h.tag}/arrays/heights.npy`).expect(200);
    expect(download.headers['content-disposition']).toMatch(new RegExp(`^attachment; filename="?public-${h.tag}-heights.npy"?$`));
  });
});

describe('the outcome mail', () => {
  it('goes out once for a long run, linking to its page, and not for a short one', async () => {
    expect(await sendRunOutcomeMail(h.deps, run.id)).toBe('short');
    expect(await sendRunOutcomeMail(h.deps, run.id, { minSeconds: 0 })).toBe('sent');
    expect(await sendRunOutcomeMail(h.deps, run.id, { minSeconds: 0 })).toBe('already-sent');
    const mail = await waitForMail(h.env, authorEmail, /Run ready: Tiled pile/);
    expect(mail.text).toContain(`${h.env.PUBLIC_URL}/runs/${run.id}`);
    expect(mail.text).toContain('n = 1,000 grains');
    // the wait since submission and, as on the run page, the farm's own time
    expect(mail.text).toMatch(/is ready, \d+ s after you submitted it \(\d+ s of farm time\)\./);
  });
});
