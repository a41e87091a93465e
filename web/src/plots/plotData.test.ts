import { describe, expect, test } from 'vitest';
import { decadeTicks, heightBars, logLogSlope, radialPoints, sqrtFit } from './plotData.js';

describe('series plot', () => {
  test('points on r = c·√n give back c and a log-log slope of exactly 1/2', () => {
    const pts = [1e3, 1e4, 1e5, 1e6].map((n) => ({ n, radius: 0.38 * Math.sqrt(n) }));
    expect(sqrtFit(pts)).toBeCloseTo(0.38, 12);
    expect(logLogSlope(pts)).toBeCloseTo(0.5, 12);
  });

  test('radii between the published bounds for Z² stay between their constants (arXiv:0704.0688: √(n/3π) ≤ r ≤ √(n/2π) asymptotically)', () => {
    // the two bounds as r(n); a fit through points on the bounds lands on the bound constants
    const lower = Math.sqrt(1 / (3 * Math.PI));
    const upper = Math.sqrt(1 / (2 * Math.PI));
    const pts = [1e4, 1e5].map((n, i) => ({ n, radius: (i ? upper : lower) * Math.sqrt(n) }));
    const c = sqrtFit(pts)!;
    expect(c).toBeGreaterThan(lower);
    expect(c).toBeLessThan(upper);
    expect(c).toBeCloseTo(Math.sqrt(lower * upper), 12);
  });

  test('no points, no line', () => {
    expect(sqrtFit([])).toBeNull();
    expect(logLogSlope([{ n: 10, radius: 1 }])).toBeNull();
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

  test('bars per height', () => expect(heightBars([1, 0, 5])).toEqual([{ height: '0', sites: 1 }, { height: '1', sites: 0 }, { height: '2', sites: 5 }]));
});
