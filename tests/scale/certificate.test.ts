/**
 * The certificate: a correct run passes; breaking any one of its conditions by hand is detected.
 * Minimality by peeling: raising the odometer by one on the whole toppled set (and moving the grains
 * accordingly) keeps every height legal-looking, yet the least action principle (arXiv:0901.3805)
 * says it is not the odometer, and the peeling test must say so too.
 */
import { afterAll, describe, expect, it } from 'vitest';
import { stabilize, stabilizeReference } from '../../renderer/src/engine/index.js';
import { shutdownWorkers } from '../../renderer/src/engine/parallel.js';
import { certify } from '../../renderer/src/scale/certificate.js';
import { runStatsFromJSON, runStatsSchema, runStatsToJSON } from '../../shared/run-stats.js';
import { problem } from '../engine/helpers.js';

afterAll(() => shutdownWorkers());

describe('certificate', () => {
  for (const preset of ['line', 'square', 'cubic', 'triangular', 'honeycomb', 'f-lattice', 'manhattan']) {
    it(`${preset}: a reference run passes`, () => {
      const p = problem({ lattice: { preset }, chips: preset === 'line' ? 40 : 500, background: { kind: 'random', seed: 3, weights: [1, 1] } });
      const o = stabilizeReference(p);
      const c = certify(p, o, { method: 'legal' });
      expect(c).toMatchObject({ stable: true, nonNegative: true, massConserved: true, odometerMatches: true, minimal: true, peeledSites: 0, passed: true });
    });
  }

  it('detects an odometer value that does not explain the heights (a wrapped or damaged count)', async () => {
    const p = problem({ lattice: { preset: 'triangular' }, chips: 5000 });
    const o = await stabilize(p, { threads: 1 });
    expect(certify(p, o, { method: 'seeded' }).odometerMatches).toBe(true);
    // still toppled, so the heights, the mass and the peeled set look the same: only the counts differ
    const od = Float64Array.from(o.odometer);
    const origin = o.origin[0]! * o.shape[1]! + o.origin[1]!;
    od[origin] = od[origin]! + 2 ** 32;
    const c = certify(p, { ...o, odometer: od }, { method: 'seeded' });
    expect(c).toMatchObject({ stable: true, massConserved: true, minimal: true, odometerMatches: false, passed: false });
    // a source whose grains are missing from the heights is caught as well
    const q = problem({ lattice: { preset: 'triangular' }, chips: 5001 });
    expect(certify(q, o, { method: 'seeded' })).toMatchObject({ odometerMatches: false, passed: false });
  });

  it('detects an odometer one too high on every toppled site', async () => {
    const p = problem({ lattice: { preset: 'square' }, chips: 3000 });
    const o = await stabilize(p, { threads: 1 });
    // pad the arrays, topple every toppled site once more, then relax legally until stable again:
    // the result is stable with grains conserved, but its odometer exceeds the true one
    const [H0, W0] = o.shape as [number, number];
    const M = 8, W = W0 + 2 * M, H = H0 + 2 * M;
    const h = new Int32Array(W * H), od = new Float64Array(W * H);
    for (let y = 0; y < H0; y++)
      for (let x = 0; x < W0; x++) ((h[(y + M) * W + x + M] = o.heights[y * W0 + x]!), (od[(y + M) * W + x + M] = o.odometer[y * W0 + x]!));
    const topple = (i: number) => {
      od[i]! += 1;
      h[i]! -= 4;
      for (const j of [i - 1, i + 1, i - W, i + W]) h[j]! += 1;
    };
    for (let i = 0; i < od.length; i++) if (od[i]! > 0) topple(i);
    for (let again = true; again; ) {
      again = false;
      for (let i = 0; i < h.length; i++) if (h[i]! >= 4) ((again = true), topple(i));
    }
    const bad = { ...o, shape: [H, W], origin: [o.origin[0]! + M, o.origin[1]! + M], heights: h, odometer: od };
    const c = certify(p, bad, { method: 'seeded' });
    expect(c.stable).toBe(true); // still stable: only the peeling test can tell
    expect(c.massConserved).toBe(true);
    expect(c.minimal).toBe(false);
    expect(c.peeledSites).toBeGreaterThan(0);
    expect(c.passed).toBe(false);
  });

  it('detects an unstable site and lost grains', async () => {
    const p = problem({ lattice: { preset: 'square' }, chips: 1000 });
    const o = await stabilize(p, { threads: 1 });
    const h = Int32Array.from(o.heights);
    const i = h.findIndex((v) => v === 3);
    h[i] = 4;
    expect(certify(p, { ...o, heights: h }, { method: 'legal' })).toMatchObject({ stable: false, massConserved: false, passed: false });
    h[i] = 2;
    expect(certify(p, { ...o, heights: h }, { method: 'legal' })).toMatchObject({ stable: true, massConserved: false, passed: false });
  });

  it('is stored in the statistics and round-trips; statistics without it still parse', async () => {
    const p = problem({ lattice: { preset: 'square' }, chips: 200 });
    const o = await stabilize(p, { threads: 1 });
    o.stats.certificate = certify(p, o, { method: 'legal' });
    const json = runStatsToJSON(o.stats);
    expect(runStatsFromJSON(JSON.parse(JSON.stringify(json))).certificate?.passed).toBe(true);
    const { certificate: _c, ...old } = json;
    expect(runStatsSchema.safeParse(old).success).toBe(true);
  });
});
