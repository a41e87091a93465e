import { describe, expect, it } from 'vitest';
import { approxFileSize, fixedPageMm, printSizeRows } from './printSize.js';

describe('the composer\'s print size table', () => {
  it('compares the presets and the chosen DPI, marking those past the limit, files growing with the square of the DPI', () => {
    // A0 = 841 × 1189 mm (ISO 216); 803 DPI is the most within 10^9 px (tests/print/layout.test.ts)
    const rows = printSizeRows(841, 1189, 803);
    expect(rows.map((r) => [r.dpi, r.fits])).toEqual([[150, true], [300, true], [600, true], [803, true], [1200, false]]);
    expect(rows.at(-1)).toMatchObject({ widthPx: 39732, heightPx: 56173 });
    const at = (dpi: number) => rows.find((r) => r.dpi === dpi)!.bytes.tiff;
    expect(at(600) / at(300)).toBeCloseTo(4, 2);
    // a chosen preset is not listed twice
    expect(printSizeRows(210, 297, 300).map((r) => r.dpi)).toEqual([150, 300, 600, 1200]);
  });

  it('reads the page size from the size fields alone, none for a column whose height follows the panels', () => {
    expect(fixedPageMm({ kind: 'paper', paper: 'A3', orientation: 'landscape' })).toEqual({ width: 420, height: 297 });
    expect(fixedPageMm({ kind: 'column', column: 'single' })).toBeNull();
    expect(fixedPageMm({ kind: 'custom', width: -1, height: 3 })).toBeNull();
  });

  it('rounds estimates to two figures in MB or GB', () => {
    expect(approxFileSize(400_000)).toBe('under 1 MB');
    expect(approxFileSize(23_456_789)).toBe('about 23 MB');
    expect(approxFileSize(1_496_000_000)).toBe('about 1.5 GB');
  });
});
