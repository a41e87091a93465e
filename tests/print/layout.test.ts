import { describe, expect, it } from 'vitest';
import { MAX_PAGE_PIXELS, estimatePrintBytes, largestDpiWithin, pagePixels, pixelsFor } from '../../shared/print-size.js';
import { pageSizeMm } from '../../shared/print-page.js';
import { figureSpecSchema, printableFigureSpecSchema, type FigureSpecInput } from '../../shared/print-spec.js';
import { panelLabelText, regionText, unreducedNote } from '../../shared/print-words.js';
import { layoutFigure, niceLength, type RunGeometry } from '../../shared/print-layout.js';

const run = (runId: string, side: number, chips = 1000): RunGeometry => ({ runId, shape: [side, side], origin: [side >> 1, side >> 1], chips });
const line = (runId: string, cells: number, chips = 1000): RunGeometry => ({ runId, shape: [cells], origin: [cells >> 1], chips });
const layout = (spec: FigureSpecInput, runs: RunGeometry[]) => layoutFigure(figureSpecSchema.parse(spec), runs);

describe('page size', () => {
  it('is round(size in inches × dpi) pixels, with ISO 216 A sizes', () => {
    // ISO 216: A4 = 210 × 297 mm, A0 = 841 × 1189 mm; 25.4 mm per inch (international inch, 1959)
    const a4 = layout({ size: { kind: 'paper', paper: 'A4' }, dpi: 600, panels: [{ runId: 'r' }] }, [run('r', 101)]);
    expect([a4.page.widthPx, a4.page.heightPx]).toEqual([4961, 7016]);
    const a0 = layout({ size: { kind: 'paper', paper: 'A0' }, dpi: 600, panels: [{ runId: 'r' }] }, [run('r', 101)]);
    expect([a0.page.widthPx, a0.page.heightPx]).toEqual([19866, 28087]);
    // A4 in PDF points (1/72 in, ISO 32000-1 §8.3.2.3 default user space unit): 595.276 × 841.890 (common practice)
    expect(a4.page.widthPt).toBeCloseTo(595.276, 3);
    expect(a4.page.heightPt).toBeCloseTo(841.89, 3);
  });

  it('knows US paper and landscape orientation', () => {
    // US Letter 8.5 × 11 in (ANSI A): 2550 × 3300 px at 300 DPI
    const letter = layout({ size: { kind: 'paper', paper: 'letter' }, dpi: 300, panels: [{ runId: 'r' }] }, [run('r', 11)]);
    expect([letter.page.widthPx, letter.page.heightPx]).toEqual([2550, 3300]);
    expect(pageSizeMm({ kind: 'paper', paper: 'A3', orientation: 'landscape' })).toEqual({ width: 420, height: 297 });
    const custom = pageSizeMm({ kind: 'custom', width: 4, height: 6, unit: 'in' });
    expect(custom.width).toBeCloseTo(101.6, 9);
    expect(custom.height).toBeCloseTo(152.4, 9);
  });

  it('gives a journal column its width and a height from the content', () => {
    // 90 mm single column (common practice); at 600 DPI: round(90 / 25.4 × 600) = 2126
    const l = layout({ size: { kind: 'column', column: 'single' }, dpi: 600, margins: { top: 0, right: 0, bottom: 0, left: 0 }, legend: false, labels: 'none', panels: [{ runId: 'r' }] }, [run('r', 200)]);
    expect(l.page.widthPx).toBe(pixelsFor(90, 600));
    expect(l.page.widthPx).toBe(2126);
    // a square run in a 2126 px slot: cells of floor(2126 / 200) = 10 px, and the page as tall as
    // the 2000 px panel they make (no band of paper under it)
    expect(l.panels[0].cellPx).toBe(10);
    expect(l.page.heightPx).toBe(2000);
    expect(l.printable).toBe(true);
  });

  it('makes a column page as tall as a fixed magnification needs, not as the slot width would', () => {
    // 200 cells at 3 px per cell: 600 px of panel, so with no margins, labels or legend a 600 px tall page
    const l = layout(
      { size: { kind: 'column', column: 'single' }, dpi: 600, margins: { top: 0, right: 0, bottom: 0, left: 0 }, legend: false, labels: 'none', panels: [{ runId: 'r', magnification: 3 }] },
      [run('r', 200)],
    );
    expect(l.page.widthPx).toBe(2126);
    expect([l.panels[0].image.width, l.panels[0].image.height, l.page.heightPx]).toEqual([600, 600, 600]);
    expect(l.printable).toBe(true);
  });

  it('refuses a column page that would be taller than 2 m', () => {
    // a region 2 cells wide and 1,000 tall, fitted to a 90 mm column: 45 m of page
    const l = layout({ size: { kind: 'column', column: 'single' }, dpi: 300, panels: [{ runId: 'r', region: { xMin: 0, xMax: 1, yMin: -500, yMax: 499 } }] }, [run('r', 1001)]);
    expect(l.printable).toBe(false);
    const w = l.warnings.find((x) => x.code === 'size-not-met')!;
    expect(w.message).toMatch(/^the size asked for cannot be met: at this column width the panels would make the page [\d,]+ mm tall \(at most 2,000 mm\)/);
  });
});

