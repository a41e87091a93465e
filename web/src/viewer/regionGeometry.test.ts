import { describe, expect, test } from 'vitest';
import { cellAt, pixelsPerCell, type RunGeometry } from './cells.js';
import { regionText } from '../../../shared/print-words.js';
import { imageRectOfRegion, regionOfImagePoints, regionSizeText, wholeRegionOf } from './regionGeometry.js';

// The worked example of cells.test.ts: 7 × 5 cells, origin at (row 2, column 3), drawn 4 px per cell.
const g: RunGeometry = { shape: [5, 7], origin: [2, 3], grains: 100 };
const k = pixelsPerCell(28, g);

describe('a drawn rectangle and a region of cells', () => {
  test('the whole plane is x −3..3, y −2..2', () => expect(wholeRegionOf(g)).toEqual({ xMin: -3, xMax: 3, yMin: -2, yMax: 2 }));

  test('takes every cell the rectangle touches, from either corner', () => {
    // pixel (5, 9) lies in column 1, row 2; pixel (17.5, 12.2) in column 4, row 3
    const r = { xMin: 1 - 3, xMax: 4 - 3, yMin: 2 - 2, yMax: 3 - 2 };
    expect(regionOfImagePoints({ x: 5, y: 9 }, { x: 17.5, y: 12.2 }, k, g)).toEqual(r);
    expect(regionOfImagePoints({ x: 17.5, y: 9 }, { x: 5, y: 12.2 }, k, g)).toEqual(r);
    // each corner agrees with the readout's cellAt
    expect(cellAt(5, 9, k, g)!.lattice).toEqual([r.xMin, r.yMin]);
    expect(cellAt(17.5, 12.2, k, g)!.lattice).toEqual([r.xMax, r.yMax]);
  });

  test('reads a region as the drawer shows it: the minus sign, a line by its x range and length alone', () => {
    const r = wholeRegionOf(g);
    expect(`${regionText(r, 2)} · ${regionSizeText(r, 2)}`).toBe('x −3..3, y −2..2 · 7 × 5 cells');
    const l = wholeRegionOf({ shape: [5001], origin: [2500], grains: 5001 });
    expect(`${regionText(l, 1)} · ${regionSizeText(l, 1)}`).toBe('x −2500..2500 · 5,001 cells');
  });

  test('is clipped to the plane, and nothing when wholly outside it', () => {
    expect(regionOfImagePoints({ x: -40, y: -3 }, { x: 6, y: 100 }, k, g)).toEqual({ xMin: -3, xMax: -2, yMin: -2, yMax: 2 });
    expect(regionOfImagePoints({ x: 30, y: 1 }, { x: 50, y: 9 }, k, g)).toBeNull();
  });

  test('draws a region over the outer edges of its cells, and back', () => {
    const r = { xMin: -2, xMax: 1, yMin: 0, yMax: 1 };
    const rect = imageRectOfRegion(r, k, g);
    expect(rect).toEqual({ x: 4, y: 8, width: 16, height: 8 });
    // the rectangle's own corners (just inside) give the region again
    expect(regionOfImagePoints({ x: rect.x, y: rect.y }, { x: rect.x + rect.width - 0.01, y: rect.y + rect.height - 0.01 }, k, g)).toEqual(r);
  });

  test('a line (1-D run) is one row at y = 0, drawn as a band of rows', () => {
    const line: RunGeometry = { shape: [20], origin: [10], grains: 20 };
    // anywhere in the band (ceil(20/8) = 3 rows) is the line
    expect(regionOfImagePoints({ x: 0, y: 0 }, { x: 8.5, y: 2.5 }, 1, line)).toEqual({ xMin: -10, xMax: -2, yMin: 0, yMax: 0 });
    expect(wholeRegionOf(line)).toEqual({ xMin: -10, xMax: 9, yMin: 0, yMax: 0 });
    expect(imageRectOfRegion({ xMin: -2, xMax: 1, yMin: 0, yMax: 0 }, 2, line)).toEqual({ x: 16, y: 0, width: 8, height: 6 });
  });
});
