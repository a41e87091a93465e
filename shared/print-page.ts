import { z } from 'zod';
import { MM_PER_INCH } from './print-size.js';

/**
 * The page a figure is printed on: paper and journal-column sizes, the page-size part of the figure
 * contract (`pageSizeSchema`), its size in millimetres and points, and how messages name it. It is
 * the bottom of the print modules (print-spec, print-words and print-layout build on it, in that
 * order, without cycles), so the page's name and the number format all their words share live here:
 * the spec's own size check names the page.
 */

export const POINTS_PER_INCH = 72;

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

/** A number in the figure's words and messages: grouped thousands, at most six decimals. */
export const fmt = (v: number) => v.toLocaleString('en-US', { maximumFractionDigits: 6 });
