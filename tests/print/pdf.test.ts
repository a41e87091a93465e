import { readFile, rm } from 'node:fs/promises';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { renderPrint } from '../../renderer/src/print/index.js';
import { figureSpecSchema } from '../../shared/print-spec.js';
import { layoutFigure } from '../../shared/print-layout.js';
import { squarePile, tempDir } from './helpers.js';

let dir: string;
beforeAll(async () => {
  dir = await tempDir('pdf');
});
afterAll(async () => {
  await rm(dir, { recursive: true, force: true });
});

/** Mozilla's PDF.js, a general-purpose PDF reader, parses the file back. */
async function readPdf(path: string) {
  const pdfjs = await import('pdfjs-dist/legacy/build/pdf.mjs');
  const doc = await pdfjs.getDocument({ data: new Uint8Array(await readFile(path)), disableFontFace: true, verbosity: 0 }).promise;
  const page = await doc.getPage(1);
  const text = (await page.getTextContent()).items.map((i) => ('str' in i ? i.str : '')).join(' ');
  const ops = await page.getOperatorList();
  const images = ops.fnArray.flatMap((f, i) => (f === pdfjs.OPS.paintImageXObject ? [ops.argsArray[i] as [string, number, number]] : []));
  return { pages: doc.numPages, view: page.view, text, images };
}

const MM_PER_PT = 25.4 / 72; // ISO 32000-1 §8.3.2.3: the default user space unit is 1/72 inch

const pile = () => squarePile(1000);

describe('figure PDF', () => {
  for (const [name, size, mm] of [
    // ISO 216 A4 = 210 × 297 mm; A3 landscape = 420 × 297 mm
    ['A4', { kind: 'paper', paper: 'A4' }, [210, 297]],
    ['A3 landscape', { kind: 'paper', paper: 'A3', orientation: 'landscape' }, [420, 297]],
    // US Letter 8.5 × 11 in = 215.9 × 279.4 mm
    ['Letter', { kind: 'paper', paper: 'letter' }, [215.9, 279.4]],
    // single journal column, 90 mm (common practice), with a chosen height
    ['single column', { kind: 'column', column: 'single', heightMm: 70 }, [90, 70]],
    ['custom', { kind: 'custom', width: 123.4, height: 56.7, unit: 'mm' }, [123.4, 56.7]],
  ] as const) {
    it(`has a MediaBox of the ordered size within 0.1 mm (${name})`, async () => {
      const path = join(dir, `${name}.pdf`);
      await renderPrint({ size, dpi: 300, panels: [{ runId: 'p' }], legend: false }, [{ runId: 'p', input: pile(), chips: 1000 }], { pdf: path });
      const { pages, view } = await readPdf(path);
      expect(pages).toBe(1);
      const [x0, y0, x1, y1] = view;
      expect([x0, y0]).toEqual([0, 0]);
      expect(Math.abs(x1 * MM_PER_PT - mm[0])).toBeLessThan(0.1);
      expect(Math.abs(y1 * MM_PER_PT - mm[1])).toBeLessThan(0.1);
    });
  }

  it('carries caption, labels, scale bars and legend as extractable text in embedded Work Sans', async () => {
    const spec = {
      size: { kind: 'paper', paper: 'A5', orientation: 'landscape' },
      dpi: 300,
      grid: { rows: 1, cols: 2, sharedScale: 'lattice' },
      panels: [{ runId: 'p' }, { runId: 'p', layer: 'odometer', palette: 'newsprint', label: 'odometer' }],
      scaleBar: { unit: 'lattice', length: 10 },
      caption: { text: 'Final configuration of 1,000 grains at the origin of the square lattice; right: topplings per site.' },
    } as const;
    const path = join(dir, 'text.pdf');
    const res = await renderPrint(spec, [{ runId: 'p', input: pile(), chips: 1000 }], { pdf: path });
    const { text, images } = await readPdf(path);
    expect(text).toContain('(a)');
    expect(text).toContain('odometer');
    expect(text).toContain('10 lattice units');
    expect(text).toContain('final height');
    expect(text).toContain('topplings (log scale)');
    expect(text.replace(/\s+/g, ' ')).toContain('Final configuration of 1,000 grains at the origin of the square lattice; right: topplings per site.');
    // the rasters are images, one per panel, at exactly their pixel size (25 × 25 cells × k px)
    const layout = layoutFigure(figureSpecSchema.parse(spec), [{ runId: 'p', shape: pile().shape, origin: pile().origin, chips: 1000 }]);
    expect(images.map(([, w, h]) => [w, h])).toEqual(layout.panels.map((p) => [p.image.width, p.image.height]));
    expect(res.layout.panels[0].cellPx).toBe(res.layout.panels[1].cellPx);
    // fonts are embedded TrueType subsets of Work Sans (font dictionaries are not compressed)
    const raw = (await readFile(path)).toString('latin1');
    expect(raw).toMatch(/\/BaseFont \/[A-Z]{6}\+WorkSans-Regular/);
    expect(raw).toMatch(/\/BaseFont \/[A-Z]{6}\+WorkSans-Bold/);
    expect(raw).toContain('/FontFile2');
    expect(raw).toContain('/ToUnicode');
  });
});
