import { z } from 'zod';
import { layerSchema, paletteIdSchema, untoppledStyleSchema, DEFAULT_PALETTE_ID } from './palettes.js';
import { naturalScale, printScaleSymbol } from './natural-scale.js';
import { lineBandRows, sliceText } from './drawn-plane.js';
import { MM_PER_INCH, pageSideTooLongMessage, pageTooLargeMessage, pixelsFor } from './print-size.js';

export { MM_PER_INCH, MAX_PAGE_PIXELS, pixelsFor } from './print-size.js';

/**
 * The print-figure contract shared by the web form (proof preview), the API (orders) and the render
 * worker (renderer/src/print): what the author asks for (`figureSpecSchema`) and the exact pixel
 * geometry that follows from it (`layoutFigure`, pure, no I/O), so the preview's warnings and the
 * printed file can never disagree.
 *
 * Coordinates: page pixels have (0, 0) at the top-left corner, x to the right, y down. Lattice
 * coordinates of a run are array indices minus the run's origin, x the last array axis, y the row
 * axis (so y grows downwards on the page, as in the deep-zoom view).
 */

export const POINTS_PER_INCH = 72;
export const MIN_DPI = 150;
export const MAX_DPI = 1200;

/** ISO 216 A series, portrait width × height in millimetres. */
export const ISO_A_SIZES_MM = {
  A0: [841, 1189],
  A1: [594, 841],
  A2: [420, 594],
  A3: [297, 420],
  A4: [210, 297],
  A5: [148, 210],
  A6: [105, 148],
} as const;

/** North American paper sizes (ANSI/ASME Y14.1 A and B; Legal is 8.5 × 14 in), portrait, inches. */
export const US_SIZES_IN = {
  letter: [8.5, 11],
  legal: [8.5, 14],
  tabloid: [11, 17],
} as const;

/**
 * Journal artwork widths in millimetres (common practice: journals commonly ask for figures one
 * column, one and a half columns or the full text width wide).
 */
export const JOURNAL_WIDTHS_MM = {
  single: 90,
  'one-and-a-half': 140,
  full: 190,
} as const;

export const PAPER_NAMES = ['A0', 'A1', 'A2', 'A3', 'A4', 'A5', 'A6', 'letter', 'legal', 'tabloid'] as const;
export type PaperName = (typeof PAPER_NAMES)[number];
export const COLUMN_NAMES = Object.keys(JOURNAL_WIDTHS_MM) as [keyof typeof JOURNAL_WIDTHS_MM, ...(keyof typeof JOURNAL_WIDTHS_MM)[]];
export type ColumnName = keyof typeof JOURNAL_WIDTHS_MM;

const lengthUnitSchema = z.enum(['mm', 'in']);

/** The longest caption a figure can carry: it is printed under the panels, so it must fit a page. */
export const CAPTION_MAX_CHARS = 2000;
/** Caption size when the composition does not choose one. */
export const DEFAULT_CAPTION_PT = 9;

/** The tallest journal-column page, chosen or following from the content (2 m: a long poster strip). */
export const MAX_PAGE_HEIGHT_MM = 2000;

export const pageSizeSchema = z.discriminatedUnion('kind', [
  z.strictObject({
    kind: z.literal('paper'),
    paper: z.enum(PAPER_NAMES),
    orientation: z.enum(['portrait', 'landscape']).default('portrait'),
  }),
  z.strictObject({
    kind: z.literal('column'),
    column: z.enum(COLUMN_NAMES),
    /** page height in mm; omitted: as tall as the panels, legend and caption need */
    heightMm: z.number().positive().max(MAX_PAGE_HEIGHT_MM).optional(),
  }),
  z.strictObject({
    kind: z.literal('custom'),
    width: z.number().positive(),
    height: z.number().positive(),
    unit: lengthUnitSchema.default('mm'),
  }),
]);
export type PageSize = z.infer<typeof pageSizeSchema>;

const latticeInt = z.number().int().min(-(2 ** 30)).max(2 ** 30);

/** Inclusive lattice-coordinate rectangle, relative to the run's origin. */
export const regionSchema = z
  .strictObject({ xMin: latticeInt, xMax: latticeInt, yMin: latticeInt, yMax: latticeInt })
  .refine((r) => r.xMin <= r.xMax && r.yMin <= r.yMax, { message: 'region needs xMin ≤ xMax and yMin ≤ yMax' });
export type Region = z.infer<typeof regionSchema>;

export const MAX_MAGNIFICATION = 256;

