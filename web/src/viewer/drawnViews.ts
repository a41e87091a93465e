import { DEFAULT_RENDER, layerHasMaskedCells, viewPaletteSegment, type RenderSpec } from '../../../shared/run-spec.js';
import type { Layer, PaletteId } from '../../../shared/palettes.js';

/**
 * Which views of a run exist, from its specification: the reader's switchers list only those, and
 * the address of each view follows the renderer's key layout. Pure, so it is tested without a browser.
 */

/** The drawing a run asked for; runs from before the choice existed were drawn with the default. */
export const drawnOf = (spec: { render?: RenderSpec } | undefined): RenderSpec => spec?.render ?? DEFAULT_RENDER;

/** The palette segment of a layer's address: `<palette>~clear` where untoppled cells were drawn see-through. */
export const paletteSegmentOf = (render: RenderSpec, layer: Layer, palette: PaletteId): string =>
  viewPaletteSegment({ layer, palette, untoppled: layerHasMaskedCells(layer) ? render.untoppled : 'neutral' });

/** The palette id of a segment (`kiln~clear` → `kiln`). */
export const paletteOfSegment = (segment: string): string => segment.replace(/~clear$/, '');

/** The asked-for layer when it was drawn, otherwise the first drawn one. */
export function pickLayer(render: RenderSpec, wanted: string | null | undefined): Layer {
  return (render.layers as readonly string[]).includes(wanted ?? '') ? (wanted as Layer) : render.layers[0]!;
}

/** The asked-for palette when it was drawn, otherwise the first drawn one. */
export function pickPalette(render: RenderSpec, wanted: string | null | undefined): PaletteId {
  return (render.palettes as readonly string[]).includes(wanted ?? '') ? (wanted as PaletteId) : render.palettes[0]!;
}
