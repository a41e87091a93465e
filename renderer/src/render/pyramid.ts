import { availableParallelism } from 'node:os';
import { colourTable, layerStyleSchema, legendFor, paletteById, type LayerStats, type LayerStyle, type Legend, type ViewLegend } from '../../../shared/palettes.js';
import { encodeIndexedPng, packColourTable } from './encode.js';
import { RenderInputError } from './errors.js';
import { iiifPrefix, legendKeyOf, previewKeyOf, viewPrefix } from './keys.js';
import { indexHistogram, layerScale, type LayerScale } from './layers.js';
import { planeOf, type BackgroundSource, type Plane, type RenderInput } from './plane.js';
import { fullImagePath, infoJson, planPyramid, tileAliases, tileCount, tileRequest, type IiifInfo, type PyramidPlan } from './plan.js';
import { reduce2x2, tiePriority } from './reduce.js';
import type { TileSink } from './sink.js';
import { computeStats } from './stats.js';
import { walkPyramid } from './walk.js';

export const PREVIEW_MAX_SIDE = 1024;

export interface ViewOptions {
  /** layer, palette and untoppled style; defaults: heights, tidewater, neutral */
  style?: Partial<LayerStyle>;
  /** background of the run, required for the difference layer */
  background?: BackgroundSource;
  /** slice of a 3-D run (default: the source's slice) */
  z?: number;
  /** power of two; default from defaultPixelsPerCell (≥ 1024 px on the longer side, at most 64) */
  pixelsPerCell?: number;
  /** stats computed earlier for this run and plane (saves one pass) */
  stats?: LayerStats;
}

export interface PyramidOptions extends ViewOptions {
  runId: string;
  /** base of the public tile address; info.json's id is `${publicBase}/${key prefix}/iiif` (default '/tiles') */
  publicBase?: string;
  /** tiles encoded and uploaded at once (default 2 × cores + 2) */
  concurrency?: number;
  onProgress?: (done: number, total: number) => void;
  signal?: AbortSignal;
}

export interface PyramidResult {
  prefix: string;
  infoKey: string;
  previewKey: string;
  legendKey: string;
  plan: PyramidPlan;
  stats: LayerStats;
  legend: Legend;
  info: IiifInfo;
  /** objects written, including info.json, legend and preview */
  objects: number;
  tiles: number;
  bytes: number;
  preview: { width: number; height: number };
}

interface Prepared {
  style: LayerStyle;
  plane: Plane;
  plan: PyramidPlan;
  stats: LayerStats;
  scale: LayerScale;
  priority: Uint8Array;
  lut: Uint32Array;
  previewLevel: number;
}

function prepare(input: RenderInput, opts: ViewOptions): Prepared {
  const parsed = layerStyleSchema.safeParse(opts.style ?? {});
  if (!parsed.success) throw new RenderInputError(`bad layer style: ${parsed.error.issues.map((i) => `${i.path.join('.')}: ${i.message}`).join('; ')}`);
  const style = parsed.data;
  if (style.layer === 'difference' && !opts.background) throw new RenderInputError('the difference layer needs the background of the run');
  const plane = planeOf(input, { z: opts.z, background: opts.background });
  const plan = planPyramid({ cellsWide: plane.width, cellsHigh: plane.height, pixelsPerCell: opts.pixelsPerCell });
  const stats = opts.stats && (style.layer !== 'difference' || opts.stats.minDifference !== undefined) ? opts.stats : computeStats(plane);
  const scale = layerScale(style.layer, stats);
  const priority = tiePriority(indexHistogram(plane, scale));
  const lut = packColourTable(colourTable(paletteById(style.palette), style.layer, stats, style.untoppled));
  const previewLevel = plan.levels.findIndex((l) => Math.max(l.width, l.height) <= PREVIEW_MAX_SIDE);
  return { style, plane, plan, stats, scale, priority, lut, previewLevel };
}

/** Whole-level images for levels ≥ from, filled as their tiles go by. */
function levelCanvases(plan: PyramidPlan, from: number): Map<number, Uint8Array> {
  const m = new Map<number, Uint8Array>();
  for (let l = from; l < plan.levels.length; l++) m.set(l, new Uint8Array(plan.levels[l].width * plan.levels[l].height));
  return m;
}

function paste(canvas: Uint8Array, canvasWidth: number, x: number, y: number, tile: Uint8Array, w: number, h: number): void {
  for (let r = 0; r < h; r++) canvas.set(tile.subarray(r * w, r * w + w), (y + r) * canvasWidth + x);
}

/**
 * Render one layer of a run as a IIIF level-0 pyramid of palette PNGs, streamed to `sink` under the
 * layout of keys.ts, then the preview, the legend and last info.json.
 * @example await renderPyramid(outcome, createS3Sink({ client, bucket }), { runId: 'r1', style: { layer: 'odometer' } })
 * @throws RenderInputError for inconsistent arrays, unknown styles or a missing background
 */