export const panelSpecSchema = z.strictObject({
  runId: z.string().min(1).max(64),
  layer: layerSchema.default('heights'),
  palette: paletteIdSchema.default(DEFAULT_PALETTE_ID),
  /** untoppled cells: the palette's neutral colour, or unprinted paper */
  untoppled: untoppledStyleSchema.default('neutral'),
  /** omitted: the whole computed array */
  region: regionSchema.optional(),
  /** whole device pixels per lattice cell, or the largest that fits the panel ('fit') */
  magnification: z.union([z.literal('fit'), z.number().int().min(1).max(MAX_MAGNIFICATION)]).default('fit'),
  /** overrides the automatic panel label */
  label: z.string().max(24).optional(),
  /** depth slice of a 3-D run, lattice coordinate relative to the origin (default 0, the source's slice) */
  z: latticeInt.optional(),
});
export type PanelSpec = z.infer<typeof panelSpecSchema>;

const mm = z.number().min(0).max(500);

export const figureSpecSchema = z
  .strictObject({
    version: z.literal(1).default(1),
    panels: z.array(panelSpecSchema).min(1).max(16),
    grid: z
      .strictObject({
        rows: z.number().int().min(1).max(8).default(1),
        cols: z.number().int().min(1).max(8).default(1),
        gapMm: mm.default(4),
        /**
         * none: every panel fills its place; lattice: one lattice unit is the same length in every
         * panel; rescaled: one unit of x/n^(1/d) is the same length in every panel (piles of different n
         * side by side). Applies to panels whose magnification is 'fit'.
         */
        sharedScale: z.enum(['none', 'lattice', 'rescaled']).default('none'),
      })
      .default({ rows: 1, cols: 1, gapMm: 4, sharedScale: 'none' }),
    size: pageSizeSchema,
    dpi: z.number().int().min(MIN_DPI).max(MAX_DPI).default(300),
    margins: z
      .strictObject({ top: mm.default(10), right: mm.default(10), bottom: mm.default(10), left: mm.default(10) })
      .default({ top: 10, right: 10, bottom: 10, left: 10 }),
    /** omitted: no scale bar; length omitted: a round length near a quarter of the panel */
    scaleBar: z
      .strictObject({ unit: z.enum(['lattice', 'rescaled']).default('lattice'), length: z.number().positive().max(1e9).optional() })
      .optional(),
    legend: z.boolean().default(true),
    caption: z.strictObject({ text: z.string().min(1).max(CAPTION_MAX_CHARS), fontPt: z.number().min(5).max(36).default(DEFAULT_CAPTION_PT) }).optional(),
    /** automatic panel labels: (a), (b), … or (1), (2), … */
    labels: z.enum(['none', 'letters', 'numbers']).default('letters'),
    /** size of labels, legend and scale-bar text */
    textPt: z.number().min(5).max(36).default(8),
  })
  .superRefine((s, ctx) => {
    if (s.panels.length > s.grid.rows * s.grid.cols) {
      ctx.addIssue({
        code: 'custom',
        path: ['grid'],
        message: `${s.panels.length} panels do not fit a ${s.grid.rows} × ${s.grid.cols} grid`,
      });
    }
  });
export type FigureSpec = z.infer<typeof figureSpecSchema>;
export type FigureSpecInput = z.input<typeof figureSpecSchema>;

/**
 * A composition that may be saved or printed now: a figure spec whose page, when its size is fixed,
 * stays within MAX_PAGE_PIXELS. Stored and published specs are read with `figureSpecSchema`, since
 * prints ordered before the limit existed must keep answering; a journal column whose height follows
 * from its panels is checked by `layoutFigure` (blocking warning 'page-too-large').
 */
export const printableFigureSpecSchema = figureSpecSchema.superRefine((s, ctx) => {
  const mm = pageSizeMm(s.size);
  if (mm.height === null) return;
  const name = pageName(s.size, mm.width, mm.height);
  const tooLong = pageSideTooLongMessage(name, mm.width, mm.height);
  if (tooLong) return ctx.addIssue({ code: 'custom', path: ['size'], message: tooLong });
  const message = pageTooLargeMessage(name, mm.width, mm.height, s.dpi, MIN_DPI);
  if (message) ctx.addIssue({ code: 'custom', path: ['dpi'], message });
});

/**
 * What a new figure of one run starts as on the compose page: the whole run a single journal
 * column wide at 300 DPI, with a scale bar in lattice units. The demo's figure is composed the
 * same way, so it prints as a figure composed by hand would.
 */
export function startingComposition(runId: string): FigureSpecInput {
  return { panels: [{ runId }], size: { kind: 'column', column: 'single' }, dpi: 300, scaleBar: { unit: 'lattice' } };
}

/**
 * The composition with the figure's own caption (the one its form and reader page show) as the
 * printed caption, keeping the composition's font size; a blank caption prints none. A figure's
 * caption and its spec's caption are stored apart, so this is applied wherever a spec is read.
 */
