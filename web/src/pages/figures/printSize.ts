import { pageSizeMm, pageSizeSchema } from '../../../../shared/print-page.js';
import { MAX_PAGE_PIXELS, estimatePrintBytes, pagePixels, type PagePixels } from '../../../../shared/print-size.js';

/** The resolutions the composer compares a page at: its presets, and the one chosen when it is not one of them. */
export const COMPARED_DPIS = [150, 300, 600, 1200] as const;

export interface PrintSizeRow extends PagePixels {
  dpi: number;
  /** upper estimates, bytes */
  bytes: ReturnType<typeof estimatePrintBytes>;
  /** within MAX_PAGE_PIXELS */
  fits: boolean;
}

/** One row per compared DPI (and the chosen one), smallest first: how pixels and files grow with the resolution. */
export function printSizeRows(widthMm: number, heightMm: number, chosenDpi: number): PrintSizeRow[] {
  const dpis = [...new Set<number>([...COMPARED_DPIS, chosenDpi])].filter((d) => Number.isInteger(d) && d > 0).sort((a, b) => a - b);
  return dpis.map((dpi) => {
    const page = pagePixels(widthMm, heightMm, dpi);
    return { dpi, ...page, bytes: estimatePrintBytes(page.pixels), fits: page.pixels <= MAX_PAGE_PIXELS };
  });
}

/**
 * The largest files a page makes, as one phrase: "under 1 MB each" when all are, else each format
 * with its bound ("TIFF up to about 3.8 MB, PNG up to about 1.2 MB and PDF under 1 MB"), never
 * "up to under 1 MB".
 */
export function fileSizesText(bytes: { tiff: number; png: number; pdf: number }): string {
  const sizes = (['tiff', 'png', 'pdf'] as const).map((f) => [f.toUpperCase(), approxFileSize(bytes[f])] as const);
  if (sizes.every(([, size]) => size === 'under 1 MB')) return 'under 1 MB each';
  const each = sizes.map(([name, size]) => `${name} ${size.startsWith('about') ? `up to ${size}` : size}`);
  return `${each.slice(0, -1).join(', ')} and ${each.at(-1)}`;
}

/** "about 24 MB", "about 1.3 GB" (powers of 1000, as file managers show them); estimates, so two figures at most. */
export function approxFileSize(bytes: number): string {
  if (bytes < 1e6) return 'under 1 MB';
  if (bytes < 1e9) return `about ${Number((bytes / 1e6).toPrecision(2)).toLocaleString('en-US')} MB`;
  return `about ${Number((bytes / 1e9).toPrecision(2)).toLocaleString('en-US')} GB`;
}

/**
 * The page size in mm from the form's size fields alone, for when the whole composition does not
 * parse (a page past the limit does not): null when the fields are unfinished or the height follows
 * from the panels.
 */
export function fixedPageMm(size: unknown): { width: number; height: number } | null {
  const parsed = pageSizeSchema.safeParse(size);
  if (!parsed.success) return null;
  const mm = pageSizeMm(parsed.data);
  return mm.height === null ? null : { width: mm.width, height: mm.height };
}
