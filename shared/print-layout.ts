import { naturalScale } from './natural-scale.js';
import { lineBandRows } from './drawn-plane.js';
import { MM_PER_INCH, pageSideTooLongMessage, pageTooLargeMessage, pixelsFor } from './print-size.js';
import { fmt, MAX_PAGE_HEIGHT_MM, pageName, pageSizeMm, pointsFor, POINTS_PER_INCH } from './print-page.js';
import { DEFAULT_CAPTION_PT, MIN_DPI, type FigureSpec, type PanelSpec, type Region } from './print-spec.js';
import { blockWord, estimateCaptionLines, panelLabelText, reducedCellsText, regionText, scaleBarText, signed, sliceNote } from './print-words.js';

/**
 * The exact pixel geometry that follows from a figure spec (`layoutFigure`, pure, no I/O), shared by
 * the proof preview, the API and the render worker, so the preview's warnings and the printed file
 * can never disagree; and the legend rows the layout reserves, which print-marks.ts fills.
 *
 * Coordinates: page pixels have (0, 0) at the top-left corner, x to the right, y down. Lattice
 * coordinates of a run are array indices minus the run's origin, x the last array axis, y the row
 * axis (so y grows downwards on the page, as in the deep-zoom view).
 */

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

/** The legend band; `reach` is the page x a row of swatches may run on to (the content's right edge). */
export interface LegendBox extends PxRect {
  reach: number;
}

export interface FigureLayout {
  dpi: number;
  page: { widthMm: number; heightMm: number; widthPt: number; heightPt: number; widthPx: number; heightPx: number };
  content: PxRect;
  panels: PanelLayout[];
  /** set under the panels in their text column (`textColumn`), as the caption */
  legend: LegendBox | null;
  caption: (PxRect & { text: string; fontPt: number }) | null;
  textPt: number;
  warnings: LayoutWarning[];
  /** false when a blocking warning means the print cannot be made */
  printable: boolean;
}

/** Text-line heights in page pixels (Work Sans set solid at 1.25 line height). */
function linePx(pt: number, dpi: number): number {
  return Math.ceil(((pt * 1.25) / POINTS_PER_INCH) * dpi);
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

/** The shortest measure of the legend and caption, in ems of their type: about 40 characters a line. */
export const MIN_MEASURE_EM = 20;

/**
 * Where the legend and caption go across the page: from the left edge of the leftmost panel to the
 * right edge of the rightmost, as a journal sets a figure's key and caption to the figure's own
 * width. Left-aligned rather than centred, because the panel labels and scale bars already start at
 * the panels' left edge, and a caption of several lines reads as a ragged-right paragraph, not as a
 * centred block. Panels narrower than `minWidth` get a column of that width centred on them (a
 * caption a few words wide is no paragraph), kept inside the content box; without panels, the content.
 */
export function textColumn(images: readonly PxRect[], content: { x: number; width: number }, minWidth: number): { x: number; width: number } {
  if (images.length === 0) return { x: content.x, width: content.width };
  const left = Math.min(...images.map((r) => r.x));
  const right = Math.max(...images.map((r) => r.x + r.width));
  const width = Math.min(content.width, Math.max(right - left, minWidth));
  const centred = left - Math.floor((width - (right - left)) / 2);
  return { x: Math.min(Math.max(centred, content.x), content.x + content.width - width), width };
}

/** n^(1/d) of a run: the length of one rescaled unit in lattice cells. */
const unitCells = (run: RunGeometry): number => Math.max(1, naturalScale(Math.max(1, run.chips), run.shape.length));

/**
 * The exact pixel geometry of a figure: page size in pixels (round(size_in × dpi)), where each panel's
 * raster goes and at how many pixels per cell, and warnings in plain words for the proof preview.
 * Pure: the same answer in the browser and on the farm.
 * @example layoutFigure(figureSpecSchema.parse({ size: { kind: 'paper', paper: 'A4' }, dpi: 600, panels: [{ runId: 'r1' }] }), [run]).page.widthPx // 4961
 */
export function layoutFigure(spec: FigureSpec, runs: readonly RunGeometry[]): FigureLayout {
  // The caption's lines are reserved before the panels are sized, but its measure is the panels'
  // width: lay out again at the measure found until the caption fits the lines reserved. A narrower
  // measure only ever makes the band taller and the panels no wider, so this settles in a pass or two.
  let l = layoutAtMeasure(spec, runs, null);
  for (let pass = 0; pass < 4 && l.caption && l.caption.width < l.captionMeasure; pass++) l = layoutAtMeasure(spec, runs, l.caption.width);
  const { captionMeasure: _assumed, ...layout } = l;
  return layout;
}

/** layoutFigure with the caption's lines estimated at `captionMeasure` page pixels (null: the content width). */
function layoutAtMeasure(spec: FigureSpec, runs: readonly RunGeometry[], captionMeasure: number | null): FigureLayout & { captionMeasure: number } {
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
  const measure = captionMeasure ?? contentW;
  const captionLines = captionText ? estimateCaptionLines(captionText, captionFont, Math.max(1, measure), dpi) : 0;
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

  const column = textColumn(
    panels.map((q) => q.image),
    { x: m.left, width: contentW },
    pt2px(MIN_MEASURE_EM * Math.max(spec.textPt, captionText ? captionFont : 0)),
  );
  const legend: LegendBox | null = spec.legend
    ? { x: column.x, y: gridBottom + pt2px(spec.textPt * 0.8), width: column.width, height: legendBand - pt2px(spec.textPt * 0.8), reach: m.left + contentW }
    : null;
  const caption = captionText
    ? { x: column.x, y: gridBottom + legendBand + pt2px(captionFont * 0.8), width: column.width, height: captionBand - pt2px(captionFont * 0.8), text: captionText, fontPt: captionFont }
    : null;
  return {
    captionMeasure: measure,
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
