import { z } from 'zod';
import { layerSchema, paletteIdSchema, untoppledStyleSchema, DEFAULT_PALETTE_ID } from './palettes.js';
import { pageSideTooLongMessage, pageTooLargeMessage } from './print-size.js';
import { pageName, pageSizeMm, pageSizeSchema } from './print-page.js';

/**
 * The print-figure contract shared by the web form (proof preview), the API (orders) and the render
 * worker (renderer/src/print): what the author asks for (`figureSpecSchema`), what may be printed now
 * (`printableFigureSpecSchema`) and what a new figure starts as. The page it names is described in
 * print-page.ts; the pixel geometry that follows from it is computed in print-layout.ts.
 */

export const MIN_DPI = 150;
export const MAX_DPI = 1200;

/** The longest caption a figure can carry: it is printed under the panels, so it must fit a page. */
export const CAPTION_MAX_CHARS = 2000;
/** Caption size when the composition does not choose one. */
export const DEFAULT_CAPTION_PT = 9;

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
        message: `${s.panels.length} ${s.panels.length === 1 ? 'panel does' : 'panels do'} not fit a ${s.grid.rows} × ${s.grid.cols} grid`,
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
