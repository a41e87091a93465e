import { z } from 'zod';

/**
 * Toppleworks colour maps and the value → palette-index → colour rules shared by the renderer (tiles)
 * and the web app (legends). Both sides call the same functions, so a legend can never disagree
 * with the pixels it explains.
 *
 * Index layout of every rendered layer (at most 256 entries, so tiles are palette PNGs):
 * - index 0: masked cells (untoppled cells in the toppled/odometer layers), neutral or transparent;
 * - heights/toppled: index 1 + h for height h (0 ≤ h ≤ 254);
 * - difference: index 1 + round((d + m) / (2m) · (L − 1)), m = max |d| (at least 1), L = min(2m + 1, 255),
 *   so every integer difference gets its own colour whenever 2m + 1 ≤ 255;
 * - odometer: index 1 + round(254 · log(1 + u) / log(1 + u_max)) for u ≥ 1 (u = topplings), index 0 for u = 0.
 */

export const LAYERS = ['heights', 'toppled', 'difference', 'odometer'] as const;
export type Layer = (typeof LAYERS)[number];
export const layerSchema = z.enum(LAYERS);

/** How masked (untoppled) cells are drawn: the palette's neutral colour, or fully transparent. */
export const UNTOPPLED_STYLES = ['neutral', 'transparent'] as const;
export type UntoppledStyle = (typeof UNTOPPLED_STYLES)[number];
export const untoppledStyleSchema = z.enum(UNTOPPLED_STYLES);

export interface Palette {
  id: string;
  /** display name, our own words */
  name: string;
  description: string;
  /** checked under simulated protanopia, deuteranopia and tritanopia (tests/render/palettes.test.ts) */
  colourBlindSafe: boolean;
  /** pure greys, meant for black-and-white print */
  grayscale: boolean;
  /** colours of heights 0..7 (sRGB hex) */
  heights: readonly string[];
  /**
   * true: height colours are spread over the whole `ramp` for the run's own maximum height (so a
   * square-lattice pile with heights 0..3 uses the full grey range); `heights` is then the spread for 0..7
   */
  spreadHeights: boolean;
  /** sequential ramp (low → high) for the odometer and for heights beyond the table; lightness is monotone */
  ramp: readonly string[];
  /** diverging ramp for the difference layer: negative end, centre (zero), positive end; odd length */
  diverging: readonly string[];
  /** colour of untoppled cells when they are not transparent */
  neutral: string;
}

export const PALETTES = [
  {
    id: 'tidewater',
    name: 'Tidewater',
    description: 'Navy, harbour blue, amber and cream; readable with any common colour-vision deficiency.',
    colourBlindSafe: true,
    grayscale: false,
    heights: ['#13203b', '#2f6db5', '#e3a32e', '#f8f2de', '#847224', '#2f00c6', '#aecbe6', '#c2070f'],
    spreadHeights: false,
    ramp: ['#13203b', '#2f6db5', '#c79a52', '#e3a32e', '#f8f2de'],
    diverging: ['#1d3f7a', '#6d9fd6', '#f2efe8', '#e3a32e', '#7a3a0c'],
    neutral: '#8c8c8c',
  },
  {
    id: 'kiln',
    name: 'Kiln',
    description: 'Plum, brick, ochre and bone: a warm map for posters and slides.',
    colourBlindSafe: false,
    grayscale: false,
    heights: ['#2b1530', '#a33a2a', '#e58f3c', '#f6e3c1', '#5f7f3a', '#3c6e8f', '#d9b13b', '#8a5a8c'],
    spreadHeights: false,
    ramp: ['#2b1530', '#a33a2a', '#e58f3c', '#f6e3c1'],
    diverging: ['#24465e', '#7fa3bb', '#f4ece0', '#d9774a', '#6e1f14'],
    neutral: '#77706a',
  },
  {
    id: 'lichen',
    name: 'Lichen',
    description: 'Pine, moss, pale lichen and lavender-white: a cool map.',
    colourBlindSafe: false,
    grayscale: false,
    heights: ['#0f2a24', '#3f8f6b', '#c2d67a', '#f1ecf6', '#6b4d8f', '#d47f6a', '#2c5f8a', '#8a8a3a'],
    spreadHeights: false,
    ramp: ['#0f2a24', '#3f8f6b', '#c2d67a', '#f1ecf6'],
    diverging: ['#3a2a66', '#9f8cc9', '#f1efea', '#7fb38f', '#17483a'],
    neutral: '#7d8480',
  },
  {
    id: 'newsprint',
    name: 'Newsprint',
    description: 'Greys from light to near-black, more ink for more grains; for black-and-white print.',
    colourBlindSafe: true,
    grayscale: true,
    heights: ['#ececec', '#cacaca', '#a8a8a8', '#878787', '#656565', '#444444', '#222222', '#111111'],
    spreadHeights: true,
    ramp: ['#ececec', '#111111'],
    // a grey cannot show sign by hue, so the difference runs dark (negative) → mid grey (zero) → light
    diverging: ['#111111', '#7f7f7f', '#f4f4f4'],
    neutral: '#ffffff',
  },
] as const satisfies readonly Palette[];