export function specWithCaption(spec: FigureSpec, caption: string): FigureSpec {
  const { caption: before, ...rest } = spec;
  if (!caption.trim()) return rest;
  // captions stored before the two limits were aligned may be longer; the print cuts them with an ellipsis anyway
  return { ...rest, caption: { text: caption.slice(0, CAPTION_MAX_CHARS), fontPt: before?.fontPt ?? DEFAULT_CAPTION_PT } };
}

/** What layout needs to know about a run: its array box and its number of grains. */
export interface RunGeometry {
  runId: string;
  /** array shape, x last: (W), (H, W) or (D, H, W) */
  shape: readonly number[];
  origin: readonly number[];
  /** n, the number of grains added (for rescaled units x/n^(1/d), d = the rank of `shape`) */
  chips: number;
}

export interface PxRect {
  x: number;
  y: number;
  width: number;
  height: number;
}

export type LayoutWarningCode = 'cells-reduced' | 'size-not-met' | 'region-outside-run' | 'no-room' | 'unknown-run' | 'scale-approximate' | 'page-too-large';

export interface LayoutWarning {
  code: LayoutWarningCode;
  /** 0-based panel index when the warning is about one panel */
  panel?: number;
  /** true: the print cannot be made as asked */
  blocking: boolean;
  message: string;
}

export interface ScaleBarLayout {
  unit: 'lattice' | 'rescaled';
  /** length in its unit (cells, or x/n^(1/d)) */
  length: number;
  /** the same length in lattice cells */
  cells: number;
  bar: PxRect;
  text: string;
  /** top-left of the text line, page pixels */
  textAt: { x: number; y: number };
}

export interface PanelLayout {
  index: number;
  runId: string;
  label: string | null;
  /** top-left of the label's text line, page pixels */
  labelAt: { x: number; y: number } | null;
  /** the panel's place in the grid */
  slot: PxRect;
  /** where the raster goes, page pixels */
  image: PxRect;
  /** the cells drawn, as a window of the run's drawn plane (array indices; a line's rows are its band, shared/drawn-plane.ts) */
  window: { x: number; y: number; width: number; height: number };
  /** the same in lattice coordinates relative to the origin */
  region: Region;
  /** depth index of the array plane for 3-D runs */
  zIndex: number;
  /** k ≥ 1: each cell is a k × k block of pixels (0 when reduced) */
  cellPx: number;
  /** r ≥ 1: each r × r block of cells is one pixel (1 when not reduced) */
  reduction: number;
  /** printed pixels per cell, k or 1/r */
  pixelsPerCell: number;
  scaleBar: ScaleBarLayout | null;
  /** the legend row this panel's colours are explained in (0 = first), null without a legend */
  legendRow: number | null;
}

export interface FigureLayout {
  dpi: number;
  page: { widthMm: number; heightMm: number; widthPt: number; heightPt: number; widthPx: number; heightPx: number };
  content: PxRect;
  panels: PanelLayout[];
  legend: PxRect | null;
  caption: (PxRect & { text: string; fontPt: number }) | null;
  textPt: number;
  warnings: LayoutWarning[];
  /** false when a blocking warning means the print cannot be made */
  printable: boolean;
}

export function pointsFor(mmLength: number): number {
  return (mmLength / MM_PER_INCH) * POINTS_PER_INCH;
}

/** Page size in mm, null height for a journal column whose height follows from the content. */
export function pageSizeMm(size: PageSize): { width: number; height: number | null } {
  switch (size.kind) {
    case 'paper': {
      const iso = (ISO_A_SIZES_MM as Record<string, readonly [number, number]>)[size.paper];
      const [w, h] = iso ?? US_SIZES_IN[size.paper as keyof typeof US_SIZES_IN].map((v) => v * MM_PER_INCH);
      return size.orientation === 'landscape' ? { width: h, height: w } : { width: w, height: h };
    }
    case 'column':
      return { width: JOURNAL_WIDTHS_MM[size.column], height: size.heightMm ?? null };
    case 'custom':
      return size.unit === 'in' ? { width: size.width * MM_PER_INCH, height: size.height * MM_PER_INCH } : { width: size.width, height: size.height };
  }
}

/** How a message names the page: "A0 portrait", "a single-column page of 90 × 400 mm", "this 120 × 90 mm page". */
export function pageName(size: PageSize, widthMm: number, heightMm: number): string {
  const mm = `${fmt(Math.round(widthMm * 10) / 10)} × ${fmt(Math.round(heightMm * 10) / 10)} mm`;
  switch (size.kind) {
    case 'paper':
      return `${size.paper.length === 2 ? size.paper : size.paper[0]!.toUpperCase() + size.paper.slice(1)} ${size.orientation}`;
    case 'column':
      return `a ${size.column.replace(/-/g, ' ')} column page of ${mm}`;
    case 'custom':
      return `this ${mm} page`;
  }
}

