/**
 * Print engine: a figure spec (shared/print-spec.ts) and finished runs → exact-size PNG, TIFF and PDF,
 * each with the same Work Sans labels, legend, scale bars and caption, streamed in strips so no
 * full-page buffer is ever held.
 */
import type { FigureLayout } from '../../../shared/print-layout.js';
import type { WrittenFile } from './file-output.js';
import { writeFigurePdf, type PdfOptions } from './pdf.js';
import { prepareFigure, type PrintRun } from './prepare.js';
import { writeFigurePng, writeFigureTiff, type RasterOptions } from './raster-outputs.js';
import { orderThumbnail, type PageThumbnail } from './thumbnail.js';

export { PrintInputError, isPrintInputError } from './errors.js';
export { prepareFigure, PAPER, INK, type PrintRun, type PreparedFigure, type PreparedPanel } from './prepare.js';
export { PanelRaster } from './panel-raster.js';
export { pagePalette, pageStrips, STRIP_ROWS, type PagePalette, type PageStrip } from './page-raster.js';
export { writePng, pngBytes, pngHead, pngChunk, pixelsPerMetre, type PngImage, type PngRows } from './png.js';
export { writeFigurePng, writeFigureTiff, type RasterOptions } from './raster-outputs.js';
export { renderFigurePdf, writeFigurePdf, type PdfOptions } from './pdf.js';
export { writeAtomically, sha256Of, type WrittenFile } from './file-output.js';
export { WORK_SANS_FILES, textWidthPt } from './fonts.js';
export { orderThumbnail, pageThumbnail, type PageThumbnail } from './thumbnail.js';
export { figureMarks, wrapText, type Mark, type TextMark, type FillMark, type StrokeMark } from './marks.js';
export { MarkPainter, INK_LEVELS } from './mark-raster.js';

export const PRINT_FORMATS = ['png', 'tiff', 'pdf'] as const;
export type PrintFormat = (typeof PRINT_FORMATS)[number];

export const PRINT_CONTENT_TYPES: Record<PrintFormat, string> = { png: 'image/png', tiff: 'image/tiff', pdf: 'application/pdf' };

export interface PrintedFile extends WrittenFile {
  format: PrintFormat;
  contentType: string;
  /** raster size of the page (the PDF's images are placed at this resolution) */
  widthPx: number;
  heightPx: number;
}

export interface PrintResult {
  layout: FigureLayout;
  files: PrintedFile[];
  /** the page shrunk to at most `thumbnail` px a side, when asked for (every format, PDF only too) */
  thumbnail?: PageThumbnail;
}

export interface PrintOptions extends RasterOptions, PdfOptions {
  /** called after each file is written */
  onFile?: (file: PrintedFile) => void;
  /** also make the page's JPEG thumbnail, at most this many pixels a side (thumbnail.ts `orderThumbnail`) */
  thumbnail?: number;
}

/**
 * Render one order: validate and lay out once, then write each asked format to `paths[format]`
 * (each file all or nothing).
 * @throws PrintInputError for a bad spec, a missing run or a blocking layout warning (nothing written)
 * @example await renderPrint(spec, [{ runId: 'r1', input: outcome, chips: 1000 }], { pdf: '/tmp/fig.pdf', png: '/tmp/fig.png' }, { thumbnail: 256 })
 */
export async function renderPrint(spec: unknown, runs: readonly PrintRun[], paths: Partial<Record<PrintFormat, string>>, opts: PrintOptions = {}): Promise<PrintResult> {
  const fig = prepareFigure(spec, runs);
  const files: PrintedFile[] = [];
  for (const format of PRINT_FORMATS) {
    const path = paths[format];
    if (!path) continue;
    const written = format === 'png' ? await writeFigurePng(fig, path, opts) : format === 'tiff' ? await writeFigureTiff(fig, path, opts) : await writeFigurePdf(fig, path, opts);
    const file = { ...written, format, contentType: PRINT_CONTENT_TYPES[format], widthPx: fig.layout.page.widthPx, heightPx: fig.layout.page.heightPx };
    files.push(file);
    opts.onFile?.(file);
  }
  const thumbnail = opts.thumbnail ? await orderThumbnail(fig, files, opts.thumbnail) : undefined;
  return { layout: fig.layout, files, ...(thumbnail ? { thumbnail } : {}) };
}
