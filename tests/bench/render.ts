/**
 * `npm run bench:render`: speed and memory of the tiled pyramid renderer (renderer/src/render),
 * reported as rates and as ratios against a baseline measured in the same run, never as timed tests.
 *
 *   --sizes 4096,8192   side lengths of the synthetic square planes (default 4096,8192)
 *   --no-s3             skip the uploads to the local S3 fake
 *   --no-baseline       skip the whole-image baseline
 *
 * Input: i.i.d. uniform heights 0..3 from a seeded generator, every cell toppled. The speed hardly
 * depends on the pattern; random heights are close to the worst case for PNG compression, so real
 * piles (large periodic patches) encode a little faster and smaller.
 *
 * Cases, each in its own child process so peak RSS (getrusage maxRSS) belongs to one case:
 * - stream/folder, stream/s3: renderPyramid to a folder sink, or to s3rver (running in this parent
 *   process, so its memory and CPU are not billed to the child's RSS; it shares the two cores);
 * - baseline: the obvious alternative the issue rules out, building the full RGB image in memory and
 *   letting sharp cut it (`.tile({ layout: 'iiif3' })`, palette PNGs at the same settings).
 * The input arrays themselves (heights, odometer, toppled: 13 bytes per cell) are part of every
 * child's RSS; "rss over input" subtracts the RSS measured right after they were filled.
 */