export async function renderPyramid(input: RenderInput, sink: TileSink, opts: PyramidOptions): Promise<PyramidResult> {
  const p = prepare(input, opts);
  const { plan, style } = p;
  const prefix = viewPrefix(opts.runId, style.layer, style.palette, style.untoppled === 'transparent');
  const iiif = iiifPrefix(prefix);
  const total = tileCount(plan);
  const canvases = levelCanvases(plan, p.previewLevel);
  const limit = Math.max(1, opts.concurrency ?? 2 * availableParallelism() + 2);
  const inflight = new Set<Promise<void>>();
  let failure: unknown = null;
  let done = 0;
  let bytes = 0;
  let objects = 0;

  const put = async (key: string, body: Buffer, type: string) => {
    await sink.put(key, body, type);
    bytes += body.length;
    objects++;
  };
  const schedule = async (task: () => Promise<void>) => {
    while (inflight.size >= limit) await Promise.race(inflight);
    if (failure) throw failure;
    const run = task().then(
      () => void inflight.delete(run),
      (err) => {
        failure ??= err;
        inflight.delete(run);
      },
    );
    inflight.add(run);
  };

  try {
    await walkPyramid(
      p.plane,
      plan,
      p.scale,
      p.priority,
      async (level, column, row, indices, width, height) => {
        const canvas = canvases.get(level);
        if (canvas) paste(canvas, plan.levels[level].width, column * plan.tileSize, row * plan.tileSize, indices, width, height);
        const req = tileRequest(plan, level, column, row);
        await schedule(async () => {
          const png = await encodeIndexedPng(indices, width, height, p.lut);
          await put(`${iiif}/${req.path}`, png, 'image/png');
          for (const alias of tileAliases(plan, req)) await put(`${iiif}/${alias}`, png, 'image/png');
          opts.onProgress?.(++done, total);
        });
      },
      opts.signal,
    );
  } finally {
    // never return (or throw) while uploads are still running
    await Promise.all(inflight);
  }
  if (failure) throw failure;

  // whole-image sizes advertised in info.json; single-tile levels already have them as their tile
  let previewPng: Buffer | null = null;
  for (const [level, canvas] of canvases) {
    const l = plan.levels[level];
    const png = await encodeIndexedPng(canvas, l.width, l.height, p.lut);
    if (level === p.previewLevel) previewPng = png;
    if (l.columns * l.rows > 1) {
      await put(`${iiif}/${fullImagePath(plan, level)}`, png, 'image/png');
      // the full size is advertised in `sizes` too (a small pile's whole image is its own preview), and
      // a size is requested as w,h: store it under that path as well as the canonical `max`
      if (level === 0) await put(`${iiif}/full/${l.width},${l.height}/0/default.png`, png, 'image/png');
    }
  }
  const previewKey = previewKeyOf(prefix);
  await put(previewKey, previewPng!, 'image/png');

  const legend = legendFor(paletteById(style.palette), style.layer, p.stats, style.untoppled);
  const legendKey = legendKeyOf(prefix);
  const stored: ViewLegend = { style, stats: p.stats, legend, pixelsPerCell: plan.pixelsPerCell };
  await put(legendKey, Buffer.from(JSON.stringify(stored, null, 2)), 'application/json');

  const base = (opts.publicBase ?? '/tiles').replace(/\/+$/, '');
  const info = infoJson(plan, `${base}/${iiif}`, p.previewLevel);
  const infoKey = `${iiif}/info.json`;
  // last: a view whose info.json exists is complete
  await put(infoKey, Buffer.from(JSON.stringify(info, null, 2)), 'application/json');

  const pl = plan.levels[p.previewLevel];
  return { prefix, infoKey, previewKey, legendKey, plan, stats: p.stats, legend, info, objects, tiles: total, bytes, preview: { width: pl.width, height: pl.height } };
}

/**
 * A PNG of the whole pile with the longer side at most maxSide pixels (default 1024), built by the
 * same reduction as the pyramid, for run lists and the run page.
 */
export async function renderPreview(input: RenderInput, opts: ViewOptions & { maxSide?: number } = {}): Promise<{ png: Buffer; width: number; height: number; stats: LayerStats }> {
  const maxSide = opts.maxSide ?? PREVIEW_MAX_SIDE;
  if (!Number.isInteger(maxSide) || maxSide < 1) throw new RenderInputError(`maxSide must be a positive integer, received ${maxSide}`);
  const p = prepare(input, opts);
  const levels = p.plan.levels;
  const fits = levels.findIndex((l) => Math.max(l.width, l.height) <= maxSide);
  // below one tile the pyramid stops; smaller previews go on with the same 2×2 rule
  const level = fits >= 0 ? fits : levels.length - 1;
  const l = levels[level];
  let img: { data: Uint8Array; width: number; height: number } = { data: new Uint8Array(l.width * l.height), width: l.width, height: l.height };
  // levels below the preview level are still walked because the reduction is iterated; their tiles are not kept
  await walkPyramid(p.plane, p.plan, p.scale, p.priority, (lv, c, r, idx, w, h) => {
    if (lv === level) paste(img.data, l.width, c * p.plan.tileSize, r * p.plan.tileSize, idx, w, h);
  });
  while (Math.max(img.width, img.height) > maxSide) img = reduce2x2(img.data, img.width, img.height, p.priority);
  return { png: await encodeIndexedPng(img.data, img.width, img.height, p.lut), width: img.width, height: img.height, stats: p.stats };
}
