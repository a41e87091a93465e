import { colourTable, hexToRgba, legendFor, paletteById, type Layer, type LayerStats, type Legend, type Palette, type Rgba, type UntoppledStyle } from './palettes.js';
import { legendTicks, shortLabels } from './legend-ticks.js';
import { POINTS_PER_INCH } from './print-page.js';
import type { PanelSpec } from './print-spec.js';
import { legendRowPx, type FigureLayout } from './print-layout.js';

/**
 * Everything on a figure's page that is not a panel raster or a scale bar: panel labels, scale-bar
 * numbers, the legend and the caption, as a list of marks in PDF points (origin top-left, y down).
 * Pure, with text widths passed in: the print engine (renderer/src/print) measures with the Work Sans
 * files through fontkit, the web proof with the same Work Sans in the browser, so the proof shows the
 * very legend rows and caption lines the PDF, PNG and TIFF carry.
 */

export type TextFace = 'regular' | 'bold';

/** One line of text; `y` is the top of its line box (pdfkit's convention: baseline = y + ascent). */
export interface TextMark {
  kind: 'text';
  face: TextFace;
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

/** Width in points of a line of text set in Work Sans. */
export type TextWidth = (face: TextFace, sizePt: number, text: string) => number;

/** Line spacing of all text: 1.25 × the font size, as layoutFigure reserves. */
export const LINE_SPACING = 1.25;

/** Work Sans's ascent (hhea, both weights) in em: where a line's baseline sits below its top. */
export const WORK_SANS_ASCENT_EM = 0.93;

/** Paper white: masked cells drawn "transparent" print as unprinted paper. */
export const PAPER: Rgba = [255, 255, 255, 255];
export const INK: Rgba = [0, 0, 0, 255];

/** A panel's legend and the colours its cells print with (index i of the layer → table[i]). */
export interface PanelLegend {
  legend: Legend;
  table: readonly Rgba[];
}

/** The layer's colour table as printed: opaque, with see-through cells as paper. */
export function printColourTable(palette: Palette, layer: Layer, stats: LayerStats, untoppled: UntoppledStyle): Rgba[] {
  return colourTable(palette, layer, stats, untoppled).map((c) => (c[3] === 0 ? PAPER : ([c[0], c[1], c[2], 255] as Rgba)));
}

/** What one panel's legend row shows, from the whole-plane statistics of the plane it prints. */
export function panelLegend(panel: Pick<PanelSpec, 'layer' | 'palette' | 'untoppled'>, stats: LayerStats): PanelLegend {
  const palette = paletteById(panel.palette);
  return { legend: legendFor(palette, panel.layer, stats, panel.untoppled), table: printColourTable(palette, panel.layer, stats, panel.untoppled) };
}

/**
 * The text marks of a laid-out figure. `legends[i]` belongs to `layout.panels[i]`; null leaves the
 * legend out (a caller that does not know the colour scales yet).
 */
export function figureTextMarks(layout: FigureLayout, legends: readonly PanelLegend[] | null, widthOf: TextWidth): Mark[] {
  const k = POINTS_PER_INCH / layout.dpi; // points per page pixel
  const textPt = layout.textPt;
  const marks: Mark[] = [];
  for (const p of layout.panels) {
    if (p.label !== null && p.labelAt) marks.push({ kind: 'text', face: 'bold', sizePt: textPt, x: p.labelAt.x * k, y: p.labelAt.y * k, text: p.label });
    const bar = p.scaleBar;
    if (bar) marks.push({ kind: 'text', face: 'regular', sizePt: textPt, x: bar.textAt.x * k, y: bar.textAt.y * k, text: bar.text });
  }

  if (layout.legend && legends) {
    const line = textPt * LINE_SPACING;
    const rowPt = legendRowPx(textPt, layout.dpi) * k;
    // one row per row the layout reserved, so what is drawn fills the legend band exactly; panels
    // sharing a row share their run, slice, layer and style, hence the very same legend
    const rows = new Map<number, PanelLegend & { labels: string[] }>();
    legends.forEach((pl, i) => {
      const panel = layout.panels[i];
      if (!panel || panel.legendRow === null) return;
      const g = rows.get(panel.legendRow) ?? { ...pl, labels: [] };
      if (panel.label) g.labels.push(panel.label);
      rows.set(panel.legendRow, g);
    });
    for (const [row, g] of [...rows].sort((a, b) => a[0] - b[0])) {
      const title = g.labels.length > 0 && g.labels.length < legends.length ? `${g.labels.join(', ')} ${g.legend.title}` : g.legend.title;
      legendRow(marks, g.legend, g.table, title.charAt(0).toUpperCase() + title.slice(1), layout.legend.x * k, layout.legend.y * k + row * rowPt, layout.legend.width * k, layout.legend.reach * k, line, textPt, widthOf);
    }
  }

  if (layout.caption) {
    const c = layout.caption;
    const linePt = c.fontPt * LINE_SPACING;
    // the layout reserved whole lines (rounded up to pixels); never draw below that box
    const maxLines = Math.max(1, Math.floor((c.height * k) / linePt + 1e-6));
    wrapLines(c.text, 'regular', c.fontPt, c.width * k, widthOf, maxLines).forEach((text, i) => {
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

/**
 * One legend row: a bold title line, then swatches or a ramp on the second line with their labels
 * on the third, so every kind of row is the three lines the layout reserves. The ramp takes its
 * length from the box; swatches may run on to `reach` (the content's edge), so a long key under a
 * narrow panel keeps every entry the full width would show.
 */
function legendRow(marks: Mark[], legend: Legend, table: readonly Rgba[], title: string, x: number, y: number, width: number, reach: number, line: number, textPt: number, widthOf: TextWidth): void {
  const sw = textPt * 0.9;
  const text = (face: TextFace, tx: number, ty: number, s: string) => marks.push({ kind: 'text', face, sizePt: textPt, x: tx, y: ty, text: s });
  const labelWidth = (s: string) => widthOf('regular', textPt, s);
  text('bold', x, y, title);
  const y1 = y + line;
  if (legend.kind === 'discrete' && legend.entries.length <= 32) {
    // each swatch centred over its label; entries that would leave the content are left out
    let cx = x;
    for (const e of legend.entries) {
      const lw = labelWidth(e.label);
      const w = Math.max(sw, lw);
      if (cx + w > reach) break;
      swatch(marks, cx + (w - sw) / 2, y1, sw, e.transparent ? null : e.colour);
      text('regular', cx + (w - lw) / 2, y1 + line, e.label);
      cx += w + textPt * 0.9;
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
  // the same choice of ticks as the screen's legend: short forms when crowded, never the two ends
  // dropped; "10K" rather than "10⁴", as the Latin Work Sans has no superscripts beyond ³
  const short = shortLabels(legend.kind === 'continuous' ? legend.scale : 'linear', false);
  for (const t of legendTicks(stops, barW, labelWidth, textPt * 0.4, short)) text('regular', x + t.left, y1 + line, t.label);
  if (legend.kind === 'continuous' && legend.masked) {
    // laid out as a swatch of the discrete rows: centred over its label
    const lw = labelWidth(legend.masked.label);
    const w = Math.max(sw, lw);
    const mx = x + barW + textPt * 1.5;
    swatch(marks, mx + (w - sw) / 2, y1, sw, legend.masked.transparent ? null : legend.masked.colour);
    text('regular', mx + (w - lw) / 2, y1 + line, legend.masked.label);
  }
}

/**
 * Greedy word wrap with the font's own widths: paragraphs at '\n', runs of white space become one
 * space, a word wider than the line is cut between characters. At most `maxLines` lines; when text
 * is left over, the last line ends in an ellipsis.
 */
export function wrapLines(text: string, face: TextFace, sizePt: number, widthPt: number, widthOf: TextWidth, maxLines = Infinity): string[] {
  const fits = (s: string) => widthOf(face, sizePt, s) <= widthPt;
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