describe('panels', () => {
  it('reduces cells smaller than a pixel and says how', () => {
    const l = layout({ size: { kind: 'column', column: 'single' }, dpi: 150, margins: { top: 0, right: 0, bottom: 0, left: 0 }, legend: false, labels: 'none', panels: [{ runId: 'r' }] }, [run('r', 1500)]);
    // 90 mm at 150 DPI = 531 px for 1500 cells: 1500 / 531 = 2.8 → every 3 × 3 block
    expect(l.page.widthPx).toBe(531);
    expect(l.panels[0].reduction).toBe(3);
    expect(l.panels[0].image.width).toBe(500);
    expect(l.warnings.map((w) => w.message)).toContain(
      'panel 1: cells are smaller than one printed pixel: every 3 × 3 block of cells becomes one pixel (most frequent height)',
    );
    expect(l.printable).toBe(true);
  });

  it('refuses a magnification that does not fit, naming the numbers', () => {
    const l = layout({ size: { kind: 'paper', paper: 'A6' }, dpi: 300, panels: [{ runId: 'r', magnification: 8 }] }, [run('r', 501)]);
    expect(l.printable).toBe(false);
    const w = l.warnings.find((x) => x.code === 'size-not-met')!;
    expect(w.blocking).toBe(true);
    expect(w.message).toMatch(/^panel 1: the size asked for cannot be met at this resolution: 501 × 501 cells at 8 px per cell need 4,008 × 4,008 px/);
  });

  it('keeps a whole number of pixels per cell and centres the panel', () => {
    const l = layout({ size: { kind: 'paper', paper: 'A5' }, dpi: 300, labels: 'none', legend: false, panels: [{ runId: 'r', magnification: 3, region: { xMin: -10, xMax: 9, yMin: -5, yMax: 5 } }] }, [run('r', 41)]);
    const p = l.panels[0];
    expect([p.cellPx, p.image.width, p.image.height]).toEqual([3, 60, 33]);
    // lattice x = array index − origin: x −10 is array column 20 − 10 = 10
    expect(p.window).toEqual({ x: 10, y: 15, width: 20, height: 11 });
    expect(p.image.x - p.slot.x).toBe(Math.floor((p.slot.width - 60) / 2));
  });

  it('leaves a lone panel unlabelled unless the author names it, and labels several', () => {
    const one = layout({ size: { kind: 'paper', paper: 'A5' }, panels: [{ runId: 'r' }] }, [run('r', 41)]);
    expect(one.panels[0].label).toBeNull();
    expect(one.panels[0].labelAt).toBeNull();
    const named = layout({ size: { kind: 'paper', paper: 'A5' }, panels: [{ runId: 'r', label: 'n = 1000' }] }, [run('r', 41)]);
    expect(named.panels[0].label).toBe('n = 1000');
    const two = layout({ size: { kind: 'paper', paper: 'A5' }, grid: { rows: 1, cols: 2 }, panels: [{ runId: 'r' }, { runId: 'r' }] }, [run('r', 41)]);
    expect(two.panels.map((p) => p.label)).toEqual(['(a)', '(b)']);
    // no label band is reserved above a lone unlabelled panel
    expect(one.panels[0].image.y).toBe(one.panels[0].slot.y);
  });

  it('reduces a line along its length and says so in its own words', () => {
    // 20,001 cells on a 90 mm column at 150 DPI (531 px): ceil(20001 / 531) = 38 cells per pixel
    const l = layout({ size: { kind: 'column', column: 'single' }, dpi: 150, margins: { top: 0, right: 0, bottom: 0, left: 0 }, legend: false, panels: [{ runId: 'l' }] }, [line('l', 20001)]);
    expect(l.panels[0].reduction).toBe(38);
    expect(l.warnings.map((w) => w.message)).toEqual(['panel 1: cells are smaller than one printed pixel: every 38 cells along the line become one pixel (most frequent height)']);
  });

  it('writes regions with the minus sign, a line by its x range alone', () => {
    expect(regionText({ xMin: -2500, xMax: 2500, yMin: 0, yMax: 0 }, 1)).toBe('x −2500..2500');
    expect(regionText({ xMin: -6, xMax: 3, yMin: -4, yMax: 5 }, 2)).toBe('x −6..3, y −4..5');
    const l = layout({ size: { kind: 'paper', paper: 'A5' }, panels: [{ runId: 'l', region: { xMin: -30, xMax: 0, yMin: 0, yMax: 0 } }] }, [line('l', 41)]);
    expect(l.warnings.map((w) => w.message)).toEqual(['panel 1: region x −30..0 leaves the computed run (x −20..20)']);
  });

  it('says how unreduced cells print: one printed pixel per cell, k × k, a line as columns', () => {
    expect(unreducedNote([{ index: 0, cellPx: 1, dims: 2 }])).toBe('One printed pixel per cell: nothing is reduced.');
    expect(unreducedNote([{ index: 0, cellPx: 8, dims: 2 }])).toBe('8 × 8 printed pixels per cell: nothing is reduced.');
    expect(unreducedNote([{ index: 0, cellPx: 3, dims: 2 }, { index: 1, cellPx: 2, dims: 1 }])).toBe('Panel 1: 3 × 3 printed pixels per cell; panel 2: a column 2 printed pixels wide per cell. Nothing is reduced.');
    // the note follows the layout: a 41-cell square at a fixed 4 px per cell
    const l = layout({ size: { kind: 'paper', paper: 'A5' }, panels: [{ runId: 'r', magnification: 4 }] }, [run('r', 41)]);
    expect(unreducedNote(l.panels.map((p) => ({ index: p.index, cellPx: p.cellPx, dims: 2 })))).toBe('4 × 4 printed pixels per cell: nothing is reduced.');
  });

  it('rejects regions outside the run and unknown runs', () => {
    const l = layout({ size: { kind: 'paper', paper: 'A5' }, panels: [{ runId: 'r', region: { xMin: -30, xMax: 0, yMin: 0, yMax: 0 } }, { runId: 'zz' }], grid: { rows: 1, cols: 2 } }, [run('r', 41)]);
    expect(l.printable).toBe(false);
    expect(l.warnings.map((w) => w.code).sort()).toEqual(['region-outside-run', 'unknown-run']);
  });

  it('shares one lattice scale across panels when asked', () => {
    const l = layout({ size: { kind: 'paper', paper: 'A4', orientation: 'landscape' }, dpi: 300, grid: { rows: 1, cols: 2, sharedScale: 'lattice' }, panels: [{ runId: 'a' }, { runId: 'b' }] }, [run('a', 51), run('b', 201)]);
    expect(l.panels[0].cellPx).toBe(l.panels[1].cellPx);
    const free = layout({ size: { kind: 'paper', paper: 'A4', orientation: 'landscape' }, dpi: 300, grid: { rows: 1, cols: 2 }, panels: [{ runId: 'a' }, { runId: 'b' }] }, [run('a', 51), run('b', 201)]);
    expect(free.panels[0].cellPx).toBeGreaterThan(free.panels[1].cellPx);
  });

  it('rescales piles of different n to the same size in units of √n', () => {
    // piles of n = 10^4 and 10^6 grains: diameters ∝ √n (common practice), arrays 101 and 1001 cells wide
    const l = layout(
      { size: { kind: 'paper', paper: 'A4', orientation: 'landscape' }, dpi: 600, grid: { rows: 1, cols: 2, sharedScale: 'rescaled' }, scaleBar: { unit: 'rescaled', length: 0.5 }, panels: [{ runId: 'a' }, { runId: 'b' }] },
      [run('a', 101, 1e4), run('b', 1001, 1e6)],
    );
    const [a, b] = l.panels;
    // px per unit of x/√n: k·√n, equal up to whole-pixel rounding
    const ratio = (a.pixelsPerCell * 100) / (b.pixelsPerCell * 1000);
    expect(ratio).toBeGreaterThan(0.85);
    expect(ratio).toBeLessThan(1.18);
    // each bar is exact for its own panel: 0.5 · √n cells at that panel's pixels per cell
    expect(a.scaleBar!.cells).toBe(50);
    expect(b.scaleBar!.cells).toBe(500);
    expect(a.scaleBar!.bar.width).toBe(Math.round(50 * a.pixelsPerCell));
    expect(b.scaleBar!.bar.width).toBe(Math.round(500 * b.pixelsPerCell));
  });

  it('labels panels and picks round scale-bar lengths', () => {
    expect([0, 1, 25, 26].map((i) => panelLabelText(i, 27, 'letters'))).toEqual(['(a)', '(b)', '(z)', '(aa)']);
    expect(panelLabelText(2, 3, 'numbers')).toBe('(3)');
    expect(panelLabelText(0, 2, 'none', 'A')).toBe('A');
    expect([0.19, 7, 25, 480].map(niceLength)).toEqual([0.1, 5, 20, 200]);
  });
});

