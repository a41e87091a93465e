import { hexToRgba, type Legend, type Rgba } from '../../../shared/palettes.js';
import { legendRowPx, POINTS_PER_INCH } from '../../../shared/print.js';
import { textWidthPt, type FontFace } from './fonts.js';
import { INK, type PreparedFigure } from './prepare.js';

/**
 * Everything on the page that is not a panel raster or a scale bar: panel labels, scale-bar numbers,
 * the legend and the caption, as a list of marks in PDF points (origin top-left, y down). The PDF
 * draws them as vector text and paths, the PNG and TIFF rasterize the very same list, so every
 * format carries the same words in the same places.
 */

/** One line of text; `y` is the top of its line box (pdfkit's convention: baseline = y + ascent). */
export interface TextMark {
  kind: 'text';
  face: FontFace;
  sizePt: number;
  x: number;
  y: number;
  text: string;
}

/** A filled rectangle. */
export interface FillMark {
  kind: 'fill';
  x: number;
  y: number;
  width: number;
  height: number;
  colour: Rgba;
}

/** The outline of a rectangle, `lineWidthPt` wide, centred on its edges. */
export interface StrokeMark extends Omit<FillMark, 'kind'> {
  kind: 'stroke';
  lineWidthPt: number;
}

export type Mark = TextMark | FillMark | StrokeMark;

/** Line spacing of all text: 1.25 × the font size, as layoutFigure reserves. */
export const LINE_SPACING = 1.25;

const cache = new WeakMap<PreparedFigure, Mark[]>();

/** The marks of a prepared figure (computed once per figure). */
export function figureMarks(fig: PreparedFigure): Mark[] {
  let marks = cache.get(fig);
  if (!marks) {
    marks = buildMarks(fig);
    cache.set(fig, marks);
  }
  return marks;
}

function buildMarks(fig: PreparedFigure): Mark[] {
  const { layout } = fig;
  const k = POINTS_PER_INCH / layout.dpi; // points per page pixel
  const textPt = layout.textPt;
  const marks: Mark[] = [];
  for (const p of fig.panels) {
    if (p.layout.label !== null && p.layout.labelAt) {
      marks.push({ kind: 'text', face: 'bold', sizePt: textPt, x: p.layout.labelAt.x * k, y: p.layout.labelAt.y * k, text: p.layout.label });
    }
    const bar = p.layout.scaleBar;
    if (bar) marks.push({ kind: 'text', face: 'regular', sizePt: textPt, x: bar.textAt.x * k, y: bar.textAt.y * k, text: bar.text });
  }

  if (layout.legend) {
    const line = textPt * LINE_SPACING;
    const rowPt = legendRowPx(textPt, layout.dpi) * k;
    // panels whose legends are identical share one row (the layout reserved a row per run and style)
    const groups = new Map<string, { legend: Legend; table: readonly Rgba[]; labels: string[] }>();
    for (const p of fig.panels) {
      const content = JSON.stringify(p.legend);
      const g = groups.get(content) ?? { legend: p.legend, table: p.table, labels: [] };
      if (p.layout.label) g.labels.push(p.layout.label);
      groups.set(content, g);
    }
    let y = layout.legend.y * k;
    for (const g of groups.values()) {
      const title = g.labels.length > 0 && g.labels.length < fig.panels.length ? `${g.labels.join(', ')} ${g.legend.title}` : g.legend.title;
      legendMarks(marks, g.legend, g.table, title.charAt(0).toUpperCase() + title.slice(1), layout.legend.x * k, y, layout.legend.width * k, line, textPt);
      y += rowPt;
    }
  }

  if (layout.caption) {
    const c = layout.caption;
    const linePt = c.fontPt * LINE_SPACING;
    // the layout reserved whole lines (rounded up to pixels); never draw below that box
    const maxLines = Math.max(1, Math.floor((c.height * k) / linePt + 1e-6));
    wrapText(c.text, 'regular', c.fontPt, c.width * k, maxLines).forEach((text, i) => {
      marks.push({ kind: 'text', face: 'regular', sizePt: c.fontPt, x: c.x * k, y: c.y * k + i * linePt, text });
    });
  }
  return marks;
}

function swatch(marks: Mark[], x: number, y: number, side: number, colour: string | null): void {
  if (colour === null) {
    marks.push({ kind: 'stroke', x, y, width: side, height: side, colour: INK, lineWidthPt: 0.3 });
    return;
  }
  marks.push({ kind: 'fill', x, y, width: side, height: side, colour: opaque(hexToRgba(colour)) });
  marks.push({ kind: 'stroke', x, y, width: side, height: side, colour: INK, lineWidthPt: 0.2 });
}

