import { describe, expect, it } from 'vitest';
import { pixelCountText } from '../../../../shared/print-size.js';
import { approxFileSize, fileSizesText, fixedPageMm, printSizeRows } from './printSize.js';

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

  it('says the largest files in one phrase, without "up to under 1 MB"', () => {
    expect(fileSizesText({ tiff: 147_000, png: 45_800, pdf: 36_100 })).toBe('under 1 MB each');
    expect(fileSizesText({ tiff: 3_800_000, png: 1_200_000, pdf: 400_000 })).toBe('TIFF up to about 3.8 MB, PNG up to about 1.2 MB and PDF under 1 MB');
  });

  it('counts pixels to three figures, in the singular for exactly one unit', () => {
    // a single journal column (90 mm) at 300 DPI: 1,063 × 1,335 px once read "1 megapixels"
    expect(pixelCountText(1063 * 1335)).toBe('1.42 megapixels');
    expect(pixelCountText(1_000_000)).toBe('1 megapixel');
    expect(pixelCountText(139_200_000)).toBe('139 megapixels');
    expect(pixelCountText(999_999_999)).toBe('1 gigapixel');
    expect(pixelCountText(39_732 * 56_173)).toBe('2.23 gigapixels');
    expect(pixelCountText(531 * 668)).toBe('354,708 pixels');
  });
});