describe('scale bar, legend and caption', () => {
  const bottomOfScaleText = (l: ReturnType<typeof layout>) => Math.max(...l.panels.map((p) => p.scaleBar!.textAt.y)) + textLine(l);
  const textLine = (l: ReturnType<typeof layout>) => Math.ceil(((l.textPt * 1.25) / 72) * l.dpi);
  const pt = (l: ReturnType<typeof layout>, v: number) => Math.round((v / 72) * l.dpi);
  const spec = (size: FigureSpecInput['size'], extra: Partial<FigureSpecInput> = {}): FigureSpecInput => ({
    size,
    dpi: 300,
    grid: { rows: 1, cols: 2 },
    panels: [{ runId: 'r' }, { runId: 'r', layer: 'odometer' }],
    scaleBar: { unit: 'lattice' },
    caption: { text: 'Two views of one pile.' },
    ...extra,
  });

  for (const [name, size] of [
    ['an A4 page', { kind: 'paper', paper: 'A4' }],
    ['a full-width column', { kind: 'column', column: 'full' }],
  ] as const) {
    it(`follow each other with only their own spacing on ${name}`, () => {
      const l = layout(spec(size), [run('r', 61)]);
      expect(l.printable).toBe(true);
      // the legend starts 0.8 × the text size under the last scale-bar line, whatever room the page has left
      expect(l.legend!.y - bottomOfScaleText(l)).toBe(pt(l, 8 * 0.8));
      // two rows of three lines each and one gap between them: the band is exactly what is drawn
      expect(l.legend!.height).toBe(2 * 3 * textLine(l) + pt(l, 8 * 0.6));
      // the caption starts 0.8 × its own size under the legend
      expect(l.caption!.y - (l.legend!.y + l.legend!.height)).toBe(pt(l, 9 * 0.8));
      // a column page ends one margin under the caption; a paper page keeps the rest as paper below
      const end = l.caption!.y + l.caption!.height + pixelsFor(10, 300);
      if (size.kind === 'column') expect(l.page.heightPx).toBe(end);
      else expect(l.page.heightPx).toBeGreaterThan(end);
    });
  }

  it('packs rows to the panels they hold, on a fixed page too', () => {
    // 2 × 2 on A4 with wide, short regions: each row is far shorter than half the page
    const wide = { xMin: -30, xMax: 30, yMin: -5, yMax: 5 };
    const l = layout(
      { size: { kind: 'paper', paper: 'A4' }, dpi: 300, grid: { rows: 2, cols: 2 }, scaleBar: { unit: 'lattice' }, panels: [0, 1, 2, 3].map(() => ({ runId: 'r', region: wide })) },
      [run('r', 61)],
    );
    const [a, , c] = l.panels;
    // the second row's label starts one grid gap (4 mm) under the first row's scale-bar line
    expect(c.labelAt!.y - (a.scaleBar!.textAt.y + textLine(l))).toBe(pixelsFor(4, 300));
    expect(c.slot.y).toBe(a.slot.y + a.slot.height + pixelsFor(4, 300));
  });

  it('gives panels of one run, slice, layer and style one legend row, and others their own', () => {
    const l = layout(
      {
        size: { kind: 'paper', paper: 'A4' },
        grid: { rows: 2, cols: 2 },
        panels: [{ runId: 'r' }, { runId: 'r', region: { xMin: 0, xMax: 5, yMin: 0, yMax: 5 } }, { runId: 's' }, { runId: 'r', palette: 'kiln' }],
      },
      [run('r', 61), run('s', 61)],
    );
    expect(l.panels.map((p) => p.legendRow)).toEqual([0, 0, 1, 2]);
    expect(layout({ size: { kind: 'paper', paper: 'A4' }, legend: false, panels: [{ runId: 'r' }] }, [run('r', 61)]).panels[0].legendRow).toBeNull();
  });
});

