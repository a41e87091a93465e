import { readFile, rm } from 'node:fs/promises';
import sharp from 'sharp';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { resolveProblem, stabilize } from '../../renderer/src/engine/index.js';
import {
  allTiles,
  backgroundFromLattice,
  computeStats,
  createFolderSink,
  decodePngRgba,
  indexHistogram,
  layerIndices,
  layerScale,
  planeOf,
  reduce2x2,
  renderPreview,
  renderPyramid,
  tiePriority,
  type PyramidResult,
  type RenderInput,
  type TileSink,
} from '../../renderer/src/render/index.js';
import { colourTable, paletteById, type Layer, type Rgba } from '../../shared/palettes.js';
import { runSpecSchema } from '../../shared/run-spec.js';
import { listFiles, randomInput, sameColour, tempDir } from './helpers.js';

let dir: string;
beforeAll(async () => {
  dir = await tempDir('pyramid');
});
afterAll(async () => {
  await rm(dir, { recursive: true, force: true });
});

/** Decode a stored PNG back to palette indices through the layer's colour table (colours are distinct). */
async function decodeIndices(path: string, table: Rgba[]): Promise<{ idx: Uint8Array; width: number; height: number }> {
  const { data, width, height } = await decodePngRgba(await readFile(path));
  const idx = new Uint8Array(width * height);
  for (let p = 0; p < width * height; p++) {
    const i = table.findIndex((c) => sameColour(data, p, c));
    if (i < 0) throw new Error(`pixel ${p} of ${path} has a colour outside the palette: ${[...data.subarray(4 * p, 4 * p + 4)]}`);
    idx[p] = i;
  }
  return { idx, width, height };
}

async function renderToFolder(input: RenderInput, runId: string, layer: Layer, extra: Parameters<typeof renderPyramid>[2] extends infer O ? Partial<O> : never = {}) {
  const sink = createFolderSink(dir);
  const res = await renderPyramid(input, sink, { runId, style: { layer, palette: 'tidewater', ...extra.style }, ...extra });
  return res;
}

describe('the A349990 diamond (n = 25 on the square lattice), from the real engine', () => {
  // OEIS A349990 EXAMPLE: 25 grains at the origin of Z^2 stabilise to the diamond
  //   1 / 2 3 2 / 1 3 1 3 1 / 2 3 2 / 1   (13 nonempty sites)
  const diamond = [
    [0, 0, 1, 0, 0],
    [0, 2, 3, 2, 0],
    [1, 3, 1, 3, 1],
    [0, 2, 3, 2, 0],
    [0, 0, 1, 0, 0],
  ];
  let outcome: RenderInput;
  let res: PyramidResult;
  beforeAll(async () => {
    outcome = await stabilize(resolveProblem(runSpecSchema.parse({ lattice: { preset: 'square' }, chips: 25 })));
    res = await renderToFolder(outcome, 'a349990-25', 'heights');
  });

  it('is drawn with 64×64-pixel cells: 320 px, four tiles plus one at half size', async () => {
    expect(outcome.shape).toEqual([5, 5]);
    expect(res.plan.pixelsPerCell).toBe(64);
    expect(res.tiles).toBe(5);
    const table = colourTable(paletteById('tidewater'), 'heights', res.stats, 'neutral');
    const { data, width, height } = await decodePngRgba(await readFile(join(dir, res.prefix, 'iiif/full/max/0/default.png')));
    expect([width, height]).toEqual([320, 320]);
    for (let y = 0; y < 320; y++)
      for (let x = 0; x < 320; x++) {
        const h = diamond[Math.floor(y / 64)][Math.floor(x / 64)];
        if (!sameColour(data, y * 320 + x, table[1 + h])) throw new Error(`pixel ${x},${y} is not the colour of height ${h}`);
      }
    // 13 nonempty sites, as OEIS counts them
    expect(res.stats.heightCounts.slice(1).reduce((a, b) => a + b, 0)).toBe(13);
  });

  it('writes the documented keys, with info.json last', async () => {
    const files = await listFiles(join(dir, res.prefix));
    expect(files).toEqual([
      'iiif/0,0,256,256/256,256/0/default.png',
      'iiif/0,256,256,64/256,64/0/default.png',
      'iiif/256,0,64,256/64,256/0/default.png',
      'iiif/256,256,64,64/64,64/0/default.png',
      'iiif/full/160,160/0/default.png',
      'iiif/full/320,320/0/default.png',
      'iiif/full/max/0/default.png',
      'iiif/info.json',
      'legend.json',
      'preview.png',
    ]);
    const info = JSON.parse(await readFile(join(dir, res.infoKey), 'utf8'));
    expect(info.id).toBe('/tiles/runs/a349990-25/heights/tidewater/iiif');
    expect(info.sizes).toEqual([{ width: 160, height: 160 }, { width: 320, height: 320 }]);
    // a level-0 image service must answer every size it advertises as full/w,h (IIIF Image API 3.0, §5.3
    // "sizes": the w,h of each listed size can be requested); the whole image is also under its canonical full/max
    for (const z of info.sizes) expect(files).toContain(`iiif/full/${z.width},${z.height}/0/default.png`);
    const legend = JSON.parse(await readFile(join(dir, res.legendKey), 'utf8'));
    expect(legend.legend.entries.map((e: { label: string }) => e.label)).toEqual(['0', '1', '2', '3']);
  });

  it('puts info.json after every other object of the view', async () => {
    const order: string[] = [];
    const folder = createFolderSink(dir);
    const recording: TileSink = { put: async (k, b, t) => (order.push(k), folder.put(k, b, t)) };
    await renderPyramid(outcome, recording, { runId: 'order', style: { palette: 'kiln' } });
    expect(order.at(-1)).toBe('runs/order/heights/kiln/iiif/info.json');
    expect(order.filter((k) => k.endsWith('info.json'))).toHaveLength(1);
    expect(order).toHaveLength(5 + 1 + 1 + 1 + 1 + 1);
  });

  it('the toppled layer colours only the five sites that toppled, the rest transparent on request', async () => {
    const r = await renderToFolder(outcome, 'a349990-25', 'toppled', { style: { layer: 'toppled', untoppled: 'transparent' } });
    expect(r.prefix).toBe('runs/a349990-25/toppled/tidewater~clear');
    const { data } = await decodePngRgba(await readFile(join(dir, r.prefix, 'iiif/full/max/0/default.png')));
    let opaqueCells = 0;
    for (let cy = 0; cy < 5; cy++)
      for (let cx = 0; cx < 5; cx++) {
        const alpha = data[4 * ((cy * 64 + 32) * 320 + cx * 64 + 32) + 3];
        expect(alpha).toBe(outcome.toppled[cy * 5 + cx] ? 255 : 0);
        if (alpha) opaqueCells++;
      }
    // derived from the A349990 example: sites at distance 2 hold grains, so every site at distance 1
    // toppled; sites at distance 3 are empty, so none at distance 2 did: the centre and its 4 neighbours
    expect(opaqueCells).toBe(5);
    for (const [cx, cy] of [[2, 2], [1, 2], [3, 2], [2, 1], [2, 3]]) expect(data[4 * ((cy * 64 + 32) * 320 + cx * 64 + 32) + 3]).toBe(255);
  });
});

