import { describe, expect, test } from 'vitest';
import { cellAt, fromLatticeView, pixelOfLattice, pixelsPerCell, planeSize, toLatticeView, type RunGeometry } from './cells.js';

// A 2-D run 7 cells wide, 5 high, origin at array index (row 2, column 3), n = 100 grains, drawn 4 px per cell.
const g: RunGeometry = { shape: [5, 7], origin: [2, 3], grains: 100 };
const k = pixelsPerCell(28, g);

describe('image pixels and lattice cells', () => {
  test('k·W is the image width', () => expect(k).toBe(4));

  test('the origin cell covers pixels 12..15 × 8..11 and is index row·W + column of the C-order array', () => {
    for (const [px, py] of [[12, 8], [15.9, 11.9]]) {
      const c = cellAt(px!, py!, k, g)!;
      expect(c.lattice).toEqual([0, 0]);
      expect(c.index).toBe(2 * 7 + 3);
    }
  });

  test('lattice coordinates are relative to the origin and rescaled by √n', () => {
    const c = cellAt(0, 0, k, g)!;
    expect(c.lattice).toEqual([-3, -2]);
    expect(c.rescaled).toEqual([-0.3, -0.2]);
  });

  test('the line is rescaled by n and the cubic lattice by ∛n, each pile by its own length n^(1/d)', () => {
    const line: RunGeometry = { shape: [9], origin: [4], grains: 8 };
    expect(cellAt(0, 0, 1, line)!.rescaled).toEqual([-0.5]);
    const cube: RunGeometry = { shape: [5, 5, 5], origin: [2, 2, 2], grains: 8 };
    expect(cellAt(0, 4, 1, cube)!.rescaled).toEqual([-1, 1, 0]);
    expect(toLatticeView({ x: 0.5, y: 4.5 }, 4, 1, cube, true)).toEqual({ cx: -1, cy: 1, across: 2 });
  });

  test('a line is drawn as a band: every row of a column is the same cell at y = 0, one column per cell', () => {
    // 9 cells: a band of ceil(9/8) = 2 rows (shared/drawn-plane.ts)
    const line: RunGeometry = { shape: [9], origin: [4], grains: 8 };
    expect(planeSize(line)).toEqual({ width: 9, height: 2 });
    for (const py of [0, 0.5, 1.5]) expect(cellAt(6.5, py, 1, line)).toMatchObject({ column: 6, index: 6, lattice: [2] });
    expect(cellAt(6.5, 2.5, 1, line)).toBeNull();
    // the origin of the line sits in the middle of its band, and a view there comes back to it
    expect(pixelOfLattice(0, 0, 4, line)).toEqual({ px: 18, py: 4 });
    const v = toLatticeView({ x: 18, y: 4 }, 36, 4, line, false);
    expect(v).toEqual({ cx: 0, cy: 0, across: 9 });
    expect(fromLatticeView(v, 4, line, false).centrePx).toEqual({ x: 18, y: 4 });
  });

  test('outside the plane there is no cell', () => {
    expect(cellAt(-0.1, 3, k, g)).toBeNull();
    expect(cellAt(28, 3, k, g)).toBeNull();
  });

  test('a 3-D run is read in the slice through the origin', () => {
    const g3: RunGeometry = { shape: [3, 4, 5], origin: [1, 2, 2], grains: 1 };
    expect(cellAt(2.5, 2.5, 1, g3)!.index).toBe((1 * 4 + 2) * 5 + 2);
  });

  test('pixelOfLattice is the centre of the cell cellAt finds', () => {
    const { px, py } = pixelOfLattice(2, -1, k, g);
    expect(cellAt(px, py, k, g)!.lattice).toEqual([2, -1]);
  });

  test('a view carried to a run twice as dense (and 4× the grains, rescaled) lands on the same x/√n', () => {
    const big: RunGeometry = { shape: [9, 13], origin: [4, 6], grains: 400 };
    const v = toLatticeView({ x: 20, y: 10 }, 16, k, g, true);
    const t = fromLatticeView(v, 2, big, true);
    const back = toLatticeView(t.centrePx, t.imageWidthVisible, 2, big, true);
    expect(back.cx).toBeCloseTo(v.cx, 12);
    expect(back.cy).toBeCloseTo(v.cy, 12);
    expect(back.across).toBeCloseTo(v.across, 12);
  });
});
