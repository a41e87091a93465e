/**
 * The estimator's domain (shared/estimate.ts) against the engine's real arrays on small runs: the
 * API admits runs by the memory of that domain, so it must never be smaller than the real one, and
 * it should stay close on each axis, in the lattice's own width-to-height ratio. Its work (the
 * topplings it prices) against the engine's counts where the model is not the square lattice's fit.
 */
import { afterAll, describe, expect, it } from 'vitest';
import { resolveProblem, stabilize } from '../../renderer/src/engine/index.js';
import { shutdownWorkers } from '../../renderer/src/engine/parallel.js';
import { DOMAIN_SHAPE_FACTORS, estimateRun } from '../../shared/estimate.js';
import { runSpecSchema } from '../../shared/run-spec.js';

afterAll(() => shutdownWorkers());

/** How much larger than the real array the estimate may be on one axis (the square lattice's margin is about 10 %). */
const AT_MOST = 1.2;

const real = async (preset: string, chips: number, height: number) => {
  const spec = runSpecSchema.parse({ lattice: { preset }, chips, background: { kind: 'constant', height } });
  const out = await stabilize(resolveProblem(spec));
  return { real: out.shape as [number, number], estimate: estimateRun(spec).shape as [number, number] };
};

describe('the estimated domain follows the lattice', () => {
  // every planar preset at two sizes on background 0 (where the factors were measured), and two
  // backgrounds of height 1, where the mass model shrinks the gain but the aspect stays the lattice's
  const cases: [preset: string, n: number, height: number][] = [
    ...Object.keys(DOMAIN_SHAPE_FACTORS).flatMap((p): [string, number, number][] => [[p, 1e4, 0], [p, 1e5, 0]]),
    ['honeycomb', 1e4, 1],
    ['triangular', 3e4, 1],
  ];

  it.for(cases)('%s, n = %d, background %d: covers the real array, within a fifth on each axis', async ([preset, n, height]) => {
    const { real: [H, W], estimate: [eh, ew] } = await real(preset, n, height);
    expect(ew, 'width').toBeGreaterThanOrEqual(W);
    expect(eh, 'height').toBeGreaterThanOrEqual(H);
    expect(ew, 'width').toBeLessThanOrEqual(AT_MOST * W);
    expect(eh, 'height').toBeLessThanOrEqual(AT_MOST * H);
    // the width-to-height ratio itself within 5 %
    expect(Math.abs(ew / eh / (W / H) - 1)).toBeLessThan(0.05);
  });

  it('predicts the honeycomb pile of 3·10^5 grains about √3 times as wide as tall, as the engine draws it', async () => {
    // the brick wall puts neighbours √3/2 apart along a row and rows 3/2 apart (unit hexagon edges)
    const { real: [H, W], estimate: [eh, ew] } = await real('honeycomb', 3e5, 0);
    expect(Math.abs(W / H / Math.sqrt(3) - 1)).toBeLessThan(0.03);
    expect(Math.abs(ew / eh / Math.sqrt(3) - 1)).toBeLessThan(0.03);
    expect([ew >= W, eh >= H]).toEqual([true, true]);
  });
});

describe('the estimated work follows the engine', () => {
  // Z^1: the closed form m(m+1)(2m+1)/6, m = ⌊n/2⌋ (OEIS A000330), equals the engine's count exactly;
  // Z^3: the coefficient anchored at 10^6 grains must carry down the n^(5/3) law to small runs
  it.for([
    ['line', 600, 0],
    ['cubic', 3e4, 0.03],
    ['cubic', 1e5, 0.03],
  ] as [string, number, number][])('%s, n = %d: predicted topplings within %s of the engine\'s', async ([preset, chips, within]) => {
    const spec = runSpecSchema.parse({ lattice: { preset }, chips });
    const out = await stabilize(resolveProblem(spec));
    const counted = Number(out.stats.totalTopplings);
    expect(Math.abs(estimateRun(spec).topplings / counted - 1)).toBeLessThanOrEqual(within);
  });
});