describe('a random 700×300 plane at one cell per pixel', () => {
  const input = randomInput(700, 300, 3, 42);
  const plane = planeOf(input);
  const stats = computeStats(plane);
  const layers: Layer[] = ['heights', 'toppled', 'odometer'];
  const results = new Map<Layer, PyramidResult>();
  beforeAll(async () => {
    for (const layer of layers) results.set(layer, await renderToFolder(input, 'rand700', layer, { pixelsPerCell: 1 }));
  });

  for (const layer of layers) {
    it(`${layer}: every deepest-level pixel is its cell's colour`, async () => {
      const res = results.get(layer)!;
      const table = colourTable(paletteById('tidewater'), layer, stats, 'neutral');
      const scale = layerScale(layer, stats);
      const tiles = [...allTiles(res.plan)].filter((t) => t.level === 0);
      expect(tiles).toHaveLength(3 * 2);
      for (const t of tiles) {
        const { data, width, height } = await decodePngRgba(await readFile(join(dir, res.prefix, 'iiif', t.path)));
        expect([width, height]).toEqual([t.width, t.height]);
        const want = layerIndices(plane, scale, { x: t.x, y: t.y, width: t.w, height: t.h });
        for (let p = 0; p < width * height; p++) if (!sameColour(data, p, table[want[p]])) throw new Error(`${t.path}: pixel ${p} differs`);
      }
    });
  }

  it('tiles are palette (colour-type 3) PNGs', async () => {
    const res = results.get('odometer')!;
    const t = [...allTiles(res.plan)][0];
    const meta = await sharp(join(dir, res.prefix, 'iiif', t.path)).metadata();
    expect(meta.format).toBe('png');
    expect(meta.isPalette).toBe(true);
  });

  it('each coarser level is the documented 2×2 mode of the level below', async () => {
    const res = results.get('heights')!;
    const table = colourTable(paletteById('tidewater'), 'heights', stats, 'neutral');
    const priority = tiePriority(indexHistogram(plane, layerScale('heights', stats)));
    // assemble each level from its stored tiles, then compare with the rule applied to the finer one
    const levels: Uint8Array[] = [];
    for (const l of res.plan.levels) {
      const img = new Uint8Array(l.width * l.height);
      for (const t of [...allTiles(res.plan)].filter((q) => q.level === l.level)) {
        const { idx, width, height } = await decodeIndices(join(dir, res.prefix, 'iiif', t.path), table);
        for (let r = 0; r < height; r++) img.set(idx.subarray(r * width, (r + 1) * width), (t.row * 256 + r) * l.width + t.column * 256);
      }
      levels.push(img);
    }
    for (let l = 1; l < levels.length; l++) {
      const finer = res.plan.levels[l - 1];
      expect(reduce2x2(levels[l - 1], finer.width, finer.height, priority).data).toEqual(levels[l]);
    }
  });

  it('the preview is the largest level within 1024 px; renderPreview gives the same picture', async () => {
    const res = results.get('heights')!;
    expect(res.preview).toEqual({ width: 700, height: 300 });
    const stored = await decodePngRgba(await readFile(join(dir, res.previewKey)));
    const alone = await renderPreview(input, { style: { layer: 'heights' }, pixelsPerCell: 1, maxSide: 400 });
    expect([alone.width, alone.height]).toEqual([350, 150]);
    // below one tile (the coarsest level is 175×75) the same rule goes on
    const tiny = await renderPreview(input, { style: { layer: 'heights' }, pixelsPerCell: 1, maxSide: 100 });
    expect([tiny.width, tiny.height]).toEqual([88, 38]);
    await expect(renderPreview(input, { maxSide: 0 })).rejects.toThrow(/maxSide must be a positive integer/);
    const full = await renderPreview(input, { style: { layer: 'heights' }, pixelsPerCell: 1 });
    expect((await decodePngRgba(full.png)).data.equals(stored.data)).toBe(true);
  });
});

