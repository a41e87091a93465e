import { readFile, rm } from 'node:fs/promises';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { pagePalette, prepareFigure, renderPrint } from '../../renderer/src/print/index.js';
import { textWidthPt } from '../../renderer/src/print/fonts.js';
import { wrapText } from '../../renderer/src/print/marks.js';
import { computeStats, planeOf } from '../../renderer/src/render/index.js';
import { colourTable, paletteById } from '../../shared/palettes.js';
import { POINTS_PER_INCH } from '../../shared/print-page.js';
import type { FigureSpecInput } from '../../shared/print-spec.js';
import type { FigureLayout, PxRect } from '../../shared/print-layout.js';
import { decodeRgb, squarePile, tempDir } from './helpers.js';

/**
 * Caption, legend, panel labels and scale-bar numbers in the raster pages (PNG, and the TIFF made from
 * it): present where layoutFigure puts them, and set like the PDF's text as Mozilla's PDF.js (a
 * general-purpose PDF reader) reports it.
 */

let dir: string;
beforeAll(async () => {
  dir = await tempDir('text');
});
afterAll(async () => {
  await rm(dir, { recursive: true, force: true });
});

type Img = { data: Buffer; width: number; height: number };
const px = (img: Img, x: number, y: number) => {
  const o = 3 * (y * img.width + x);
  return [img.data[o], img.data[o + 1], img.data[o + 2]];
};
const isPaper = (c: number[]) => c[0] === 255 && c[1] === 255 && c[2] === 255;
/** anti-aliased ink: a neutral grey darker than the paper */
const isInk = (c: number[]) => c[0] === c[1] && c[1] === c[2] && c[0] < 200;
const inside = (r: PxRect, x: number, y: number, pad = 0) => x >= r.x - pad && x < r.x + r.width + pad && y >= r.y - pad && y < r.y + r.height + pad;

function countInk(img: Img, r: PxRect): number {
  let n = 0;
  for (let y = Math.max(0, r.y); y < Math.min(img.height, r.y + r.height); y++)
    for (let x = Math.max(0, r.x); x < Math.min(img.width, r.x + r.width); x++) if (isInk(px(img, x, y))) n++;
  return n;
}

/** Where the layout says text goes: label and scale-bar lines, the legend box, the caption box. */
function textBoxes(l: FigureLayout): { name: string; box: PxRect }[] {
  const line = Math.ceil(((l.textPt * 1.25) / POINTS_PER_INCH) * l.dpi);
  const boxes: { name: string; box: PxRect }[] = [];
  for (const p of l.panels) {
    if (p.labelAt) boxes.push({ name: `label ${p.label}`, box: { x: p.labelAt.x, y: p.labelAt.y, width: p.slot.x + p.slot.width - p.labelAt.x, height: line } });
    if (p.scaleBar) boxes.push({ name: `scale bar ${p.index + 1}`, box: { x: p.scaleBar.textAt.x, y: p.scaleBar.textAt.y, width: p.slot.x + p.slot.width - p.scaleBar.textAt.x, height: line } });
  }
  if (l.legend) boxes.push({ name: 'legend', box: l.legend });
  if (l.caption) boxes.push({ name: 'caption', box: l.caption });
  return boxes;
}

const pile = () => squarePile(1000);
const runs = () => [{ runId: 'p', input: pile(), chips: 1000 }];
const caption = 'Final configuration of 1,000 grains at the origin of the square lattice, three pixels per cell; right: the sites that toppled.';

const indexedSpec: FigureSpecInput = {
  size: { kind: 'paper', paper: 'A5', orientation: 'landscape' },
  dpi: 300,
  grid: { rows: 1, cols: 2 },
  panels: [
    { runId: 'p', magnification: 3 },
    { runId: 'p', layer: 'toppled', untoppled: 'transparent', magnification: 3, label: 'toppled' },
  ],
  scaleBar: { unit: 'lattice', length: 10 },
  caption: { text: caption },
};
// two continuous ramps of different palettes: more than 256 colours, an RGB page
const rgbSpec: FigureSpecInput = {
  ...indexedSpec,
  panels: [
    { runId: 'p', layer: 'odometer', palette: 'tidewater' },
    { runId: 'p', layer: 'odometer', palette: 'kiln' },
  ],
  scaleBar: { unit: 'rescaled', length: 0.25 },
};

