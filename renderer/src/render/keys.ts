import type { Layer, PaletteId } from '../../../shared/palettes.js';
import { RenderInputError } from './errors.js';

/**
 * Object key layout of rendered views (bucket-relative):
 *
 *   runs/<runId>/<layer>/<palette>/legend.json         legend and stats the view was drawn with
 *   runs/<runId>/<layer>/<palette>/preview.png         whole pile, longer side ≤ 1024 px
 *   runs/<runId>/<layer>/<palette>/iiif/info.json      IIIF Image API 3.0 level-0 service, written last
 *   runs/<runId>/<layer>/<palette>/iiif/<region>/<size>/0/default.png   tiles and whole-image sizes
 *
 * A view is complete exactly when its info.json exists. Layers with untoppled cells drawn transparent
 * use the palette segment `<palette>~clear`, so both styles can be stored side by side.
 */

const RUN_ID = /^[A-Za-z0-9][A-Za-z0-9_-]{0,63}$/;

export function viewPrefix(runId: string, layer: Layer, palette: PaletteId, transparent = false): string {
  if (!RUN_ID.test(runId)) throw new RenderInputError(`run id must be 1-64 letters, digits, "-" or "_", received "${runId}"`);
  return `runs/${runId}/${layer}/${palette}${transparent ? '~clear' : ''}`;
}

export const iiifPrefix = (viewPrefix: string) => `${viewPrefix}/iiif`;
export const legendKeyOf = (viewPrefix: string) => `${viewPrefix}/legend.json`;
export const previewKeyOf = (viewPrefix: string) => `${viewPrefix}/preview.png`;