import { mkdtempSync, rmSync } from 'node:fs';
import type { AddressInfo } from 'node:net';
import { availableParallelism, tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { parseArgs } from 'node:util';
import S3rver from 's3rver';
import sharp from 'sharp';
import {
  computeStats,
  createFolderSink,
  createS3Client,
  createS3Sink,
  packColourTable,
  planeOf,
  planPyramid,
  renderPyramid,
  tileCount,
  type RenderInput,
} from '../../renderer/src/render/index.js';
import { colourTable, paletteById } from '../../shared/palettes.js';
import { runInChild } from './child-case.js';
import { pyramidSeconds } from '../../shared/estimate.js';

const BUCKET = 'bench-tiles';
const TARGET_CELLS = 5e7;

interface CaseSpec {
  kind: 'stream' | 'baseline';
  side: number;
  sink: 'folder' | 's3';
  dir: string;
  endpoint?: string;
}

interface CaseResult extends CaseSpec {
  seconds: number;
  cells: number;
  tiles: number;
  bytes: number;
  maxRssBytes: number;
  inputRssBytes: number;
}

function syntheticInput(side: number): RenderInput {
  const n = side * side;
  const heights = new Int32Array(n);
  let s = 12345;
  for (let i = 0; i < n; i++) {
    s = (Math.imul(s, 1664525) + 1013904223) >>> 0;
    heights[i] = s >>> 30;
  }
  const odometer = new Float64Array(n).fill(1);
  const toppled = new Uint8Array(n).fill(1);
  return { shape: [side, side], origin: [side >> 1, side >> 1], heights, odometer, toppled };
}

async function runCase(spec: CaseSpec): Promise<CaseResult> {
  const input = syntheticInput(spec.side);
  const inputRssBytes = process.memoryUsage().rss;
  const cells = spec.side * spec.side;
  const t0 = performance.now();
  let tiles: number;
  let bytes = 0;
  if (spec.kind === 'stream') {
    const sink =
      spec.sink === 's3'
        ? createS3Sink({ client: createS3Client({ endpoint: spec.endpoint!, region: 'us-east-1', accessKeyId: 'S3RVER', secretAccessKey: 'S3RVER' }), bucket: BUCKET })
        : createFolderSink(spec.dir);
    const res = await renderPyramid(input, sink, { runId: `bench-${spec.side}`, pixelsPerCell: 1 });
    tiles = res.tiles;
    bytes = res.bytes;
  } else {
    // the whole full-resolution RGB image in memory, then sharp's own tiler
    const plane = planeOf(input);
    const stats = computeStats(plane);
    const lut = packColourTable(colourTable(paletteById('tidewater'), 'heights', stats, 'neutral'));
    const rgb = Buffer.alloc(cells * 3);
    for (let i = 0; i < cells; i++) {
      const c = lut[1 + input.heights[i]];
      rgb[3 * i] = c & 255;
      rgb[3 * i + 1] = (c >>> 8) & 255;
      rgb[3 * i + 2] = (c >>> 16) & 255;
    }
    await sharp(rgb, { raw: { width: spec.side, height: spec.side, channels: 3 }, limitInputPixels: false })
      .png({ palette: true, colours: 256, dither: 0, effort: 10, compressionLevel: 6 })
      .tile({ size: 256, overlap: 0, layout: 'iiif3', id: '/tiles' })
      .toFile(join(spec.dir, 'baseline'));
    tiles = tileCount(planPyramid({ cellsWide: spec.side, cellsHigh: spec.side, pixelsPerCell: 1 }));
  }
  const seconds = (performance.now() - t0) / 1000;
  return { ...spec, seconds, cells, tiles, bytes, maxRssBytes: process.resourceUsage().maxRSS * 1024, inputRssBytes };
}

const spawnCase = (spec: CaseSpec) => runInChild<CaseResult>(fileURLToPath(import.meta.url), spec, `${spec.kind}/${spec.sink}/${spec.side}`);

const mb = (b: number) => `${(b / 2 ** 20).toFixed(0)} MB`;
const grouped = (n: number) => Math.round(n).toLocaleString('en-US');

async function main(): Promise<void> {
  const { values } = parseArgs({
    options: { case: { type: 'string' }, sizes: { type: 'string' }, 'no-s3': { type: 'boolean' }, 'no-baseline': { type: 'boolean' } },
  });
  if (values.case) {
    process.stdout.write(`${JSON.stringify(await runCase(JSON.parse(values.case) as CaseSpec))}\n`);
    return;
  }
  const sizes = (values.sizes ?? '4096,8192').split(',').map((v) => Number(v));
  if (sizes.some((s) => !Number.isInteger(s) || s < 256 || s > 16384)) {
    console.error('--sizes: expected side lengths from 256 to 16384, e.g. --sizes 4096,8192');
    process.exit(2);
  }
  const root = mkdtempSync(join(tmpdir(), 'tw-bench-render-'));
  let server: S3rver | null = null;
  let endpoint: string | undefined;
  try {
    if (!values['no-s3']) {
      server = new S3rver({ address: '127.0.0.1', port: 0, silent: true, directory: join(root, 's3'), configureBuckets: [{ name: BUCKET, configs: [] }] });
      endpoint = `http://127.0.0.1:${((await server.run()) as AddressInfo).port}`;
    }
    console.log(`render bench: ${availableParallelism()} cores, sharp ${sharp.versions.sharp} / libvips ${sharp.versions.vips}; heights 0..3 i.i.d., palette tidewater, 256-px palette PNG tiles`);
    const results: CaseResult[] = [];
    for (const side of sizes) {
      const specs: CaseSpec[] = [{ kind: 'stream', side, sink: 'folder', dir: join(root, `folder-${side}`) }];
      if (endpoint) specs.push({ kind: 'stream', side, sink: 's3', dir: root, endpoint });
      if (!values['no-baseline']) specs.push({ kind: 'baseline', side, sink: 'folder', dir: join(root, `baseline-${side}`) });
      for (const spec of specs) {
        const r = await spawnCase(spec);
        results.push(r);
        console.log(
          `${`${r.kind}/${r.sink}`.padEnd(16)} ${String(side).padStart(5)}²  ${r.seconds.toFixed(2).padStart(6)} s  ` +
            `${grouped(r.cells / r.seconds).padStart(11)} cells/s  ${(r.tiles / r.seconds).toFixed(0).padStart(4)} tiles/s (${r.tiles} tiles` +
            `${r.bytes ? `, ${mb(r.bytes)}` : ''})  peak RSS ${mb(r.maxRssBytes)}, over input ${mb(r.maxRssBytes - r.inputRssBytes)}`,
        );
        // keep the bucket itself: s3rver keeps it as a folder named after it
        rmSync(spec.sink === 's3' ? join(root, 's3', BUCKET, 'runs') : spec.dir, { recursive: true, force: true });
      }
    }
    console.log('\nratios (stream ÷ baseline, same size; below 1 is better):');
    for (const side of sizes) {
      const s = results.find((r) => r.kind === 'stream' && r.sink === 'folder' && r.side === side);
      const b = results.find((r) => r.kind === 'baseline' && r.side === side);
      if (s && b) {
        console.log(
          `  ${side}²: time ${(s.seconds / b.seconds).toFixed(2)}, peak RSS ${(s.maxRssBytes / b.maxRssBytes).toFixed(2)}, ` +
            `RSS over input ${((s.maxRssBytes - s.inputRssBytes) / (b.maxRssBytes - b.inputRssBytes)).toFixed(2)}`,
        );
      }
    }
    // the run form's prediction of drawing time (shared/estimate.ts) against what was measured here
    console.log('\nestimator (shared/estimate.ts pyramidSeconds) against the measured time, per pyramid:');
    for (const r of results.filter((q) => q.kind === 'stream')) {
      const predicted = pyramidSeconds([r.side, r.side]);
      console.log(`  ${r.sink.padEnd(6)} ${String(r.side).padStart(5)}²: predicted ${predicted.toFixed(2)} s, measured ${r.seconds.toFixed(2)} s, error ${(((predicted - r.seconds) / r.seconds) * 100).toFixed(0)} %`);
    }
    const target = planPyramid({ cellsWide: Math.ceil(Math.sqrt(TARGET_CELLS)), cellsHigh: Math.ceil(Math.sqrt(TARGET_CELLS)), pixelsPerCell: 1 });
    console.log(`\nextrapolated to ${grouped(TARGET_CELLS)} cells (a 10^8-grain run, ${target.width}² pixels, ${tileCount(target)} tiles), from the largest size:`);
    const largest = Math.max(...sizes);
    for (const r of results.filter((q) => q.kind === 'stream' && q.side === largest)) {
      console.log(`  ${r.sink.padEnd(6)} ${(TARGET_CELLS / (r.cells / r.seconds)).toFixed(1)} s by cell rate, ${(tileCount(target) / (r.tiles / r.seconds)).toFixed(1)} s by tile rate`);
    }
  } finally {
    await server?.close();
    rmSync(root, { recursive: true, force: true });
  }
}

await main();