/** Text-line heights in page pixels (Work Sans set solid at 1.25 line height). */
function linePx(pt: number, dpi: number): number {
  return Math.ceil(((pt * 1.25) / POINTS_PER_INCH) * dpi);
}

/**
 * Caption lines at a given width. An estimate (no font metrics here, so the web form can call it):
 * 0.58 em per character is a little wider than Work Sans's average, so the reserved box holds the text.
 */
export function estimateCaptionLines(text: string, fontPt: number, widthPx: number, dpi: number): number {
  const charPx = ((0.58 * fontPt) / POINTS_PER_INCH) * dpi;
  const perLine = Math.max(1, Math.floor(widthPx / charPx));
  let lines = 0;
  for (const para of text.split('\n')) {
    let len = 0;
    let n = 1;
    for (const word of para.split(/\s+/).filter(Boolean)) {
      const w = word.length;
      if (len === 0) len = w;
      else if (len + 1 + w <= perLine) len += 1 + w;
      else (n++, (len = w));
      while (len > perLine) (n++, (len -= perLine));
    }
    lines += n;
  }
  return lines;
}

/**
 * A panel's label: the author's own, else (a), (b), … or (1), (2), … when the figure has several
 * panels; a lone panel is not labelled automatically, there is nothing to tell it from.
 */
export function panelLabelText(index: number, panelCount: number, style: FigureSpec['labels'], override?: string): string | null {
  if (override !== undefined) return override.length > 0 ? override : null;
  if (style === 'none' || panelCount <= 1) return null;
  if (style === 'numbers') return `(${index + 1})`;
  // a..z, then aa, ab, … (16 panels at most, so single letters in practice)
  let s = '';
  let i = index;
  do {
    s = String.fromCharCode(97 + (i % 26)) + s;
    i = Math.floor(i / 26) - 1;
  } while (i >= 0);
  return `(${s})`;
}

/** A round length (1, 2 or 5 × 10^e) not above `target`. */
export function niceLength(target: number): number {
  if (!(target > 0)) return 1;
  const e = Math.floor(Math.log10(target));
  const base = 10 ** e;
  const f = target / base;
  const m = f >= 5 ? 5 : f >= 2 ? 2 : 1;
  return Number((m * base).toPrecision(6));
}

/**
 * Panels with the same run, slice, layer, palette and untoppled style share one legend row: their
 * colour scales are the same by construction, so the rows are known before any statistics are.
 */
export function legendGroupKey(p: Pick<PanelSpec, 'runId' | 'layer' | 'palette' | 'untoppled' | 'z'>): string {
  return `${p.runId}|${p.z ?? 0}|${p.layer}|${p.palette}|${p.untoppled}`;
}

/** The legend row of each panel of a spec, in order of first appearance. */
export function legendRowsOf(panels: readonly Pick<PanelSpec, 'runId' | 'layer' | 'palette' | 'untoppled' | 'z'>[]): { rowOf: number[]; rows: number } {
  const index = new Map<string, number>();
  const rowOf = panels.map((p) => {
    const key = legendGroupKey(p);
    if (!index.has(key)) index.set(key, index.size);
    return index.get(key)!;
  });
  return { rowOf, rows: index.size };
}

/** The space between two legend rows, page pixels. */
export function legendRowGapPx(textPt: number, dpi: number): number {
  return Math.round(((textPt * 0.6) / POINTS_PER_INCH) * dpi);
}

/**
 * One legend row: a title line, a line of swatches or a ramp, a line of their labels, then the gap
 * to the next row. Every kind of legend fills the same three lines, so the reserved band is exactly
 * what is drawn, whatever the colour scales turn out to be.
 */
export function legendRowPx(textPt: number, dpi: number): number {
  return 3 * linePx(textPt, dpi) + legendRowGapPx(textPt, dpi);
}

const fmt = (v: number) => v.toLocaleString('en-US', { maximumFractionDigits: 6 });

export function scaleBarText(unit: 'lattice' | 'rescaled', length: number, cells: number, dimension = 2): string {
  if (unit === 'lattice') return `${fmt(length)} lattice ${length === 1 ? 'unit' : 'units'}`;
  // the unit is n^(1/d) in the print font's glyphs (n½, n¹⁄³); the cell count says the same plainly
  return `${fmt(length)} · ${printScaleSymbol(dimension)} = ${fmt(Math.round(cells))} cells`;
}

