import { describe, expect, it } from 'vitest';
import { computeStats, indexHistogram, layerIndices, layerScale, planeOf, type RenderInput } from '../../renderer/src/render/index.js';
import { differenceIndex, odometerIndex } from '../../shared/palettes.js';
import { inputFromRows } from './helpers.js';

// Hand-made 3×4 plane: heights, odometer (0 = never toppled).
const rows = [
  [0, 1, 2, 3],
  [3, 2, 1, 0],
  [1, 1, 3, 3],
];
const odo = [
  [0, 1, 10, 100],
  [0, 0, 5, 1000],
  [2, 0, 0, 7],
];

describe('layer indices', () => {
  const input = inputFromRows(rows, odo);
  const plane = planeOf(input);
  const stats = computeStats(plane);

  it('stats: height range and counts, toppled count, odometer maximum', () => {
    expect(stats).toMatchObject({ cells: 12, minHeight: 0, maxHeight: 3, heightCounts: [2, 4, 2, 4], toppledCells: 7, maxOdometer: 1000 });
    expect(stats.minDifference).toBeUndefined();
  });

  it('heights: index 1 + h for every cell of a window', () => {
    const idx = layerIndices(plane, layerScale('heights', stats), { x: 1, y: 1, width: 3, height: 2 });
    expect([...idx]).toEqual([3, 2, 1, 2, 4, 4]);
  });

  it('toppled: heights where the site toppled, 0 elsewhere', () => {
    const idx = layerIndices(plane, layerScale('toppled', stats), { x: 0, y: 0, width: 4, height: 3 });
    expect([...idx]).toEqual([0, 2, 3, 4, 0, 0, 2, 1, 2, 0, 0, 4]);
  });

  it('odometer: the log ramp of shared/palettes.ts, cell by cell', () => {
    const idx = layerIndices(plane, layerScale('odometer', stats), { x: 0, y: 0, width: 4, height: 3 });
    expect([...idx]).toEqual(odo.flat().map((u) => odometerIndex(u, 1000)));
    // log(1+u)/log(1001) · 254, rounded: u = 1000 → 255, u = 0 → 0 (arithmetic)
    expect(idx[7]).toBe(255);
    expect(idx[0]).toBe(0);
  });

  it('difference: heights minus background, from an array or from a window function alike', () => {
    const bgRows = [
      [2, 2, 2, 2],
      [0, 0, 0, 0],
      [3, 3, 3, 3],
    ];
    const bg = Int32Array.from(bgRows.flat());
    const pa = planeOf(input, { background: bg });
    const pf = planeOf(input, {
      background: (w, out) => {
        for (let r = 0; r < w.height; r++) for (let c = 0; c < w.width; c++) out[r * w.width + c] = bgRows[w.y + r][w.x + c];
      },
    });
    const sa = computeStats(pa);
    expect([sa.minDifference, sa.maxDifference]).toEqual([-2, 3]);
    expect(computeStats(pf)).toEqual(sa);
    const scale = layerScale('difference', sa);
    const win = { x: 1, y: 0, width: 3, height: 3 };
    const a = layerIndices(pa, scale, win);
    expect([...layerIndices(pf, scale, win)]).toEqual([...a]);
    const expected = [-1, 0, 1, 2, 1, 0, -2, 0, 0].map((d) => differenceIndex(d, 3, 7));
    expect([...a]).toEqual(expected);
    expect(() => layerScale('difference', stats)).toThrow(/needs the background/);
  });

  it('histogram counts every cell once', () => {
    const h = indexHistogram(plane, layerScale('heights', stats));
    expect([h[1], h[2], h[3], h[4]]).toEqual([2, 4, 2, 4]);
  });

  it('a 3-D run is cut at the source depth; a 1-D run is a band of one row of cells (tests/render/line-band.test.ts)', () => {
    const d3: RenderInput = {
      shape: [3, 2, 2],
      origin: [1, 1, 1],
      heights: Int32Array.from([0, 0, 0, 0, 5, 4, 3, 2, 1, 1, 1, 1]),
      odometer: new Float64Array(12),
      toppled: new Uint8Array(12),
    };
    const p3 = planeOf(d3);
    expect([p3.width, p3.height, p3.offset]).toEqual([2, 2, 4]);
    expect(computeStats(p3).heightCounts).toEqual([0, 0, 1, 1, 1, 1]);
    const d1: RenderInput = { shape: [5], origin: [2], heights: Int32Array.from([1, 1, 1, 1, 1]), odometer: new Float64Array(5), toppled: new Uint8Array(5) };
    expect([planeOf(d1).width, planeOf(d1).height, planeOf(d1).cellRows]).toEqual([5, 1, 1]);
  });

  it('bad input gets a clear error', () => {
    expect(() => planeOf({ ...input, odometer: new Float64Array(3) })).toThrow(/odometer has 3 entries but shape \[3, 4\] has 12 cells/);
    expect(() => layerIndices(plane, layerScale('heights', stats), { x: 2, y: 0, width: 3, height: 1 })).toThrow(/outside the 4×3 plane/);
    expect(() => computeStats(planeOf(inputFromRows([[0, -1]])))).toThrow(/non-negative/);
    expect(() => computeStats(planeOf(inputFromRows([[0, 300]])))).toThrow(/above 254/);
  });
});