export type PaletteId = (typeof PALETTES)[number]['id'];
export const PALETTE_IDS = PALETTES.map((p) => p.id) as [PaletteId, ...PaletteId[]];
export const paletteIdSchema = z.enum(PALETTE_IDS);
export const DEFAULT_PALETTE_ID: PaletteId = 'tidewater';
export const PRINT_PALETTE_ID: PaletteId = 'newsprint';

export function paletteById(id: string): Palette {
  const p = PALETTES.find((q) => q.id === id);
  if (!p) throw new RangeError(`unknown palette "${id}"; expected one of ${PALETTE_IDS.join(', ')}`);
  return p;
}

/** How one layer is drawn: the contract between the run page, the API and the render worker. */
export const layerStyleSchema = z.strictObject({
  layer: layerSchema.default('heights'),
  palette: paletteIdSchema.default(DEFAULT_PALETTE_ID),
  untoppled: untoppledStyleSchema.default('neutral'),
});
export type LayerStyle = z.infer<typeof layerStyleSchema>;

/**
 * Whole-pile numbers that fix the colour scales. The renderer computes them once per run
 * (renderer/src/render/stats.ts); they are plain JSON so the web app can draw a legend from a stored copy.
 */
export const layerStatsSchema = z.strictObject({
  cells: z.number().int().min(0),
  minHeight: z.number().int().min(0),
  maxHeight: z.number().int().min(0).max(254),
  /** heightCounts[h] = number of cells of height h */
  heightCounts: z.array(z.number().int().min(0)),
  toppledCells: z.number().int().min(0),
  maxOdometer: z.number().min(0),
  /** present when a background was given */
  minDifference: z.number().int().optional(),
  maxDifference: z.number().int().optional(),
});
export type LayerStats = z.infer<typeof layerStatsSchema>;

export type Rgba = readonly [number, number, number, number];

export function hexToRgba(hex: string): Rgba {
  const m = /^#([0-9a-f]{6})$/i.exec(hex);
  if (!m) throw new RangeError(`expected a colour like #12abef but received "${hex}"`);
  const v = parseInt(m[1], 16);
  return [(v >> 16) & 255, (v >> 8) & 255, v & 255, 255];
}

export function rgbaToHex(c: Rgba): string {
  return `#${[c[0], c[1], c[2]].map((x) => x.toString(16).padStart(2, '0')).join('')}`;
}

/** Piecewise-linear sRGB interpolation through evenly spaced stops, t clamped to [0, 1]. */
export function sampleRamp(stops: readonly string[], t: number): Rgba {
  const cs = stops.map(hexToRgba);
  if (cs.length === 1) return cs[0];
  const x = Math.min(1, Math.max(0, t)) * (cs.length - 1);
  const i = Math.min(cs.length - 2, Math.floor(x));
  const f = x - i;
  const a = cs[i];
  const b = cs[i + 1];
  const mix = (k: number) => Math.round(a[k] + (b[k] - a[k]) * f);
  return [mix(0), mix(1), mix(2), 255];
}

