import { rm } from 'node:fs/promises';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { renderPrint } from '../../renderer/src/print/index.js';
import { textWidthPt } from '../../renderer/src/print/fonts.js';
import type { LayerStats } from '../../shared/palettes.js';
import { figureTextMarks, panelLegend, type TextMark } from '../../shared/print-marks.js';
import { POINTS_PER_INCH } from '../../shared/print-page.js';
import { figureSpecSchema, type FigureSpecInput } from '../../shared/print-spec.js';
import { estimateCaptionLines } from '../../shared/print-words.js';
import { layoutFigure, MIN_MEASURE_EM, textColumn, type RunGeometry } from '../../shared/print-layout.js';
import { decodeRgb, squarePile, tempDir } from './helpers.js';

/**
 * The legend and caption are set in the panels' column: from the left edge of the leftmost panel to
 * the right edge of the rightmost (no narrower than a readable measure), in the layout and so in
 * every output drawn from it.
 */

const run = (runId: string, side: number): RunGeometry => ({ runId, shape: [side, side], origin: [side >> 1, side >> 1], chips: 1000 });
const layout = (spec: FigureSpecInput, runs: RunGeometry[]) => layoutFigure(figureSpecSchema.parse(spec), runs);
const pt2px = (pt: number, dpi: number) => Math.round((pt / POINTS_PER_INCH) * dpi);
const linePx = (pt: number, dpi: number) => Math.ceil(((pt * 1.25) / POINTS_PER_INCH) * dpi);
const caption = 'Final configuration of the pile, two pixels per cell. The colour key gives the grains left on each site; the scale bar is in lattice units.';

describe('legend and caption column', () => {
  it('starts at a narrow centred panel’s left edge and is as wide as the panel', () => {
    // A4 at 300 DPI: 2244 px of content; 401 cells at 2 px per cell = 802 px (68 mm), centred
    const l = layout({ size: { kind: 'paper', paper: 'A4' }, dpi: 300, scaleBar: {}, caption: { text: caption }, panels: [{ runId: 'r', magnification: 2 }] }, [run('r', 401)]);
    expect(l.printable).toBe(true);
    const img = l.panels[0].image;
    expect(img.width).toBe(802);
    expect(img.x).toBe(l.content.x + Math.floor((l.content.width - 802) / 2));
    expect([l.legend!.x, l.legend!.width]).toEqual([img.x, img.width]);
    expect([l.caption!.x, l.caption!.width]).toEqual([img.x, img.width]);
    // the scale bar and its words start at the same edge
    expect(l.panels[0].scaleBar!.bar.x).toBe(img.x);
    // swatches may still run on to the content's edge
    expect(l.legend!.reach).toBe(l.content.x + l.content.width);
    // the caption's lines are reserved for the panel's measure, not the page's
    const lines = estimateCaptionLines(caption, 9, img.width, 300);
    expect(lines).toBeGreaterThan(estimateCaptionLines(caption, 9, l.content.width, 300));
    expect(l.caption!.height).toBe(lines * linePx(9, 300));
  });

  it('is the content box under a panel as wide as the content', () => {
    // a 90 mm column at 600 DPI without margins is 2126 px: 1063 cells at 2 px per cell fill it
    const l = layout({ size: { kind: 'column', column: 'single' }, dpi: 600, margins: { top: 0, right: 0, bottom: 0, left: 0 }, caption: { text: caption }, panels: [{ runId: 'r' }] }, [run('r', 1063)]);
    expect(l.panels[0].image).toMatchObject({ x: 0, width: 2126 });
    expect(l.legend).toMatchObject({ x: l.content.x, width: l.content.width });
    expect(l.caption).toMatchObject({ x: l.content.x, width: l.content.width });
    expect(l.caption!.height).toBe(estimateCaptionLines(caption, 9, 2126, 600) * linePx(9, 600));
  });

  it('spans a row of panels from the first panel’s left edge to the last one’s right edge', () => {
    const l = layout({ size: { kind: 'paper', paper: 'A4', orientation: 'landscape' }, dpi: 300, grid: { rows: 1, cols: 2 }, caption: { text: caption }, panels: [{ runId: 'r', magnification: 3 }, { runId: 'r', magnification: 3 }] }, [run('r', 301)]);
    const [a, b] = l.panels;
    expect(b.image.x).toBeGreaterThan(a.image.x + a.image.width);
    expect(l.legend).toMatchObject({ x: a.image.x, width: b.image.x + b.image.width - a.image.x });
    expect(l.caption).toMatchObject({ x: a.image.x, width: b.image.x + b.image.width - a.image.x });
  });

  it('keeps a readable measure under a tiny panel, centred on it and inside the content', () => {
    // 41 cells at 2 px per cell: 82 px, far less than 20 em of 9 pt caption type (250 px at 300 DPI)
    const l = layout({ size: { kind: 'paper', paper: 'A5' }, dpi: 300, caption: { text: caption }, panels: [{ runId: 'r', magnification: 2 }] }, [run('r', 41)]);
    const img = l.panels[0].image;
    const min = pt2px(MIN_MEASURE_EM * 9, 300);
    expect(l.legend!.width).toBe(min);
    expect(l.caption!.width).toBe(min);
    expect(l.legend!.x + l.legend!.width / 2).toBeCloseTo(img.x + img.width / 2, -1);
    // beside the content's edge the column is moved in, never off the content
    expect(textColumn([{ x: 1000, y: 0, width: 40, height: 40 }], { x: 100, width: 1000 }, 300)).toEqual({ x: 800, width: 300 });
    expect(textColumn([{ x: 100, y: 0, width: 40, height: 40 }], { x: 100, width: 1000 }, 300)).toEqual({ x: 100, width: 300 });
    // wider than the content: the content
    expect(textColumn([{ x: 500, y: 0, width: 40, height: 40 }], { x: 100, width: 200 }, 300)).toEqual({ x: 100, width: 200 });
    // no panel placed: the content
    expect(textColumn([], { x: 100, width: 1000 }, 300)).toEqual({ x: 100, width: 1000 });
  });

  it('sets the legend rows in the column, and lets a long row of swatches run on past a narrow panel', () => {
    const l = layout({ size: { kind: 'paper', paper: 'A4' }, dpi: 300, panels: [{ runId: 'r', magnification: 2 }] }, [run('r', 401)]);
    // a height legend of 20 entries (0..19): wider than the 802 px panel
    const stats: LayerStats = { cells: 2000, minHeight: 0, maxHeight: 19, heightCounts: Array.from({ length: 20 }, () => 100), toppledCells: 2000, maxOdometer: 50 };
    const marks = figureTextMarks(l, [panelLegend({ layer: 'heights', palette: 'tidewater', untoppled: 'neutral' }, stats)], textWidthPt);
    const k = POINTS_PER_INCH / l.dpi;
    const texts = marks.filter((m): m is TextMark => m.kind === 'text');
    const title = texts.find((m) => m.text === 'Final height')!;
    expect(title.x).toBeCloseTo(l.panels[0].image.x * k, 6);
    const labels = texts.filter((m) => m.y > title.y + 1);
    expect(Math.min(...labels.map((m) => m.x))).toBeGreaterThanOrEqual(l.legend!.x * k);
    // every entry fits the content from the panel's edge, and the row goes past the panel to hold them
    expect(labels.map((m) => m.text)).toEqual(Array.from({ length: 20 }, (_, i) => String(i)));
    const last = labels.at(-1)!;
    expect(last.x).toBeGreaterThan((l.legend!.x + l.legend!.width) * k);
    expect(last.x + textWidthPt('regular', last.sizePt, last.text)).toBeLessThanOrEqual(l.legend!.reach * k);
  });
});

