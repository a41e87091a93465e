import { describe, expect, test } from 'vitest';
import { decadeTicks, heightBars, logLogSlope, meanHeightTicks, naturalFit, niceTicks, radialPoints, seriesDimension, siteCountTicks } from './plotData.js';

describe('series plot', () => {
  test('points on r = c·√n give back c and a log-log slope of exactly 1/2', () => {
    const pts = [1e3, 1e4, 1e5, 1e6].map((n) => ({ n, radius: 0.38 * Math.sqrt(n) }));
    expect(naturalFit(pts, 2)).toBeCloseTo(0.38, 12);
    expect(logLogSlope(pts)).toBeCloseTo(0.5, 12);
  });

  test('radii between the published bounds for Z² stay between their constants (arXiv:0704.0688: √(n/3π) ≤ r ≤ √(n/2π) asymptotically)', () => {
    // the two bounds as r(n); a fit through points on the bounds lands on the bound constants
    const lower = Math.sqrt(1 / (3 * Math.PI));
    const upper = Math.sqrt(1 / (2 * Math.PI));
    const pts = [1e4, 1e5].map((n, i) => ({ n, radius: (i ? upper : lower) * Math.sqrt(n) }));
    const c = naturalFit(pts, 2)!;
    expect(c).toBeGreaterThan(lower);
    expect(c).toBeLessThan(upper);
    expect(c).toBeCloseTo(Math.sqrt(lower * upper), 12);
  });

  test('no points, no line', () => {
    expect(naturalFit([], 2)).toBeNull();
    expect(logLogSlope([{ n: 10, radius: 1 }])).toBeNull();
  });

  test('the fitted law follows the dimension: r = c·n on the line, c·∛n on the cubic lattice', () => {
    // the radius grows like n^(1/d): n grains fill about n sites at a bounded mean height (mass conservation, common practice)
    const cube = [1e3, 1e4, 1e5, 1e6].map((n) => ({ n, radius: 0.62 * Math.cbrt(n) }));
    expect(naturalFit(cube, 3)).toBeCloseTo(0.62, 12);
    expect(logLogSlope(cube)).toBeCloseTo(1 / 3, 12);
    // on the line 2m + 1 grains cover exactly −m..m (Anderson et al., Amer. Math. Monthly 96 (1989)): r = (n − 1)/2, c → ½
    const line = [1001, 10001, 100001].map((n) => ({ n, radius: (n - 1) / 2 }));
    expect(naturalFit(line, 1)).toBeCloseTo(0.5, 3);
    // a √n law through the same points misses the largest pile by more than a factor 3
    expect(50000 / (naturalFit(line, 2)! * Math.sqrt(100001))).toBeGreaterThan(3);
  });

  test('runs of mixed dimensions are named, not fitted together', () => {
    expect(seriesDimension([2, 2, 2])).toEqual({ kind: 'one', dimension: 2 });
    expect(seriesDimension([3, 2, 3])).toEqual({ kind: 'mixed', dimensions: [2, 3] });
    expect(seriesDimension([])).toBeNull();
  });

  test('decade ticks span the range', () => expect(decadeTicks(500, 2e5)).toEqual([100, 1000, 1e4, 1e5, 1e6]));
});

describe('run plots', () => {
  test('radial points sit at bin centres and skip empty bins', () => {
    expect(radialPoints({ binWidth: 0.1, meanHeight: [2, null, 3], sites: [4, 0, 1] })).toEqual([
      { r: 0.05, meanHeight: 2, sites: 4 },
      { r: 0.25, meanHeight: 3, sites: 1 },
    ]);
  });

  test('on the line and the cubic lattice the distance is rescaled by n and ∛n, not √n', () => {
    // the worker bins by |x|/√n: bin 2 of width 0.1 holds |x| ≈ 0.25·√n
    const p = { binWidth: 0.1, meanHeight: [null, null, 1], sites: [0, 0, 4] };
    const n = 1_000_000;
    expect(radialPoints(p, n, 2)[0]!.r).toBeCloseTo(0.25, 12);
    expect(radialPoints(p, n, 1)[0]!.r).toBeCloseTo((0.25 * 1000) / n, 12);
    expect(radialPoints(p, n, 3)[0]!.r).toBeCloseTo((0.25 * 1000) / 100, 12);
  });

  test('axis ticks are evenly spaced round numbers written with one number of decimals', () => {
    // the line run's axis (|x|/√n up to about 15.8) read 8.20, 9.10, 10.20, 11.30 with steps of 0.1 thinned by the chart
    for (const end of [0.063, 0.52, 0.75, 1.3, 15.8, 430]) {
      const { ticks, decimals } = niceTicks(end);
      const step = ticks[1]! - ticks[0]!;
      expect(ticks[0]).toBe(0);
      expect(ticks.at(-1)!).toBeGreaterThanOrEqual(end - 1e-12);
      expect(ticks.length).toBeGreaterThanOrEqual(4);
      expect(ticks.length).toBeLessThanOrEqual(12);
      ticks.forEach((t, i) => expect(t).toBeCloseTo(i * step, 9));
      // the step's leading digit is 1, 2, 2.5 or 5
      expect([1, 2, 2.5, 5]).toContain(Number((step / 10 ** Math.floor(Math.log10(step))).toFixed(6)));
      // every label is distinct and exact at its decimals
      const labels = ticks.map((t) => t.toFixed(decimals));
      expect(new Set(labels).size).toBe(labels.length);
      labels.forEach((l, i) => expect(Number(l)).toBeCloseTo(ticks[i]!, 12));
    }
  });

  test('bars per height', () => expect(heightBars([1, 0, 5])).toEqual([{ height: '0', sites: 1 }, { height: '1', sites: 0 }, { height: '2', sites: 5 }]));
});

describe('the mean-height axis of a radial profile', () => {
  test('round ticks from 0 past the highest point, never fractions of the top like 0.95, 1.9, 2.85', () => {
    const at = (...hs: number[]) => meanHeightTicks(hs.map((meanHeight) => ({ meanHeight })));
    expect(at(1.9, 3.7, 3.1).ticks).toEqual([0, 1, 2, 3, 4]);
    expect(at(2.1, 2.4).ticks).toEqual([0, 1, 2, 3]);
    expect(at(1, 0.98)).toEqual({ ticks: [0, 0.25, 0.5, 0.75, 1], decimals: 2 });
    expect(at().ticks).toEqual([0, 1]);
  });
});

describe('the sites axis of the height bars', () => {
  test('round steps up to the tallest bar, not quarters of it', () => {
    // the demo's triangular run of 5·10^4 grains on a constant 2 (our own computation): tallest bar 13,711
    expect(siteCountTicks([4170, 474, 5844, 3726, 13711, 8772])).toEqual([0, 5000, 10000, 15000]);
    expect(siteCountTicks([3, 1, 2])).toEqual([0, 1, 2, 3]);
    expect(siteCountTicks([])).toEqual([0, 1]);
  });
});
