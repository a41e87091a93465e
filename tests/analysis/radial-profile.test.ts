import { describe, expect, it } from 'vitest';
import { resolveProblem, stabilizeReference } from '../../renderer/src/engine/index.js';
import { binCells, DEFAULT_BIN_WIDTH, radialProfile } from '../../renderer/src/analysis/radial-profile.js';
import { radialProfileSchema } from '../../shared/radial-profile.js';
import { radialBinWidth, radialPoints } from '../../web/src/plots/plotData.js';

const pile = (preset: string, chips: number) =>
  stabilizeReference(resolveProblem({ lattice: { preset }, chips, sources: [], background: { kind: 'constant', height: 0 } } as Parameters<typeof resolveProblem>[0]));

/**
 * The worker's radial profile bins the distance by the pile's own length n^(1/d) (its radius grows
 * like n^(1/d): mass conservation with a bounded mean height, common practice), in bins of 1% of it
 * but never narrower than one cell.
 */
describe('radial profile', () => {
  it('a line pile gets one bin per cell, with the known final configuration in it', () => {
    // 2m grains at one site of Z^1 (threshold 2) end as one grain on each of −m..m except a hole at
    // the origin (common practice, from memory; it is the even case of the 2m + 1 → all ones rule of
    // Anderson, Lovász, Shor, Spencer, Tardos, Winograd, "Disks, balls, and walls", Amer. Math. Monthly 96 (1989))
    const n = 20;
    const run = pile('line', n);
    expect(Array.from(run.heights)).toEqual(Array.from({ length: 21 }, (_, i) => (i === 10 ? 0 : 1)));
    const p = radialProfile(run, n);
    expect(p.unit).toBe('natural');
    // 1% of n = 20 cells is 0.2 cells: widened to one cell, 1/n in units of n
    expect(p.binWidth).toBeCloseTo(1 / n, 15);
    // toppled sites are −9..9: the origin alone at distance 0 with its hole, then two sites holding 1 at each distance 1..9
    expect(p.sites).toEqual([1, ...Array<number>(9).fill(2)]);
    expect(p.meanHeight).toEqual([0, ...Array<number>(9).fill(1)]);
    // plotted at the cell centres, |x|/n = (i + ½)/n
    radialPoints(p, n, 1).forEach((q, i) => expect(q.r).toBeCloseTo((i + 0.5) / n, 12));
  });

  it('bins are 1% of n^(1/d), never below one cell, in every dimension', () => {
    // the old rule 0.01·√n: 0.3 cells on a line of 1001 grains, 10 cells across a cube of radius about 60
    expect(binCells(1001, 1)).toBeCloseTo(10.01, 12);
    expect(binCells(1_000_000, 2)).toBe(10);
    expect(binCells(1_000_000, 3)).toBe(1);
    expect(binCells(1000, 3)).toBe(1);
    expect(binCells(0, 2)).toBe(1);
    expect(DEFAULT_BIN_WIDTH).toBe(0.01);
  });

  it('a cubic pile is binned by ∛n and counts every toppled site once', () => {
    const n = 500;
    const run = pile('cubic', n);
    const p = radialProfile(run, n);
    // ∛500 ≈ 7.9: 1% of it is under a cell, so bins are one cell wide, 1/∛n in rescaled units
    expect(p.binWidth).toBeCloseTo(1 / Math.cbrt(n), 12);
    expect(p.sites.reduce((a, b) => a + b, 0)).toBe(Array.from(run.toppled).filter((t) => t !== 0).length);
    // no toppled site of a pile of radius about 2.4 lies beyond distance 3 (bins of one cell: at most 4 bins)
    expect(p.sites.length).toBeLessThanOrEqual(4);
  });

  it('profiles stored before the unit existed were binned by √n and are carried over to n^(1/d)', () => {
    const old = radialProfileSchema.parse({ binWidth: 0.1, meanHeight: [null, null, 1], sites: [0, 0, 4] });
    expect(old.unit).toBe('sqrt-n');
    const n = 1_000_000;
    // bin 2 of width 0.1·√n holds |x| ≈ 250 cells: 250/∛n = 2.5 on the cubic lattice
    expect(radialPoints(old, n, 3)[0]!.r).toBeCloseTo(2.5, 12);
    expect(radialBinWidth(old, n, 3)).toBeCloseTo(1, 12);
    const fresh = radialProfileSchema.parse({ unit: 'natural', binWidth: 0.1, meanHeight: [null, null, 1], sites: [0, 0, 4] });
    expect(radialPoints(fresh, n, 3)[0]!.r).toBeCloseTo(0.25, 12);
  });
});
