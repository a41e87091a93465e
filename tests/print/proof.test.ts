import { readFile, rm } from 'node:fs/promises';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { figureMarks, prepareFigure, type PrintRun } from '../../renderer/src/print/index.js';
import { textWidthPt, workSansFaces } from '../../renderer/src/print/fonts.js';
import { createFolderSink, legendKeyOf, renderPyramid, viewPrefix } from '../../renderer/src/render/index.js';
import { legendResponseSchema } from '../../shared/api/artifacts.js';
import { figureTextMarks, WORK_SANS_ASCENT_EM, type Mark } from '../../shared/print-marks.js';
import { figureSpecSchema, type FigureSpecInput } from '../../shared/print-spec.js';
import { layoutFigure } from '../../shared/print-layout.js';
import { proofLegends, type ProofRun } from '../../web/src/pages/figures/proofLegend.js';
import { squarePile, tempDir } from './helpers.js';

/**
 * The composer's proof draws legend, labels and caption from the run's stored view (legend.json, as
 * the render worker writes it) through the same shared marks the print draws; these checks hold the
 * two to the very same rows, colours, ticks and caption lines.
 */

let dir: string;
beforeAll(async () => {
  dir = await tempDir('proof');
});
afterAll(async () => {
  await rm(dir, { recursive: true, force: true });
});

const N = 1000;
const runs = (): PrintRun[] => [{ runId: 'p', input: squarePile(N), chips: N }];
const caption = 'Final configuration of 1,000 grains at the origin of the square lattice; beside it the sites that toppled, and the topplings on a log scale.';

/** The legend.json of the run's default view (heights in tidewater), drawn as the render worker draws it. */
async function storedStats() {
  await renderPyramid(squarePile(N), createFolderSink(dir), { runId: 'p', style: { layer: 'heights', palette: 'tidewater' } });
  const json = JSON.parse(await readFile(join(dir, legendKeyOf(viewPrefix('p', 'heights', 'tidewater'))), 'utf8'));
  return legendResponseSchema.parse(json).stats;
}

const specs: [string, FigureSpecInput][] = [
  [
    'swatches, a shared row and a see-through layer',
    {
      size: { kind: 'paper', paper: 'A5', orientation: 'landscape' },
      grid: { rows: 1, cols: 3 },
      panels: [{ runId: 'p' }, { runId: 'p', palette: 'kiln' }, { runId: 'p', layer: 'toppled', untoppled: 'transparent' }],
      scaleBar: { unit: 'lattice' },
      caption: { text: caption },
    },
  ],
  [
    'ramps with ticks and a masked swatch',
    {
      size: { kind: 'column', column: 'full' },
      grid: { rows: 1, cols: 2 },
      panels: [{ runId: 'p', layer: 'odometer' }, { runId: 'p', layer: 'odometer', palette: 'kiln', untoppled: 'transparent' }],
      caption: { text: caption, fontPt: 11 },
    },
  ],
];

describe('the proof preview', () => {
  for (const [name, input] of specs) {
    it(`shows the print's legend and caption from the stored view (${name})`, async () => {
      const stats = await storedStats();
      const spec = figureSpecSchema.parse(input);
      const pile = squarePile(N);
      const layout = layoutFigure(spec, [{ runId: 'p', shape: pile.shape, origin: pile.origin, chips: N }]);
      const known = new Map<string, ProofRun>([['p', { title: 'a pile', stats: { shape: pile.shape, origin: pile.origin } }]]);
      const found = proofLegends(spec, layout, known, () => stats);
      if (!('legends' in found)) throw new Error(`no legend: ${found.missing}`);
      const proof = figureTextMarks(layout, found.legends, textWidthPt);
      const print = figureMarks(prepareFigure(spec, runs()));
      expect(proof).toEqual(print);
      // and there is a legend and a caption to compare, not just labels
      const words = (ms: Mark[]) => ms.flatMap((m) => (m.kind === 'text' ? [m.text] : []));
      expect(words(proof).some((w) => /topplings|final height/i.test(w))).toBe(true);
      expect(words(proof).filter((w) => caption.includes(w.replace(/…$/, ''))).length).toBeGreaterThan(1);
      expect(proof.filter((m) => m.kind === 'fill').length).toBeGreaterThan(3);
    });
  }

  it('says why when the stored view cannot give the print\'s scale, instead of drawing a wrong legend', () => {
    const pile = squarePile(N);
    const geometry = [{ runId: 'p', shape: pile.shape, origin: pile.origin, chips: N }];
    const known = new Map<string, ProofRun>([['p', { title: 'a pile', stats: { shape: pile.shape, origin: pile.origin } }]]);
    const heights = figureSpecSchema.parse({ size: { kind: 'column', column: 'single' }, panels: [{ runId: 'p' }] });
    expect(proofLegends(heights, layoutFigure(heights, geometry), known, () => undefined)).toEqual({ missing: 'reading the colour scales…' });
    expect(proofLegends(heights, layoutFigure(heights, geometry), known, () => null)).toEqual({ missing: expect.stringContaining('no stored view') });
    // legend.json of a run that drew no difference view carries no difference range
    const difference = figureSpecSchema.parse({ size: { kind: 'column', column: 'single' }, panels: [{ runId: 'p', layer: 'difference' }] });
    const noRange = { cells: 1, minHeight: 0, maxHeight: 3, heightCounts: [1], toppledCells: 0, maxOdometer: 0 };
    expect(proofLegends(difference, layoutFigure(difference, geometry), known, () => noRange)).toEqual({ missing: expect.stringContaining('no difference view') });
  });

  it('places text on the baseline the print uses: Work Sans\'s ascent', () => {
    // the proof draws SVG text at its baseline; pdfkit (and the raster pages) put it one ascent below the line top
    for (const font of Object.values(workSansFaces())) expect(font.ascent / font.unitsPerEm).toBe(WORK_SANS_ASCENT_EM);
  });
});