export const MAX_RENDERED_HEIGHT = 254;
/** Indices 1..255 for continuous layers. */
export const CONTINUOUS_LEVELS = 255;

/** Colour of height h in a run whose largest height is maxHeight. */
export function heightColour(palette: Palette, h: number, maxHeight: number): Rgba {
  if (palette.spreadHeights) return sampleRamp(palette.ramp, maxHeight > 0 ? h / maxHeight : 0);
  const n = palette.heights.length;
  if (h < n) return hexToRgba(palette.heights[h]);
  // beyond the table (lattices of degree > 8): walk the sequential ramp
  return sampleRamp(palette.ramp, maxHeight > n ? (h - n) / (maxHeight - n) : 1);
}

/** m and L of the difference scale (see the index layout above). */
export function differenceScale(stats: Pick<LayerStats, 'minDifference' | 'maxDifference'>): { m: number; levels: number } {
  const m = Math.max(1, Math.abs(stats.minDifference ?? 0), Math.abs(stats.maxDifference ?? 0));
  return { m, levels: Math.min(2 * m + 1, CONTINUOUS_LEVELS) };
}

export function differenceIndex(d: number, m: number, levels: number): number {
  const c = Math.max(-m, Math.min(m, d));
  return 1 + Math.round(((c + m) / (2 * m)) * (levels - 1));
}

/** The difference an index stands for (its centre value when several integers share it). */
export function differenceOfIndex(index: number, m: number, levels: number): number {
  return ((index - 1) / (levels - 1)) * 2 * m - m;
}

/** Odometer → index; log(1 + u) normalised by log(1 + u_max), 0 for cells that never toppled. */
export function odometerIndex(u: number, maxOdometer: number): number {
  if (u <= 0 || maxOdometer <= 0) return 0;
  return 1 + Math.round((CONTINUOUS_LEVELS - 1) * (Math.log1p(u) / Math.log1p(maxOdometer)));
}

/** Smallest odometer value drawn with the given index (inverse of odometerIndex up to rounding). */
export function odometerOfIndex(index: number, maxOdometer: number): number {
  return Math.expm1(((index - 1) / (CONTINUOUS_LEVELS - 1)) * Math.log1p(maxOdometer));
}

/** Number of palette entries a layer uses (indices 0..count-1). */
export function indexCount(layer: Layer, stats: LayerStats): number {
  switch (layer) {
    case 'heights':
    case 'toppled':
      return stats.maxHeight + 2;
    case 'difference':
      return differenceScale(stats).levels + 1;
    case 'odometer':
      return CONTINUOUS_LEVELS + 1;
  }
}

/**
 * RGBA of every palette index of a layer: entry i colours index i. Index 0 is the masked colour.
 * @example colourTable(paletteById('tidewater'), 'heights', stats, 'neutral')[1 + 2] // colour of height 2
 */
export function colourTable(palette: Palette, layer: Layer, stats: LayerStats, untoppled: UntoppledStyle): Rgba[] {
  const masked: Rgba = untoppled === 'transparent' ? [0, 0, 0, 0] : hexToRgba(palette.neutral);
  const n = indexCount(layer, stats);
  const out: Rgba[] = [masked];
  for (let i = 1; i < n; i++) {
    switch (layer) {
      case 'heights':
      case 'toppled':
        out.push(heightColour(palette, i - 1, stats.maxHeight));
        break;
      case 'difference': {
        const { levels } = differenceScale(stats);
        out.push(sampleRamp(palette.diverging, (i - 1) / (levels - 1)));
        break;
      }
      case 'odometer':
        out.push(sampleRamp(palette.ramp, (i - 1) / (CONTINUOUS_LEVELS - 1)));
        break;
    }
  }
  return out;
}