describe('figure spec', () => {
  it('rejects out-of-range resolutions and too many panels for the grid', () => {
    expect(figureSpecSchema.safeParse({ size: { kind: 'paper', paper: 'A4' }, dpi: 100, panels: [{ runId: 'r' }] }).success).toBe(false);
    expect(figureSpecSchema.safeParse({ size: { kind: 'paper', paper: 'A4' }, dpi: 1300, panels: [{ runId: 'r' }] }).success).toBe(false);
    const r = figureSpecSchema.safeParse({ size: { kind: 'paper', paper: 'A4' }, grid: { rows: 1, cols: 1 }, panels: [{ runId: 'a' }, { runId: 'b' }] });
    expect(r.success).toBe(false);
    expect(r.error!.issues[0].message).toBe('2 panels do not fit a 1 × 1 grid');
    expect(figureSpecSchema.safeParse({ size: { kind: 'paper', paper: 'A4' }, panels: [{ runId: 'r', magnification: 1.5 }] }).success).toBe(false);
  });
});

describe('the largest page a print may have', () => {
  const a0 = (dpi: number, orientation: 'portrait' | 'landscape' = 'portrait'): FigureSpecInput => ({ size: { kind: 'paper', paper: 'A0', orientation }, dpi, panels: [{ runId: 'r' }] });

  it('refuses A0 at 1200 DPI in the spec, naming the page in pixels, the limit and the largest DPI that fits', () => {
    const parsed = printableFigureSpecSchema.safeParse(a0(1200));
    expect(parsed.success).toBe(false);
    const issue = parsed.error!.issues[0]!;
    expect(issue.path).toEqual(['dpi']);
    // ISO 216 A0 841 × 1189 mm: 39,732 × 56,173 px at 1200 DPI; at 803 DPI 26,588 × 37,589 px = 999,416,332 ≤ 10^9,
    // at 804 DPI 26,621 × 37,636 px = 1,001,907,956 > 10^9
    expect(issue.message).toBe(
      'at 1200 DPI A0 portrait would be 39,732 × 56,173 px (2.23 gigapixels), more than the 1,000,000,000 px (1 gigapixel) a print may have; ' +
        'at most 803 DPI fits A0 portrait (26,588 × 37,589 px); choose that or less, or a smaller page',
    );
  });

  it('puts the limit between two whole DPIs exactly, in the schema and in the layout', () => {
    const most = largestDpiWithin(841, 1189);
    expect(most).toBe(803);
    expect(pagePixels(841, 1189, most).pixels).toBeLessThanOrEqual(MAX_PAGE_PIXELS);
    expect(pagePixels(841, 1189, most + 1).pixels).toBeGreaterThan(MAX_PAGE_PIXELS);
    expect(printableFigureSpecSchema.safeParse(a0(803)).success).toBe(true);
    expect(printableFigureSpecSchema.safeParse(a0(804, 'landscape')).success).toBe(false);
    // the layout (what the order and the print engine check) agrees, for stored specs read without the limit
    expect(layout(a0(803), [run('r', 101)]).printable).toBe(true);
    const over = layout(a0(804), [run('r', 101)]);
    expect(over.printable).toBe(false);
    expect(over.warnings).toEqual([expect.objectContaining({ code: 'page-too-large', blocking: true })]);
    // A1 (594 × 841 mm) fits up to 1136 DPI, 1137 does not (1,001,007,140 px)
    expect(largestDpiWithin(594, 841)).toBe(1136);
  });

  it('keeps every page side within 200 in, the largest page PDF readers must open, so every page fits at 150 DPI', () => {
    const custom = (width: number, height: number, unit: 'mm' | 'in' = 'mm'): FigureSpecInput => ({ size: { kind: 'custom', width, height, unit }, dpi: 150, panels: [{ runId: 'r' }] });
    const huge = printableFigureSpecSchema.safeParse(custom(6000, 6000));
    expect(huge.success).toBe(false);
    expect(huge.error!.issues).toEqual([
      expect.objectContaining({ path: ['size'], message: 'this 6,000 × 6,000 mm page is longer than 5,080 mm (200 in) on a side, the largest page PDF readers open; choose a smaller page' }),
    ]);
    // 14,400 units of 1/72 in (PDF Reference 1.7, Appendix C; from memory) = 200 in = 5,080 mm
    expect(printableFigureSpecSchema.safeParse(custom(200, 10, 'in')).success).toBe(true);
    expect(printableFigureSpecSchema.safeParse(custom(10, 200.5, 'in')).success).toBe(false);
    // the largest page, 200 × 200 in, is 30,000 × 30,000 px = 9·10^8 px at 150 DPI: within the pixel limit
    expect(printableFigureSpecSchema.safeParse(custom(5080, 5080)).success).toBe(true);
    expect(pagePixels(5080, 5080, 150).pixels).toBe(900_000_000);
    // a stored spec read without the limit is held back by the layout, which orders and prints check
    const stored = layout(custom(6000, 100), [run('r', 101)]);
    expect(stored.printable).toBe(false);
    expect(stored.warnings).toEqual([expect.objectContaining({ code: 'page-too-large', blocking: true, message: expect.stringMatching(/longer than 5,080 mm \(200 in\) on a side/) })]);
  });

  it('estimates file sizes in proportion to the page pixels, a quarter as much at half the DPI', () => {
    const at = (dpi: number) => estimatePrintBytes(pagePixels(210, 297, dpi).pixels);
    expect(at(600).tiff / at(300).tiff).toBeCloseTo(4, 2);
    expect(at(300).tiff).toBeGreaterThan(at(300).png);
  });
});