describe('text in the PNG and TIFF', () => {
  for (const [name, spec] of [
    ['indexed', indexedSpec],
    ['RGB', rgbSpec],
  ] as const) {
    it(`puts labels, scale-bar numbers, legend and caption where the layout says (${name} page)`, async () => {
      const path = join(dir, `${name}.png`);
      const res = await renderPrint(spec, runs(), { png: path });
      expect(pagePalette(prepareFigure(spec, runs())).remap === null).toBe(name === 'RGB');
      const l = res.layout;
      const img = await decodeRgb(path);
      const boxes = textBoxes(l);
      expect(boxes.map((b) => b.name)).toEqual(['label (a)', 'scale bar 1', name === 'RGB' ? 'label (b)' : 'label toppled', 'scale bar 2', 'legend', 'caption']);
      // every text region carries ink; a line of 8 pt text at 300 DPI has hundreds of dark pixels
      for (const { name: what, box } of boxes) expect(countInk(img, box), what).toBeGreaterThan(100);
      // nothing is drawn anywhere else: outside panels, scale bars and those regions the page is paper
      const drawn = [...l.panels.map((p) => p.image), ...l.panels.flatMap((p) => (p.scaleBar ? [p.scaleBar.bar] : [])), ...boxes.map((b) => b.box)];
      let stray = 0;
      for (let y = 0; y < img.height; y++)
        for (let x = 0; x < img.width; x++) if (!isPaper(px(img, x, y)) && !drawn.some((r) => inside(r, x, y, 1))) stray++;
      expect(stray).toBe(0);
    });
  }

  it('leaves the panel cells exactly the run arrays beside the text', async () => {
    const path = join(dir, 'cells.png');
    const res = await renderPrint(indexedSpec, runs(), { png: path });
    const img = await decodeRgb(path);
    const p = res.layout.panels[0];
    const o = pile();
    const [H, W] = o.shape;
    const table = colourTable(paletteById('tidewater'), 'heights', computeStats(planeOf(o)), 'neutral');
    for (let y = 0; y < H * 3; y++)
      for (let x = 0; x < W * 3; x++) {
        const h = o.heights[Math.floor(y / 3) * W + Math.floor(x / 3)];
        const got = px(img, p.image.x + x, p.image.y + y);
        if (got.join() !== table[1 + h].slice(0, 3).join()) throw new Error(`pixel ${x},${y} of panel 1: ${got}, height ${h}`);
      }
  });

  it('sets each line like the PDF: same words at the same place and width (PDF.js)', async () => {
    const png = join(dir, 'same.png');
    const pdf = join(dir, 'same.pdf');
    const res = await renderPrint(indexedSpec, runs(), { png, pdf });
    const img = await decodeRgb(png);
    const pdfjs = await import('pdfjs-dist/legacy/build/pdf.mjs');
    const doc = await pdfjs.getDocument({ data: new Uint8Array(await readFile(pdf)), disableFontFace: true, verbosity: 0 }).promise;
    const page = await doc.getPage(1);
    const items = (await page.getTextContent()).items.flatMap((i) => ('str' in i && i.str.trim().length > 0 ? [i] : []));
    const s = res.layout.dpi / POINTS_PER_INCH; // page pixels per point
    const heightPt = page.view[3];
    expect(items.length).toBeGreaterThan(8);
    for (const item of items) {
      // transform: [size, 0, 0, size, x, baseline] in PDF user space (y up, ISO 32000-1 §9.4.2)
      const [size, , , , ex, ey] = item.transform as number[];
      const x0 = ex * s;
      const x1 = (ex + item.width) * s;
      const base = (heightPt - ey) * s;
      const em = size * s;
      // the ink of the line between cap height and descender, in the PNG
      let left = Infinity;
      let right = -Infinity;
      for (let y = Math.round(base - 0.72 * em); y <= Math.round(base + 0.22 * em); y++)
        for (let x = Math.floor(x0 - 0.2 * em); x <= Math.ceil(x1 + 0.2 * em); x++) {
          if (isInk(px(img, x, y))) {
            left = Math.min(left, x);
            right = Math.max(right, x);
          }
        }
      // the ink starts and ends within a side bearing of the PDF's advance box (Work Sans bearings < 0.15 em)
      expect(Math.abs(left - x0), `left edge of "${item.str}"`).toBeLessThan(0.15 * em + 1);
      expect(Math.abs(right + 1 - x1), `right edge of "${item.str}"`).toBeLessThan(0.15 * em + 1);
    }
    const all = items.map((i) => i.str).join(' ');
    expect(all).toContain('(a)');
    expect(all).toContain('toppled');
    expect(all).toContain('10 lattice units');
  });

  it('fills the legend band to its last line: swatch rows carry their labels under the swatches', async () => {
    for (const spec of [indexedSpec, rgbSpec]) {
      const path = join(dir, 'legend-band.png');
      const { layout: l } = await renderPrint(spec, runs(), { png: path });
      const img = await decodeRgb(path);
      const band = l.legend!;
      const line = Math.ceil(((l.textPt * 1.25) / POINTS_PER_INCH) * l.dpi);
      // the band's last line (labels of the last row) has ink: no empty reserved line before the caption
      expect(countInk(img, { x: band.x, y: band.y + band.height - line, width: band.width, height: line })).toBeGreaterThan(100);
      // and nothing is drawn between the band and the caption, nor between the last scale bar and the band
      const lastBar = Math.max(...l.panels.map((p) => p.scaleBar!.textAt.y)) + line;
      expect(countInk(img, { x: 0, y: lastBar, width: img.width, height: band.y - lastBar })).toBe(0);
      expect(countInk(img, { x: 0, y: band.y + band.height, width: img.width, height: l.caption!.y - band.y - band.height })).toBe(0);
    }
  });

  it('wraps a caption into lines that fit, in order, and marks a cut with an ellipsis', () => {
    const text = `${caption}\nSecond paragraph: Work Sans, ${'unbreakable'.repeat(12)} and the end.`;
    const width = 200;
    const lines = wrapText(text, 'regular', 9, width);
    expect(lines.length).toBeGreaterThan(4);
    for (const line of lines) expect(textWidthPt('regular', 9, line)).toBeLessThanOrEqual(width);
    // the words come back in order, the long word cut between characters
    expect(lines.join(' ').replace(/\s+/g, '')).toBe(text.replace(/\s+/g, ''));
    expect(lines[0].startsWith('Final configuration')).toBe(true);
    const cut = wrapText(text, 'regular', 9, width, 2);
    expect(cut).toHaveLength(2);
    expect(cut[0]).toBe(lines[0]);
    expect(cut[1].endsWith('…')).toBe(true);
    expect(textWidthPt('regular', 9, cut[1])).toBeLessThanOrEqual(width);
  });
});