describe('printed column', () => {
  let dir: string;
  beforeAll(async () => {
    dir = await tempDir('text-column');
  });
  afterAll(async () => {
    await rm(dir, { recursive: true, force: true });
  });

  it('draws the legend and caption of a narrow panel between its edges in the PNG', async () => {
    const pile = squarePile(1000);
    const path = join(dir, 'narrow.png');
    const spec: FigureSpecInput = { size: { kind: 'paper', paper: 'A5' }, dpi: 300, labels: 'none', caption: { text: caption }, panels: [{ runId: 'p', magnification: 40, layer: 'odometer' }] };
    const { layout: l } = await renderPrint(spec, [{ runId: 'p', input: pile, chips: 1000 }], { png: path });
    const img = l.panels[0].image;
    expect(img.x).toBeGreaterThan(l.content.x);
    expect(img.width).toBeGreaterThan(pt2px(MIN_MEASURE_EM * 9, 300));
    const page = await decodeRgb(path);
    // columns of the page under the panels that carry ink (anti-aliased grey or a legend colour)
    const inked = new Set<number>();
    for (let y = l.legend!.y; y < l.caption!.y + l.caption!.height; y++)
      for (let x = 0; x < page.width; x++) {
        const o = 3 * (y * page.width + x);
        if (page.data[o] !== 255 || page.data[o + 1] !== 255 || page.data[o + 2] !== 255) inked.add(x);
      }
    const xs = [...inked];
    // the ink begins at the panel's left edge (within a glyph's side bearing) and stays within its width
    expect(Math.min(...xs)).toBeGreaterThanOrEqual(img.x - 1);
    expect(Math.min(...xs)).toBeLessThan(img.x + pt2px(2, 300));
    expect(Math.max(...xs)).toBeLessThan(img.x + img.width + 1);
  });
});
