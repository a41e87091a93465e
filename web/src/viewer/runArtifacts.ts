import { z } from 'zod';
import { runSpecSchema } from '../../../shared/run-spec.js';
import { runStatsSchema } from '../../../shared/run-stats.js';
import type { LayerStats } from '../../../shared/palettes.js';
import { readNpy } from '../../../renderer/src/npy/read.js';
import { planeOf } from '../../../renderer/src/render/plane.js';
import { computeStats } from '../../../renderer/src/render/stats.js';

/**
 * A run's stored artifacts as the browser reads them: run.json (the worker's sidecar, see
 * renderer/src/farm/compute-run.ts) and the two arrays. Read leniently: only the fields the pages use
 * are checked, so a sidecar that grows new fields keeps working.
 */

const arrayRecord = z.object({
  dtype: z.string(),
  shape: z.array(z.number().int().min(1)),
  origin: z.array(z.number().int()),
  sha256: z.string(),
});

export const radialProfileSchema = z.object({
  binWidth: z.number().positive(),
  meanHeight: z.array(z.number().nullable()),
  sites: z.array(z.number().int().min(0)),
});
export type RadialProfileJson = z.infer<typeof radialProfileSchema>;

export const runJsonSchema = z.object({
  engineVersion: z.string(),
  spec: runSpecSchema,
  heights: arrayRecord,
  odometer: arrayRecord.nullable(),
  stats: runStatsSchema,
  radialProfile: radialProfileSchema.optional(),
  createdAt: z.string().optional(),
});
export type RunJson = z.infer<typeof runJsonSchema>;

/** Where a run's artifacts are served: by run id for lab members, by figure slug for readers. */
export type ArtifactBase = { kind: 'run'; id: string } | { kind: 'figure'; slug: string };

export function artifactRoot(b: ArtifactBase): string {
  return b.kind === 'run' ? `/api/runs/${encodeURIComponent(b.id)}` : `/api/figures/${encodeURIComponent(b.slug)}`;
}
export const arrayUrl = (b: ArtifactBase, name: 'heights.npy' | 'odometer.npy' | 'run.json') => `${artifactRoot(b)}/arrays/${name}`;
export const infoJsonUrl = (b: ArtifactBase, layer: string, palette: string) => `${artifactRoot(b)}/views/${layer}/${palette}/iiif/info.json`;

export async function fetchRunJson(b: ArtifactBase): Promise<RunJson> {
  const res = await fetch(arrayUrl(b, 'run.json'), { credentials: 'same-origin' });
  if (!res.ok) throw new Error(res.status === 404 ? 'the arrays of this run are not stored (yet)' : `run.json: the server answered ${res.status}`);
  const parsed = runJsonSchema.safeParse(await res.json());
  if (!parsed.success) throw new Error(`run.json has an unexpected shape: ${parsed.error.issues[0]?.path.join('.')} ${parsed.error.issues[0]?.message}`);
  return parsed.data;
}

/** Above this many cells the browser does not download whole arrays just to draw a legend. */
export const LEGEND_MAX_CELLS = 4_000_000;

async function fetchBytes(url: string): Promise<Uint8Array> {
  const res = await fetch(url, { credentials: 'same-origin' });
  if (!res.ok) throw new Error(`${url.split('/').pop()}: the server answered ${res.status}`);
  return new Uint8Array(await res.arrayBuffer());
}

/**
 * The whole-pile numbers the tiles were coloured with, recomputed here by the renderer's own
 * `computeStats`, so the legend names exactly the colours of the pixels. Null for arrays too large
 * to download for this purpose.
 */
export async function fetchLayerStats(b: ArtifactBase, run: RunJson): Promise<LayerStats | null> {
  const cells = run.heights.shape.reduce((a, c) => a * c, 1);
  if (cells > LEGEND_MAX_CELLS) return null;
  const [h, u] = await Promise.all([fetchBytes(arrayUrl(b, 'heights.npy')), fetchBytes(arrayUrl(b, 'odometer.npy'))]);
  const heights = readNpy(h);
  const odo = readNpy(u, { allowFloat: true });
  const odometer = new Float64Array(odo.data.length);
  const toppled = new Uint8Array(odo.data.length);
  for (let k = 0; k < odometer.length; k++) {
    odometer[k] = Number(odo.data[k]!);
    toppled[k] = odometer[k]! > 0 ? 1 : 0;
  }
  const input = { shape: heights.shape, origin: run.heights.origin, heights: Int32Array.from(heights.data as ArrayLike<number>), odometer, toppled };
  return computeStats(planeOf(input));
}
