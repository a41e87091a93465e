import { printScaleSymbol } from './natural-scale.js';
import { sliceText } from './drawn-plane.js';
import { fmt, POINTS_PER_INCH } from './print-page.js';
import type { FigureSpec, PanelSpec, Region } from './print-spec.js';

/**
 * The words of a figure, on its printed page and in the composer: panel labels, scale-bar text,
 * regions and slices in words, how a panel prints its cells, and how many lines a caption takes.
 * Pure, so the proof preview and the printed file say the same.
 */

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

/** A lattice coordinate as the product writes it: the minus sign "−", not a hyphen. */
export const signed = (v: number): string => (v < 0 ? `−${-v}` : String(v));

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
export function reducedCellsText(r: number, dims: number): string {
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

/** What one cell of a layer holds, for a reduced panel's warning: a height, or a value. */
export function blockWord(layer: PanelSpec['layer']): string {
  return layer === 'heights' || layer === 'toppled' ? 'height' : 'value';
}