export const legendEntrySchema = z.object({
  label: z.string(),
  /** sRGB hex, or "transparent" */
  colour: z.string(),
  /** the value this entry stands for (height, difference or topplings); null for masked cells */
  value: z.number().nullable(),
  transparent: z.boolean().optional(),
});
export type LegendEntry = z.infer<typeof legendEntrySchema>;

export const legendSchema = z.discriminatedUnion('kind', [
  z.object({ kind: z.literal('discrete'), title: z.string(), entries: z.array(legendEntrySchema) }),
  /** stops: positions 0..1 along the ramp with labelled values; masked: how cells without a value look */
  z.object({
    kind: z.literal('continuous'),
    title: z.string(),
    scale: z.enum(['linear', 'log1p']),
    stops: z.array(legendEntrySchema.extend({ position: z.number().min(0).max(1) })),
    masked: legendEntrySchema.optional(),
  }),
]);
export type Legend = z.infer<typeof legendSchema>;

/** legend.json beside each pyramid (renderer/src/render/pyramid.ts): what the view was drawn with. */
export const viewLegendSchema = z.object({
  style: layerStyleSchema,
  stats: layerStatsSchema,
  legend: legendSchema,
  /** side of the block of deepest-level pixels drawn for one cell */
  pixelsPerCell: z.number().int().min(1),
});
export type ViewLegend = z.infer<typeof viewLegendSchema>;

function maskedEntry(palette: Palette, untoppled: UntoppledStyle): LegendEntry {
  return untoppled === 'transparent'
    ? { label: 'not toppled', colour: 'transparent', value: null, transparent: true }
    : { label: 'not toppled', colour: palette.neutral, value: null };
}

/**
 * The legend of a layer for a run: every height with its colour, or labelled stops along a ramp.
 * @example legendFor(paletteById('newsprint'), 'heights', stats).entries.map((e) => e.label) // ['0','1','2','3']
 */
export function legendFor(palette: Palette, layer: Layer, stats: LayerStats, untoppled: UntoppledStyle = 'neutral'): Legend {
  const table = colourTable(palette, layer, stats, untoppled);
  switch (layer) {
    case 'heights':
    case 'toppled': {
      const entries: LegendEntry[] = [];
      for (let h = 0; h <= stats.maxHeight; h++) entries.push({ label: String(h), colour: rgbaToHex(table[1 + h]), value: h });
      if (layer === 'toppled') entries.push(maskedEntry(palette, untoppled));
      return { kind: 'discrete', title: layer === 'heights' ? 'final height' : 'final height (toppled sites only)', entries };
    }
    case 'difference': {
      const { m, levels } = differenceScale(stats);
      if (levels === 2 * m + 1) {
        const entries: LegendEntry[] = [];
        for (let d = -m; d <= m; d++) entries.push({ label: d > 0 ? `+${d}` : String(d), colour: rgbaToHex(table[differenceIndex(d, m, levels)]), value: d });
        return { kind: 'discrete', title: 'height minus background', entries };
      }
      const stops = [-m, -m / 2, 0, m / 2, m].map((d) => {
        const v = Math.round(d);
        return { label: v > 0 ? `+${v}` : String(v), colour: rgbaToHex(table[differenceIndex(v, m, levels)]), value: v, position: (v + m) / (2 * m) };
      });
      return { kind: 'continuous', title: 'height minus background', scale: 'linear', stops };
    }
    case 'odometer': {
      const max = stats.maxOdometer;
      // labelled stops at 1 and at powers of ten up to the maximum, then the maximum itself
      const values: number[] = [];
      for (let v = 1; v < max; v *= 10) values.push(v);
      if (max >= 1) values.push(max);
      const stops = values.map((u) => ({
        label: u.toLocaleString('en-US'),
        colour: rgbaToHex(table[odometerIndex(u, max)]),
        value: u,
        position: Math.log1p(u) / Math.log1p(max),
      }));
      return { kind: 'continuous', title: 'topplings (log scale)', scale: 'log1p', stops, masked: maskedEntry(palette, untoppled) };
    }
  }
}
