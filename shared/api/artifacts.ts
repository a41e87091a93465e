import { z } from 'zod';
import { layerSchema, PALETTE_IDS, viewLegendSchema } from '../palettes.js';
import { idSchema } from './errors.js';
import { slugSchema } from './figures.js';

/**
 * Addresses of a run's stored artifacts, served by the API from the object store:
 *   /api/runs/:id/views/:layer/:palette/iiif/<IIIF path>      deep-zoom tiles (IIIF Image API 3.0, level 0)
 *   /api/runs/:id/arrays/:name                                 heights.npy, odometer.npy, run.json
 *   /api/runs/:id/legend/:layer/:palette                       the legend (and colour-scale numbers) a view was drawn with
 *   /api/runs/:id/thumbnail                                    a small picture of the run's first drawn view
 *   /api/figures/:slug/views/..., /legend/... and /arrays/:name   the same for a published figure
 *   /api/figures/:slug/thumbnail                               a small picture of the printed page (or its first panel)
 * Unpublished runs are visible to their lab only; a run with a published figure is public.
 */

export const ARRAY_NAMES = ['heights.npy', 'odometer.npy', 'run.json'] as const;
export type ArrayName = (typeof ARRAY_NAMES)[number];
export const arrayNameSchema = z.enum(ARRAY_NAMES, { message: `must be one of ${ARRAY_NAMES.join(', ')}` });

/** A palette id, with "~clear" when untoppled cells are drawn transparent (renderer/src/render/keys.ts). */
export const viewPaletteSchema = z
  .string()
  .regex(new RegExp(`^(?:${PALETTE_IDS.join('|')})(?:~clear)?$`), `must be a palette (${PALETTE_IDS.join(', ')}), optionally followed by ~clear`);

/** One segment of a IIIF path: region, size, rotation or file name; never "..", never a separator. */
export const IIIF_SEGMENT = /^(?!\.\.?$)[A-Za-z0-9,.!:_-]{1,64}$/;
export const IIIF_MAX_SEGMENTS = 4;

export const viewPathSchema = z
  .array(z.string().regex(IIIF_SEGMENT, 'each path segment must be letters, digits or , . ! : _ - (and not "." or "..")'))
  .min(1)
  .max(IIIF_MAX_SEGMENTS, `a IIIF path has at most ${IIIF_MAX_SEGMENTS} segments`);

export const runViewParamsSchema = z.strictObject({ id: idSchema, layer: layerSchema, palette: viewPaletteSchema, path: viewPathSchema });
export const figureViewParamsSchema = z.strictObject({ slug: slugSchema, layer: layerSchema, palette: viewPaletteSchema, path: viewPathSchema });
export const runLegendParamsSchema = z.strictObject({ id: idSchema, layer: layerSchema, palette: viewPaletteSchema });
export const figureLegendParamsSchema = z.strictObject({ slug: slugSchema, layer: layerSchema, palette: viewPaletteSchema });
/** GET /api/runs/:id/legend/:layer/:palette: legend.json as the renderer stored it beside the pyramid. */
export const legendResponseSchema = viewLegendSchema;
export type LegendResponse = z.infer<typeof legendResponseSchema>;
export const runArrayParamsSchema = z.strictObject({ id: idSchema, name: arrayNameSchema });
export const figureArrayParamsSchema = z.strictObject({ slug: slugSchema, name: arrayNameSchema });

/**
 * GET /api/runs/:id/thumbnail: the smallest whole image of the run's first drawn view that its pyramid
 * already stores (longer side at most THUMBNAIL_MAX_SIDE), PNG. GET /api/figures/:slug/thumbnail: the
 * printed page the caller may see, JPEG, or (before a print is ready) its first panel's view.
 */
export const THUMBNAIL_MAX_SIDE = 256;
export const runThumbnailParamsSchema = z.strictObject({ id: idSchema });
export const figureThumbnailParamsSchema = z.strictObject({ slug: slugSchema });
export const runThumbnailPath = (runId: string): string => `/api/runs/${runId}/thumbnail`;
export const figureThumbnailPath = (slug: string): string => `/api/figures/${slug}/thumbnail`;

/** The public base address of a view's IIIF service: info.json's `id`, tiles are `${id}/<region>/<size>/0/default.png`. */
export function runViewBase(publicUrl: string, runId: string, layer: string, palette: string): string {
  return `${publicUrl.replace(/\/+$/, '')}/api/runs/${runId}/views/${layer}/${palette}/iiif`;
}
export function figureViewBase(publicUrl: string, slug: string, layer: string, palette: string): string {
  return `${publicUrl.replace(/\/+$/, '')}/api/figures/${slug}/views/${layer}/${palette}/iiif`;
}