/**
 * The caption sentence naming the slice each panel of a 3-D run shows ("Slice z = 0 of a 3-D pile.",
 * or "(a), (b): slice z = 0 of a 3-D pile; (c): slice z = 2 of a 3-D pile."); null when no panel is a
 * slice. `z` is the lattice coordinate of the panel's slice, null for a panel of another dimension.
 */
export function sliceNote(panels: readonly { name: string; z: number | null }[]): string | null {
  const groups = new Map<number, string[]>();
  for (const p of panels) if (p.z !== null) groups.set(p.z, [...(groups.get(p.z) ?? []), p.name]);
  if (groups.size === 0) return null;
  const only = [...groups.keys()][0]!;
  if (groups.size === 1 && panels.every((p) => p.z !== null)) {
    const text = sliceText(only);
    return `${text.charAt(0).toUpperCase()}${text.slice(1)}.`;
  }
  return `${[...groups].map(([z, names]) => `${names.join(', ')}: ${sliceText(z)}`).join('; ')}.`;
}

/** n^(1/d) of a run: the length of one rescaled unit in lattice cells. */
const unitCells = (run: RunGeometry): number => Math.max(1, naturalScale(Math.max(1, run.chips), run.shape.length));

/** A lattice coordinate as the product writes it: the minus sign "−", not a hyphen. */
const signed = (v: number): string => (v < 0 ? `−${-v}` : String(v));

/**
 * A region in words, "x −50..49, y −20..19"; a line's only row is y = 0, so a line's region is
 * its x range alone, "x −2500..2500".
 */
export function regionText(r: Region, dims: number): string {
  const x = `x ${signed(r.xMin)}..${signed(r.xMax)}`;
  return dims === 1 ? x : `${x}, y ${signed(r.yMin)}..${signed(r.yMax)}`;
}

/**
 * What reducing by r does to a run's cells. A line is drawn as a band of identical rows
 * (shared/drawn-plane.ts), so there r cells along the line become one pixel, not an r × r block.
 */
function reducedCellsText(r: number, dims: number): string {
  return dims === 1 ? `every ${r} cells along the line become one pixel` : `every ${r} × ${r} block of cells becomes one pixel`;
}

/**
 * How an unreduced panel prints its cells: "one printed pixel per cell", "8 × 8 printed pixels per
 * cell"; a line's cell is a column of its band, so "a column 8 printed pixels wide per cell".
 */
export function cellPixelsText(cellPx: number, dims: number): string {
  if (dims === 1) return cellPx === 1 ? 'a column one printed pixel wide per cell' : `a column ${cellPx} printed pixels wide per cell`;
  return cellPx === 1 ? 'one printed pixel per cell' : `${cellPx} × ${cellPx} printed pixels per cell`;
}

/** The proof's note when no panel is reduced: "8 × 8 printed pixels per cell: nothing is reduced.", or panel by panel. */
export function unreducedNote(panels: readonly { index: number; cellPx: number; dims: number }[]): string {
  if (panels.length === 1) {
    const t = cellPixelsText(panels[0]!.cellPx, panels[0]!.dims);
    return `${t[0]!.toUpperCase()}${t.slice(1)}: nothing is reduced.`;
  }
  const each = panels.map((p, i) => `${i === 0 ? 'Panel' : 'panel'} ${p.index + 1}: ${cellPixelsText(p.cellPx, p.dims)}`);
  return `${each.join('; ')}. Nothing is reduced.`;
}

function blockWord(layer: PanelSpec['layer']): string {
  return layer === 'heights' || layer === 'toppled' ? 'height' : 'value';
}

/**
 * The exact pixel geometry of a figure: page size in pixels (round(size_in × dpi)), where each panel's
 * raster goes and at how many pixels per cell, and warnings in plain words for the proof preview.
 * Pure: the same answer in the browser and on the farm.
 * @example layoutFigure(figureSpecSchema.parse({ size: { kind: 'paper', paper: 'A4' }, dpi: 600, panels: [{ runId: 'r1' }] }), [run]).page.widthPx // 4961
 */
