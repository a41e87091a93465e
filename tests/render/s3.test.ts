import { readFile, rm } from 'node:fs/promises';
import { join } from 'node:path';
import type { AddressInfo } from 'node:net';
import { GetObjectCommand, ListObjectsV2Command, type S3Client } from '@aws-sdk/client-s3';
import S3rver from 's3rver';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import {
  allTiles,
  computeStats,
  createFolderSink,
  createS3Client,
  createS3Sink,
  decodePngRgba,
  layerIndices,
  layerScale,
  planeOf,
  renderPyramid,
} from '../../renderer/src/render/index.js';
import { colourTable, paletteById } from '../../shared/palettes.js';
import { randomInput, sameColour, tempDir } from './helpers.js';

// The real local S3 fake (s3rver) on an ephemeral port with a temporary folder.
const Bucket = 'tiles-test';
let dir: string;
let server: S3rver;
let client: S3Client;

beforeAll(async () => {
  dir = await tempDir('s3');
  server = new S3rver({ address: '127.0.0.1', port: 0, silent: true, directory: join(dir, 's3'), configureBuckets: [{ name: Bucket, configs: [] }] });
  const addr = (await server.run()) as AddressInfo;
  client = createS3Client({ endpoint: `http://127.0.0.1:${addr.port}`, region: 'us-east-1', accessKeyId: 'S3RVER', secretAccessKey: 'S3RVER' });
});

afterAll(async () => {
  client?.destroy();
  await server?.close();
  await rm(dir, { recursive: true, force: true });
});

const get = async (key: string) => {
  const out = await client.send(new GetObjectCommand({ Bucket, Key: key }));
  return { body: Buffer.from(await out.Body!.transformToByteArray()), type: out.ContentType, cache: out.CacheControl };
};

describe('uploading a pyramid to S3', () => {
  const input = randomInput(600, 520, 3, 9);

  it('stores every tile under the key layout, byte-identical to the folder sink, tiles readable back', async () => {
    const opts = { runId: 'run-s3', style: { layer: 'toppled' as const, palette: 'newsprint' as const }, pixelsPerCell: 1 };
    const res = await renderPyramid(input, createS3Sink({ client, bucket: Bucket }), opts);
    const local = await renderPyramid(input, createFolderSink(join(dir, 'local')), opts);

    const keys: string[] = [];
    let token: string | undefined;
    do {
      const page = await client.send(new ListObjectsV2Command({ Bucket, Prefix: `${res.prefix}/`, ContinuationToken: token }));
      keys.push(...(page.Contents ?? []).map((c) => c.Key!));
      token = page.NextContinuationToken;
    } while (token);
    expect(keys.length).toBe(res.objects);
    expect(keys).toContain('runs/run-s3/toppled/newsprint/iiif/info.json');

    // a deepest-level edge tile read back through the S3 client matches the arrays pixel for pixel
    const tile = [...allTiles(res.plan)].find((t) => t.level === 0 && t.column === 2 && t.row === 2)!;
    expect(tile.path).toBe('512,512,88,8/88,8/0/default.png');
    const got = await get(`${res.prefix}/iiif/${tile.path}`);
    expect(got.type).toBe('image/png');
    expect(got.cache).toContain('immutable');
    expect(got.body.equals(await readFile(join(dir, 'local', local.prefix, 'iiif', tile.path)))).toBe(true);
    const plane = planeOf(input);
    const stats = computeStats(plane);
    const table = colourTable(paletteById('newsprint'), 'toppled', stats, 'neutral');
    const want = layerIndices(plane, layerScale('toppled', stats), { x: tile.x, y: tile.y, width: tile.w, height: tile.h });
    const { data, width, height } = await decodePngRgba(got.body);
    expect([width, height]).toEqual([88, 8]);
    for (let p = 0; p < want.length; p++) expect(sameColour(data, p, table[want[p]])).toBe(true);

    const info = JSON.parse((await get(res.infoKey)).body.toString('utf8'));
    expect(info).toMatchObject({ type: 'ImageService3', width: 600, height: 520, id: '/tiles/runs/run-s3/toppled/newsprint/iiif' });
  });
});
