import { figureTextMarks, wrapLines, type Mark } from '../../../shared/print-marks.js';
import { textWidthPt, type FontFace } from './fonts.js';
import type { PreparedFigure } from './prepare.js';

/**
 * The figure's text marks (shared/print-marks.ts: labels, scale-bar numbers, legend, caption) measured
 * with the Work Sans files themselves. The PDF draws them as vector text and paths, the PNG and TIFF
 * rasterize the very same list, so every format carries the same words in the same places.
 */

export { LINE_SPACING, type Mark, type TextMark, type FillMark, type StrokeMark } from '../../../shared/print-marks.js';

const cache = new WeakMap<PreparedFigure, Mark[]>();

/** The marks of a prepared figure (computed once per figure). */
export function figureMarks(fig: PreparedFigure): Mark[] {
  let marks = cache.get(fig);
  if (!marks) {
    marks = figureTextMarks(
      fig.layout,
      fig.panels.map((p) => ({ legend: p.legend, table: p.table })),
      textWidthPt,
    );
    cache.set(fig, marks);
  }
  return marks;
}

/** Caption wrapping with Work Sans's own widths (shared/print-marks.ts `wrapLines`). */
export function wrapText(text: string, face: FontFace, sizePt: number, widthPt: number, maxLines = Infinity): string[] {
  return wrapLines(text, face, sizePt, widthPt, textWidthPt, maxLines);
}