const opaque = (c: Rgba): Rgba => [c[0], c[1], c[2], 255];

/** One legend row: a bold title line, then swatches with labels, or a ramp with labelled stops below it. */
function legendMarks(marks: Mark[], legend: Legend, table: readonly Rgba[], title: string, x: number, y: number, width: number, line: number, textPt: number): void {
  const sw = textPt * 0.9;
  const text = (face: FontFace, tx: number, ty: number, s: string) => marks.push({ kind: 'text', face, sizePt: textPt, x: tx, y: ty, text: s });
  const widthOf = (s: string) => textWidthPt('regular', textPt, s);
  text('bold', x, y, title);
  const y1 = y + line;
  if (legend.kind === 'discrete' && legend.entries.length <= 32) {
    let cx = x;
    for (const e of legend.entries) {
      const w = sw + textPt * 0.3 + widthOf(e.label) + textPt * 0.9;
      if (cx + w > x + width) break;
      swatch(marks, cx, y1, sw, e.transparent ? null : e.colour);
      text('regular', cx + sw + textPt * 0.3, y1, e.label);
      cx += w;
    }
    return;
  }
  // a ramp: thin rectangles along the bar, labelled stops on the line below
  const stops = legend.kind === 'continuous' ? legend.stops : legend.entries.map((e, i, a) => ({ ...e, position: a.length > 1 ? i / (a.length - 1) : 0 }));
  const barW = Math.min(width * 0.6, 120 * (POINTS_PER_INCH / 25.4));
  const steps = 128;
  // the layer's own colour table: index 1 + t · (count − 2) is what a cell at position t is drawn with
  for (let i = 0; i < steps; i++) {
    const t = (i + 0.5) / steps;
    marks.push({ kind: 'fill', x: x + (i * barW) / steps, y: y1, width: barW / steps + 0.05, height: sw, colour: opaque(table[1 + Math.round(t * (table.length - 2))]) });
  }
  marks.push({ kind: 'stroke', x, y: y1, width: barW, height: sw, colour: INK, lineWidthPt: 0.2 });
  // labels that would overlap are dropped, but never the two ends of the scale
  const placed = stops.map((s) => {
    const lw = widthOf(s.label);
    const lx = Math.min(x + barW - lw, Math.max(x, x + s.position * barW - lw / 2));
    return { label: s.label, lx, end: lx + lw };
  });
  const last = placed[placed.length - 1];
  let lastEnd = -Infinity;
  for (const [i, l] of placed.entries()) {
    const isEnd = i === 0 || i === placed.length - 1;
    if (!isEnd && (l.lx < lastEnd + textPt * 0.4 || l.end + textPt * 0.4 > last.lx)) continue;
    text('regular', l.lx, y1 + line, l.label);
    lastEnd = l.end;
  }
  if (legend.kind === 'continuous' && legend.masked) {
    const mx = x + barW + textPt * 1.5;
    swatch(marks, mx, y1, sw, legend.masked.transparent ? null : legend.masked.colour);
    text('regular', mx + sw + textPt * 0.3, y1, legend.masked.label);
  }
}

/**
 * Greedy word wrap with the font's own widths: paragraphs at '\n', runs of white space become one
 * space, a word wider than the line is cut between characters. At most `maxLines` lines; when text
 * is left over, the last line ends in an ellipsis.
 */
export function wrapText(text: string, face: FontFace, sizePt: number, widthPt: number, maxLines = Infinity): string[] {
  const fits = (s: string) => textWidthPt(face, sizePt, s) <= widthPt;
  const lines: string[] = [];
  for (const para of text.split('\n')) {
    let line = '';
    for (let word of para.split(/\s+/).filter(Boolean)) {
      const joined = line ? `${line} ${word}` : word;
      if (fits(joined)) {
        line = joined;
        continue;
      }
      if (line) lines.push(line);
      // a word longer than the line: as many characters as fit, then the rest
      while (!fits(word) && word.length > 1) {
        let n = word.length - 1;
        while (n > 1 && !fits(word.slice(0, n))) n--;
        lines.push(word.slice(0, n));
        word = word.slice(n);
      }
      line = word;
    }
    lines.push(line);
  }
  if (lines.length <= maxLines) return lines;
  const kept = lines.slice(0, maxLines);
  let lastLine = kept[maxLines - 1];
  while (lastLine.length > 0 && !fits(`${lastLine}…`)) lastLine = lastLine.slice(0, -1).trimEnd();
  kept[maxLines - 1] = `${lastLine}…`;
  return kept;
}