describe('the difference layer on a random background, from the real engine', () => {
  it('colours heights minus the background the engine started from', async () => {
    const problem = resolveProblem(runSpecSchema.parse({ lattice: { preset: 'square' }, chips: 500, background: { kind: 'random', seed: 11, weights: [1, 1, 1] } }));
    const outcome = await stabilize(problem);
    const background = backgroundFromLattice(problem.background.heightAt, outcome);
    const res = await renderToFolder(outcome, 'diff500', 'difference', { background, pixelsPerCell: 1 });
    // mass balance (common practice): the sum of (height − background) over the box is the grains
    // that stayed, n minus what left; with no sink in the plane every grain stays
    let sum = 0;
    const bg = new Int32Array(outcome.heights.length);
    background({ x: 0, y: 0, width: outcome.shape[1], height: outcome.shape[0] }, bg);
    for (let i = 0; i < bg.length; i++) sum += outcome.heights[i] - bg[i];
    expect(sum).toBe(500);
    const stats = res.stats;
    const table = colourTable(paletteById('tidewater'), 'difference', stats, 'neutral');
    const { idx } = await decodeIndices(join(dir, res.prefix, 'iiif/full/max/0/default.png'), table);
    const want = layerIndices(planeOf(outcome, { background: bg }), layerScale('difference', stats), { x: 0, y: 0, width: outcome.shape[1], height: outcome.shape[0] });
    expect(idx).toEqual(want);
  });

  it('refuses the difference layer without a background', async () => {
    await expect(renderToFolder(randomInput(10, 10), 'nobg', 'difference')).rejects.toThrow(/needs the background/);
  });
});

describe('failures leave no info.json behind', () => {
  it('a sink that fails mid-way makes renderPyramid reject before info.json is written', async () => {
    const keys: string[] = [];
    let n = 0;
    const failing: TileSink = {
      async put(key) {
        if (++n === 4) throw new Error('disk full');
        keys.push(key);
      },
    };
    await expect(renderPyramid(randomInput(600, 600), failing, { runId: 'broken', pixelsPerCell: 1, concurrency: 2 })).rejects.toThrow('disk full');
    expect(keys.some((k) => k.endsWith('info.json'))).toBe(false);
    // nothing is still uploading once the promise has settled
    const settled = keys.length;
    await new Promise((r) => setTimeout(r, 200));
    expect(keys.length).toBe(settled);
  });

  it('rejects bad run ids and styles with clear messages', async () => {
    const sink = createFolderSink(dir);
    await expect(renderPyramid(randomInput(4, 4), sink, { runId: '../etc' })).rejects.toThrow(/run id must be/);
    await expect(renderPyramid(randomInput(4, 4), sink, { runId: 'ok', style: { palette: 'nope' as 'kiln' } })).rejects.toThrow(/bad layer style: palette/);
  });
});