export function layoutFigure(spec: FigureSpec, runs: readonly RunGeometry[]): FigureLayout {
  const { dpi } = spec;
  const warnings: LayoutWarning[] = [];
  const px = (v: number) => pixelsFor(v, dpi);
  const pt2px = (v: number) => Math.round((v / POINTS_PER_INCH) * dpi);
  const sizeMm = pageSizeMm(spec.size);
  const widthPx = px(sizeMm.width);
  const m = { top: px(spec.margins.top), right: px(spec.margins.right), bottom: px(spec.margins.bottom), left: px(spec.margins.left) };
  const contentW = widthPx - m.left - m.right;
  const { rows, cols } = spec.grid;
  const gap = px(spec.grid.gapMm);
  const slotW = Math.floor((contentW - (cols - 1) * gap) / cols);

  // Fixed bands (page pixels) around each image and below the grid.
  const textLine = linePx(spec.textPt, dpi);
  const labels = spec.panels.map((p, i) => panelLabelText(i, spec.panels.length, spec.labels, p.label));
  const labelBand = labels.some((l) => l !== null) ? textLine + pt2px(spec.textPt * 0.3) : 0;
  const barThick = Math.max(1, px(0.6));
  const scaleBand = spec.scaleBar ? pt2px(spec.textPt * 0.5) + barThick + pt2px(spec.textPt * 0.3) + textLine : 0;
  const legendRows = legendRowsOf(spec.panels);
  // the last row needs no gap after it: the caption keeps its own
  const legendBand = spec.legend ? pt2px(spec.textPt * 0.8) + legendRows.rows * legendRowPx(spec.textPt, dpi) - legendRowGapPx(spec.textPt, dpi) : 0;

  // Each panel's cells, checked against its run.
  const byId = new Map(runs.map((r) => [r.runId, r]));
  const cells = spec.panels.map((p, i) => {
    const run = byId.get(p.runId);
    if (!run) {
      warnings.push({ code: 'unknown-run', panel: i, blocking: true, message: `panel ${i + 1}: run "${p.runId}" was not given` });
      return null;
    }
    const d = run.shape.length;
    const W = run.shape[d - 1];
    const H = d >= 2 ? run.shape[d - 2] : 1;
    const ox = run.origin[d - 1] ?? 0;
    const oy = d >= 2 ? run.origin[d - 2] : 0;
    // a line's only row is y = 0 (written so, not as −0)
    const whole: Region = { xMin: -ox, xMax: W - 1 - ox, yMin: d >= 2 ? -oy : 0, yMax: H - 1 - oy };
    const r = p.region ?? whole;
    if (r.xMin < whole.xMin || r.xMax > whole.xMax || r.yMin < whole.yMin || r.yMax > whole.yMax) {
      warnings.push({
        code: 'region-outside-run',
        panel: i,
        blocking: true,
        message: `panel ${i + 1}: region ${regionText(r, d)} leaves the computed run (${regionText(whole, d)})`,
      });
      return null;
    }
    let zIndex = 0;
    if (d === 3) {
      zIndex = (p.z ?? 0) + run.origin[0];
      if (zIndex < 0 || zIndex >= run.shape[0]) {
        warnings.push({ code: 'region-outside-run', panel: i, blocking: true, message: `panel ${i + 1}: slice z = ${signed(p.z ?? 0)} is outside the run (z ${signed(-run.origin[0])}..${signed(run.shape[0] - 1 - run.origin[0])})` });
        return null;
      }
    }
    const w = r.xMax - r.xMin + 1;
    // a line is printed as a band of identical rows, one column per cell (shared/drawn-plane.ts)
    const h = d === 1 ? lineBandRows(w) : r.yMax - r.yMin + 1;
    return { run, region: r, w, h, window: { x: r.xMin + ox, y: d === 1 ? 0 : r.yMin + oy, width: w, height: h }, zIndex };
  });

  // The caption: the author's text, then which slice each 3-D panel shows (a print of a slice must say so)
  const slices = sliceNote(spec.panels.map((p, i) => ({ name: labels[i] ?? `panel ${i + 1}`, z: cells[i] && cells[i].run.shape.length === 3 ? cells[i].zIndex - cells[i].run.origin[0] : null })));
  const captionText = [spec.caption?.text, slices].filter((t): t is string => !!t).join('\n');
  const captionFont = spec.caption?.fontPt ?? DEFAULT_CAPTION_PT;
  const captionLines = captionText ? estimateCaptionLines(captionText, captionFont, Math.max(1, contentW), dpi) : 0;
  const captionBand = captionText ? pt2px(captionFont * 0.8) + captionLines * linePx(captionFont, dpi) : 0;

  // Page height: fixed, or (journal column without a height) at most what the panels need at the
  // slot width; the rows are packed to what they use once the panels are sized (below).
  let heightPx: number;
  const fixedBands = m.top + m.bottom + legendBand + captionBand + (rows - 1) * gap;
  if (sizeMm.height !== null) {
    heightPx = px(sizeMm.height);
  } else {
    // rows share one height, so every row gets the tallest row's need: a fixed magnification needs
    // exactly its cells, 'fit' what the slot width gives the region's aspect
    let rowH = 0;
    cells.forEach((c, i) => {
      if (!c) return;
      const k = spec.panels[i].magnification;
      rowH = Math.max(rowH, k === 'fit' ? Math.ceil((slotW * c.h) / c.w) : c.h * k);
    });
    const gridH = rows * ((rowH || slotW) + labelBand + scaleBand);
    heightPx = fixedBands + gridH;
  }
  const gridH = heightPx - fixedBands;
  const slotH = Math.floor(gridH / rows);
  const imageBoxW = slotW;
  const imageBoxH = slotH - labelBand - scaleBand;

  if (contentW <= 0 || imageBoxW < 1 || imageBoxH < 1) {
    warnings.push({
      code: 'no-room',
      blocking: true,
      message: `the size asked for cannot be met at this resolution: after margins, labels, legend and caption no room is left for the panels on a ${fmt(Math.round(sizeMm.width))} × ${fmt(Math.round(sizeMm.height ?? (heightPx / dpi) * MM_PER_INCH))} mm page`,
    });
  }

  // Printed pixels per cell that would fill each slot.
  const fill = cells.map((c) => (c && imageBoxW > 0 && imageBoxH > 0 ? Math.min(imageBoxW / c.w, imageBoxH / c.h) : 0));
  const shared = spec.grid.sharedScale;
  const fitIdx = spec.panels.map((p, i) => (p.magnification === 'fit' && cells[i] ? i : -1)).filter((i) => i >= 0);
  const target = fill.slice();
  if (shared === 'lattice' && fitIdx.length > 0) {
    const s = Math.min(...fitIdx.map((i) => fill[i]));
    for (const i of fitIdx) target[i] = s;
  } else if (shared === 'rescaled' && fitIdx.length > 0) {
    // pixels per unit of x/n^(1/d), the same for all: cell size ∝ 1/n^(1/d)
    const root = (i: number) => unitCells(cells[i]!.run);
    const p = Math.min(...fitIdx.map((i) => fill[i] * root(i)));
    for (const i of fitIdx) target[i] = p / root(i);
  }

  const panels: PanelLayout[] = [];
  spec.panels.forEach((p, i) => {
    const c = cells[i];
    if (!c || fill[i] <= 0) return;
    let k = 0;
    let r = 1;
    if (p.magnification !== 'fit') {
      k = p.magnification;
      if (c.w * k > imageBoxW || c.h * k > imageBoxH) {
        const most = Math.floor(fill[i]);
        warnings.push({
          code: 'size-not-met',
          panel: i,
          blocking: true,
          message:
            `panel ${i + 1}: the size asked for cannot be met at this resolution: ${fmt(c.w)} × ${fmt(c.h)} cells at ${k} px per cell need ` +
            `${fmt(c.w * k)} × ${fmt(c.h * k)} px, but the panel has room for ${fmt(imageBoxW)} × ${fmt(imageBoxH)} px at ${dpi} DPI; ` +
            (most >= 1 ? `choose 'fit', a magnification of at most ${most}, a larger size or a higher resolution` : `choose 'fit', a smaller region, a larger size or a higher resolution`),
        });
        return;
      }
    } else if (target[i] >= 1) {
      k = Math.floor(target[i]);
    } else {
      r = Math.ceil(1 / target[i] - 1e-9);
      warnings.push({
        code: 'cells-reduced',
        panel: i,
        blocking: false,
        message: `panel ${i + 1}: cells are smaller than one printed pixel: ${reducedCellsText(r, c.run.shape.length)} (most frequent ${blockWord(p.layer)})`,
      });
    }
    const iw = k > 0 ? c.w * k : Math.ceil(c.w / r);
    const ih = k > 0 ? c.h * k : Math.ceil(c.h / r);
    const col = i % cols;
    // y relative to the row's top for now: rows are packed once every panel's height is known
    const slot: PxRect = { x: m.left + col * (slotW + gap), y: 0, width: slotW, height: slotH };
    const image: PxRect = { x: slot.x + Math.floor((slotW - iw) / 2), y: slot.y + labelBand, width: iw, height: ih };
    const pixelsPerCell = k > 0 ? k : 1 / r;
    const label = labels[i];
    let scaleBar: ScaleBarLayout | null = null;
    if (spec.scaleBar) {
      const unit = spec.scaleBar.unit;
      const cellsPerUnit = unit === 'lattice' ? 1 : unitCells(c.run);
      const length = spec.scaleBar.length ?? niceLength((c.w * 0.25) / cellsPerUnit);
      const lenCells = length * cellsPerUnit;
      const barW = Math.max(1, Math.round(lenCells * pixelsPerCell));
      if (barW > slotW) {
        warnings.push({ code: 'no-room', panel: i, blocking: false, message: `panel ${i + 1}: the scale bar (${scaleBarText(unit, length, lenCells, c.run.shape.length)}) is wider than the panel and is shortened to fit` });
      }
      const top = image.y + ih + pt2px(spec.textPt * 0.5);
      const bar = { x: image.x, y: top, width: Math.min(barW, slot.x + slotW - image.x), height: barThick };
      scaleBar = { unit, length, cells: lenCells, bar, text: scaleBarText(unit, length, lenCells, c.run.shape.length), textAt: { x: image.x, y: top + barThick + pt2px(spec.textPt * 0.3) } };
    }
    panels.push({
      index: i,
      runId: p.runId,
      label,
      labelAt: label !== null ? { x: image.x, y: slot.y } : null,
      slot,
      image,
      window: c.window,
      region: c.region,
      zIndex: c.zIndex,
      cellPx: k,
      reduction: k > 0 ? 1 : r,
      pixelsPerCell,
      scaleBar,
      legendRow: spec.legend ? legendRows.rowOf[i] : null,
    });
  });

  // Each row is as tall as its tallest panel with its label and scale bar, so the legend and the
  // caption follow the last scale bar directly; a fixed page keeps what is left as paper at the
  // bottom. Rows no panel reaches take no room; a row whose panels could not be placed keeps its slot.
  const rowUsed = Array.from({ length: rows }, (_, r) => (r * cols < spec.panels.length ? slotH : 0));
  for (const r of new Set(panels.map((q) => Math.floor(q.index / cols)))) {
    rowUsed[r] = Math.max(...panels.filter((q) => Math.floor(q.index / cols) === r).map((q) => labelBand + q.image.height + scaleBand));
  }
  const rowTop: number[] = [];
  let gridBottom = m.top;
  rowUsed.forEach((h, r) => {
    if (r > 0 && h > 0) gridBottom += gap;
    rowTop.push(gridBottom);
    gridBottom += h;
  });
  for (const q of panels) {
    const r = Math.floor(q.index / cols);
    const dy = rowTop[r];
    q.slot.y += dy;
    q.slot.height = rowUsed[r];
    q.image.y += dy;
    if (q.labelAt) q.labelAt.y += dy;
    if (q.scaleBar) {
      q.scaleBar.bar.y += dy;
      q.scaleBar.textAt.y += dy;
    }
  }
  if (sizeMm.height === null) heightPx = gridBottom + legendBand + captionBand + m.bottom;
  const heightMm = sizeMm.height ?? (heightPx / dpi) * MM_PER_INCH;
  if (sizeMm.height === null && heightMm > MAX_PAGE_HEIGHT_MM) {
    warnings.push({
      code: 'size-not-met',
      blocking: true,
      message: `the size asked for cannot be met: at this column width the panels would make the page ${fmt(Math.round(heightMm))} mm tall (at most ${fmt(MAX_PAGE_HEIGHT_MM)} mm); choose a page height, a wider region or a fixed magnification`,
    });
  }
  const name = pageName(spec.size, sizeMm.width, heightMm);
  const tooLarge = pageSideTooLongMessage(name, sizeMm.width, heightMm) ?? pageTooLargeMessage(name, sizeMm.width, heightMm, dpi, MIN_DPI);
  if (tooLarge) warnings.push({ code: 'page-too-large', blocking: true, message: `the page is too large to print: ${tooLarge}` });
  const content: PxRect = { x: m.left, y: m.top, width: contentW, height: heightPx - m.top - m.bottom };

  if (shared === 'rescaled' && fitIdx.length > 1) {
    const per = panels.filter((q) => fitIdx.includes(q.index)).map((q) => q.pixelsPerCell * unitCells(cells[q.index]!.run));
    const spread = per.length > 1 ? Math.max(...per) / Math.min(...per) - 1 : 0;
    if (spread > 0.01) {
      warnings.push({
        code: 'scale-approximate',
        blocking: false,
        message: `rescaled panels differ in scale by up to ${Math.round(spread * 100)}% because each cell is a whole number of pixels; every scale bar is exact for its own panel`,
      });
    }
  }

  const legend: PxRect | null = spec.legend ? { x: m.left, y: gridBottom + pt2px(spec.textPt * 0.8), width: contentW, height: legendBand - pt2px(spec.textPt * 0.8) } : null;
  const caption = captionText
    ? { x: m.left, y: gridBottom + legendBand + pt2px(captionFont * 0.8), width: contentW, height: captionBand - pt2px(captionFont * 0.8), text: captionText, fontPt: captionFont }
    : null;
  return {
    dpi,
    page: { widthMm: sizeMm.width, heightMm, widthPt: pointsFor(sizeMm.width), heightPt: pointsFor(heightMm), widthPx, heightPx },
    content,
    panels,
    legend,
    caption,
    textPt: spec.textPt,
    warnings,
    printable: !warnings.some((w) => w.blocking),
  };
}
