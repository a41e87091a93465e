import { z } from 'zod';
import { runSpecSchema } from '../../../shared/run-spec.js';
import { runStatsSchema } from '../../../shared/run-stats.js';
import { radialProfileSchema } from '../../../shared/radial-profile.js';
import { legendResponseSchema, type LegendResponse } from '../../../shared/api/artifacts.js';

/**
 * A run's stored artifacts as the browser reads them: run.json (the worker's sidecar, see
 * renderer/src/farm/compute-run.ts), the two arrays and each drawn view's legend. Read leniently: only the fields the pages use
 * are checked, so a sidecar that grows new fields keeps working.
 */

const arrayRecord = z.object({
  dtype: z.string(),
  shape: z.array(z.number().int().min(1)),
  origin: z.array(z.number().int()),
  sha256: z.string(),
});

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

export const legendUrl = (b: ArtifactBase, layer: string, palette: string) => `${artifactRoot(b)}/legend/${layer}/${palette}`;

/** The legend and colour-scale numbers a view was drawn with, as the renderer stored them; null when the view is not drawn. */
export async function fetchViewLegend(b: ArtifactBase, layer: string, palette: string): Promise<LegendResponse | null> {
  const res = await fetch(legendUrl(b, layer, palette), { credentials: 'same-origin' });
  if (res.status === 404) return null;
  if (!res.ok) throw new Error(`legend: the server answered ${res.status}`);
  return legendResponseSchema.parse(await res.json());
}
