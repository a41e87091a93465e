import { totalmem } from 'node:os';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { estimateResponseSchema } from '../../shared/api/estimates.js';
import { BYTES_PER_CELL, creditsFor, estimateRun, EstimateError, FAST_PATH_MEASURED, LINE_PATH_SECONDS, PLAIN_TOPPLINGS_PER_SECOND, TOPPLINGS_PER_SECOND } from '../../shared/estimate.js';
import { LATTICE_PRESETS, newRunSpecSchema, runSpecSchema, type RunSpecInput } from '../../shared/run-spec.js';
import { backgroundFloor, neverStabilizesReason } from '../../shared/stability.js';
import { as, createLab, createUser, signIn, startHarness, TEST_PASSWORD, type Harness, type Session } from './support/harness.js';

const spec = (s: RunSpecInput) => runSpecSchema.parse(s);
const square = (chips: number, height = 0) => estimateRun(spec({ lattice: { preset: 'square' }, chips, background: { kind: 'constant', height } }));

describe('the estimator (shared/estimate.ts)', () => {
  it('gives the exact toppling count on Z^1: the total odometer of N grains', () => {
    // N = 2m or 2m+1 grains: site x fires T(m − |x|) times, total m(m+1)(2m+1)/6 = OEIS A000330(m);
    // for N = 1..10 that is 0, 1, 1, 5, 5, 14, 14, 30, 30, 55 (derived from the Laplacian equation)
    const expected = [0, 1, 1, 5, 5, 14, 14, 30, 30, 55];
    expect(expected.map((_, k) => estimateRun(spec({ lattice: { preset: 'line' }, chips: k + 1 })).topplings)).toEqual(expected);
  });

  it('covers the Z^1 pile: 2n + 1 grains end as one grain on each of −n..n', () => {
    // Anderson, Lovász, Shor, Spencer, Tardos, Winograd, Amer. Math. Monthly 96 (1989) 481–493
    for (const n of [5, 50, 5000]) {
      const { shape } = estimateRun(spec({ lattice: { preset: 'line' }, chips: 2 * n + 1 }));
      expect(shape[0]).toBeGreaterThanOrEqual(2 * n + 1);
      expect(shape[0]).toBeLessThanOrEqual(2 * n + 1 + 4);
    }
  });

  it('covers the outer radius bound of the square-lattice pile and stays close to it', () => {
    // outer radius ≤ sqrt(n / (2π)) (1 + o(1)) for n grains at the origin of Z^2 (arXiv:0704.0688, abstract)
    for (const n of [1e4, 1e5, 1e6, 1e8]) {
      const e = square(n);
      expect(e.radius).toBeGreaterThanOrEqual(Math.sqrt(n / (2 * Math.PI)));
      expect(e.shape[0]).toBeGreaterThanOrEqual(2 * Math.sqrt(n / (2 * Math.PI)) + 1);
      expect(e.shape).toEqual([e.shape[0], e.shape[0]]);
      expect(e.cells).toBe(e.shape[0]! ** 2);
      // and not wildly more: inside 10 % of the bound's box
      expect(e.shape[0]).toBeLessThan(1.1 * 2 * Math.sqrt(n / (2 * Math.PI)) + 4);
    }
    // measured radius 119.85 at n = 10^5 (independent computation, not published) lies inside
    expect(square(1e5).radius).toBeGreaterThan(119.85);
  });

  it('predicts square-lattice topplings from the fit, and says how far off it is below the fitted range', () => {
    // regression values computed independently (numpy), not published: 10^4, 10^5, 10^6 grains
    const reference: [number, number][] = [
      [1e4, 1_830_917],
      [1e5, 178_641_503],
      [1e6, 17_448_261_875],
    ];
    for (const [n, t] of reference) expect(Math.abs(square(n).topplings / t - 1)).toBeLessThan(0.001);
    // n = 1000: 18,226 topplings (same independent computation): extrapolated, within 5 %
    expect(Math.abs(square(1000).topplings / 18_226 - 1)).toBeLessThan(0.05);
    // time is the stabilization, plus the fixed start-up and drawing the pyramids asked for
    const e = square(1e6);
    expect(e.seconds).toBeCloseTo(2 + e.computeSeconds + e.renderSeconds, 6);
  });

  it('times the plain engine by its topplings and the fast path by its measured curve', () => {
    // below the fast path's threshold, and where it does not apply (cubic), work over the measured rate
    const small = square(20_000);
    expect(small.computeSeconds / (small.topplings / TOPPLINGS_PER_SECOND)).toBeCloseTo(1, 6);
    const cubic = estimateRun(spec({ lattice: { preset: 'cubic' }, chips: 1e6 }));
    expect(cubic.computeSeconds / (cubic.topplings / PLAIN_TOPPLINGS_PER_SECOND[3])).toBeCloseTo(1, 6);
    // line runs take the closed-form line path: priced by grains and cells, not by topplings
    const line = estimateRun(spec({ lattice: { preset: 'line' }, chips: 3000 }));
    expect(line.computeSeconds / (3000 * LINE_PATH_SECONDS.perGrain + line.cells * LINE_PATH_SECONDS.perCell)).toBeCloseTo(1, 6);
    const lines = [1e3, 1e5, 1e7].map((n) => estimateRun(spec({ lattice: { preset: 'line' }, chips: n })).computeSeconds);
    expect(lines).toEqual([...lines].sort((a, b) => a - b));
    // 10^7 grains: seconds on the line path, where the plain engine's ~4·10^19 topplings would take years
    expect(lines[2]).toBeLessThan(600);
    // on the fast path: exactly the bench's measured points, and in between on the log-log segment
    for (const [n, t] of FAST_PATH_MEASURED) expect(square(n).computeSeconds).toBeCloseTo(t, 9);
    const [[n0, t0], [n1, t1]] = [FAST_PATH_MEASURED[0]!, FAST_PATH_MEASURED[1]!];
    const mid = Math.round(Math.sqrt(n0 * n1));
    expect(square(mid).computeSeconds / (t0 * (mid / n0) ** (Math.log(t1 / t0) / Math.log(n1 / n0)))).toBeCloseTo(1, 9);
    // more grains never predict less time
    const ns = [7e4, 1e5, 3e5, 1e6, 3e6, 1e7, 1e8, 1e9];
    const ts = ns.map((n) => square(n).computeSeconds);
    expect(ts).toEqual([...ts].sort((a, b) => a - b));
  });

  it('estimates every lattice preset the run form offers', () => {
    for (const preset of LATTICE_PRESETS) {
      const e = estimateRun(spec({ lattice: { preset }, chips: 100_000 }));
      expect(e.cells, preset).toBeGreaterThan(1);
      expect(e.seconds, preset).toBeGreaterThan(0);
    }
  });

  it('grows like n^(1/3) on the cubic lattice and n^(1/2) on planar ones', () => {
    // diameter Θ(n^(1/d)) on Z^d for backgrounds ≤ 2d − 2 (Fey, Levine, Peres, J. Stat. Phys. 138 (2010); arXiv:0901.3805)
    const cubic = (n: number) => estimateRun(spec({ lattice: { preset: 'cubic' }, chips: n }));
    expect(cubic(8e6).radius / cubic(1e6).radius).toBeCloseTo(2, 10);
    expect(cubic(1e6).shape.length).toBe(3);
    const tri = (n: number) => estimateRun(spec({ lattice: { preset: 'triangular' }, chips: n }));
    expect(tri(4e6).radius / tri(1e6).radius).toBeCloseTo(2, 10);
  });

  it('warns where the pile need not stay compact, and not below 2d − 2', () => {
    // constant 2d − 1 = 3 on Z^2: one grain already never stabilizes (Sadhu & Dhar, arXiv:1109.2908; FLP arXiv:0901.3805)
    expect(square(10, 3).warnings.length).toBe(1);
    // constant 2 = 2d − 2 on Z^2 is compact (arXiv:0901.3805); and the pile is larger than on an empty lattice
    expect(square(1000, 2).warnings).toEqual([]);
    expect(square(1000, 2).cells).toBeGreaterThan(square(1000, 0).cells);
  });

  it('prices memory at 16 bytes a cell and credits by the documented formula', () => {
    const e = square(1e6);
    expect(e.bytes).toBe(e.cells * BYTES_PER_CELL);
    expect(e.credits).toBe(creditsFor(e.seconds, e.bytes));
    // worked by hand: 61 s → 2 started minutes; 1 byte → 1 started GiB; 2 + 1 = 3
    expect(creditsFor(61, 1)).toBe(3);
    expect(creditsFor(0, 0)).toBe(1);
  });

  it('widens the box for far sources and refuses an unknown lattice', () => {
    const far = estimateRun(spec({ lattice: { preset: 'square' }, chips: 100, sources: [{ at: [500, 0], chips: 100 }] }));
    expect(far.shape[1]).toBeGreaterThan(1000);
    expect(() => estimateRun(spec({ lattice: { preset: 'kagome-ish' }, chips: 10 }))).toThrow(EstimateError);
  });
});

describe('backgrounds that can never stabilize (shared/stability.ts)', () => {
  // every site at least its threshold − 1: the first grain makes every site it reaches topple
  // (common practice; the engine's own refusal in renderer/src/engine/explosion.ts agrees)
  it('refuses exactly when every site is at least its threshold − 1', () => {
    const sq = { preset: 'square' };
    expect(neverStabilizesReason(sq, { kind: 'constant', height: 3 })).toBeDefined();
    // at the threshold or above the words say so, instead of "at least 4 …, and 3 is one below 4"
    expect(neverStabilizesReason(sq, { kind: 'constant', height: 3 })).toMatch(/^this constant background puts at least 3 grains on every site, and 3 is one below the toppling threshold 4 /);
    expect(neverStabilizesReason(sq, { kind: 'constant', height: 4 })).toMatch(
      /^this constant background puts at least 4 grains on every site, at or above the toppling threshold 4 of every site of this lattice: every site topples from the start .* heights of at most 2 on some sites$/,
    );
    expect(neverStabilizesReason(sq, { kind: 'constant', height: 2 })).toBeUndefined();
    expect(neverStabilizesReason(sq, { kind: 'checkerboard', a: 3, b: 9 })).toBeDefined();
    expect(neverStabilizesReason(sq, { kind: 'checkerboard', a: 3, b: 2 })).toBeUndefined();
    expect(neverStabilizesReason(sq, { kind: 'annuli', a: 0, b: 7 })).toBeUndefined();
    expect(neverStabilizesReason(sq, { kind: 'motif', cells: [[3, 3], [3, 2]] })).toBeUndefined();
    expect(neverStabilizesReason(sq, { kind: 'random', seed: 1, weights: [0, 0, 0, 5] })).toBeDefined();
    // a tiny weight on 2 leaves sites that can absorb grains
    expect(neverStabilizesReason(sq, { kind: 'random', seed: 1, weights: [0, 0, 1e-6, 5] })).toBeUndefined();
    // an upload is 0 outside its array
    expect(neverStabilizesReason(sq, { kind: 'array', sha256: 'a'.repeat(64), shape: [3, 3] })).toBeUndefined();
    // thresholds per preset: triangular 6, honeycomb 3, line 2, cubic 6
    expect(neverStabilizesReason({ preset: 'triangular' }, { kind: 'constant', height: 4 })).toBeUndefined();
    expect(neverStabilizesReason({ preset: 'triangular' }, { kind: 'constant', height: 5 })).toBeDefined();
    expect(neverStabilizesReason({ preset: 'honeycomb' }, { kind: 'constant', height: 1 })).toBeUndefined();
    expect(neverStabilizesReason({ preset: 'honeycomb' }, { kind: 'constant', height: 2 })).toBeDefined();
    expect(neverStabilizesReason({ preset: 'line' }, { kind: 'constant', height: 1 })).toBeDefined();
    expect(neverStabilizesReason({ preset: 'cubic' }, { kind: 'checkerboard', a: 4, b: 5 })).toBeUndefined();
    // an unknown preset is refused elsewhere, with its own message
    expect(neverStabilizesReason({ preset: 'kagome-ish' }, { kind: 'constant', height: 9 })).toBeUndefined();
  });

  it('judges a drawn unit cell by its largest threshold, so it never refuses what might stabilize', () => {
    // class (0, 0) has 4 neighbours, class (1, 0) has 2: at 2 everywhere the first class is below 3
    const mixed = { periodic: { period: [2, 1] as [number, number], neighbours: [[[[1, 0], [-1, 0], [0, 1], [0, -1]], [[1, 0], [-1, 0]]]] as [number, number][][][] } };
    expect(neverStabilizesReason(mixed, { kind: 'constant', height: 2 })).toBeUndefined();
    expect(neverStabilizesReason(mixed, { kind: 'constant', height: 3 })).toMatch(/and 3 is one below 4, the largest toppling threshold of this lattice's sites: /);
  });

  it('reads the lowest recurring height of each background kind', () => {
    expect(backgroundFloor({ kind: 'motif', cells: [[4, 7], [2, 9]] })).toBe(2);
    expect(backgroundFloor({ kind: 'random', seed: 0, weights: [0, 0, 3, 1] })).toBe(2);
    expect(backgroundFloor({ kind: 'random', seed: 0, weights: [0, 0] })).toBeUndefined();
  });

  it('is the new-run schema\'s rule, on the background field, and keeps the soft warning for the rest', () => {
    const r = newRunSpecSchema.safeParse({ lattice: { preset: 'square' }, chips: 5, background: { kind: 'constant', height: 3 } });
    expect(r.success).toBe(false);
    expect(r.error!.issues.map((i) => [i.path.join('.'), i.message])).toEqual([['background.height', neverStabilizesReason({ preset: 'square' }, { kind: 'constant', height: 3 })]]);
    // mean 2.5 above 2d − 2 = 2, but the 2s can absorb grains: accepted with the warning
    const maybe = newRunSpecSchema.parse({ lattice: { preset: 'square' }, chips: 5, background: { kind: 'checkerboard', a: 3, b: 2 } });
    expect(estimateRun(maybe).warnings).toEqual(['the mean background height 2.5 is above 2; the pile may grow much faster than expected or never stabilize']);
  });
});

describe('POST /api/estimates', () => {
  let h: Harness;
  let who: Session;
  let labId: string;
  beforeAll(async () => {
    h = await startHarness('estimates');
    const u = await createUser(h, 'Estimate Author');
    labId = await createLab(h, 'Estimate Lab', [{ userId: u.id, role: 'author' }]);
    who = await signIn(h, u.email, TEST_PASSWORD);
  });
  afterAll(async () => {
    await h.close();
  });

  it('answers what the form computes itself', async () => {
    const s: RunSpecInput = { lattice: { preset: 'honeycomb' }, chips: 250_000, background: { kind: 'random', seed: 7, weights: [1, 1] } };
    const res = await as(h.http.post('/api/estimates'), who).send({ spec: s }).expect(200);
    expect(estimateResponseSchema.parse(res.body)).toEqual({ estimate: estimateRun(spec(s)) });
  });

  it('refuses an unknown lattice or a bad spec with 400', async () => {
    const unknown = await as(h.http.post('/api/estimates'), who).send({ spec: { lattice: { preset: 'nowhere' }, chips: 10 } });
    expect(unknown.status).toBe(400);
    expect(unknown.body.error).toMatch(/unknown lattice preset "nowhere"/);
    const bad = await as(h.http.post('/api/estimates'), who).send({ spec: { lattice: { preset: 'square' }, chips: -1 } });
    expect(bad.status).toBe(400);
    expect(bad.body.issues[0].path).toBe('spec.chips');
  });

  it('answers a run too large for the machines with why, memory needed against available, not with its cost', async () => {
    // n = 10^12 on Z^2 needs thousands of GiB (16 bytes a cell), beyond any machine this runs on; its
    // price (over 10^12 credits) only follows from that size, so the memory is the reason given. The
    // farm's "cannot" is the estimate's answer (200), not a bad request: the submit is what is refused
    const s: RunSpecInput = { lattice: { preset: 'square' }, chips: 1e12 };
    const e = estimateRun(spec(s));
    expect(e.bytes).toBeGreaterThan(totalmem());
    const huge = await as(h.http.post('/api/estimates'), who).send({ spec: s }).expect(200);
    const answer = estimateResponseSchema.parse(huge.body);
    if (!('refused' in answer)) throw new Error(`expected a refusal, got ${JSON.stringify(huge.body)}`);
    expect(Object.keys(huge.body)).toEqual(['refused']);
    const said = /^this run needs about ([\d,.]+) GiB of working memory \(a ([\d,]+) × ([\d,]+) domain, ([\d,]+) cells at (\d+) bytes each\), more than the ([\d,.]+) GiB of the machines that compute it; use fewer grains$/.exec(answer.refused.reason);
    expect(said, answer.refused.reason).not.toBeNull();
    const num = (t: string) => Number(t.replaceAll(',', ''));
    const [needed, h0, w0, cells, perCell, available] = [num(said![1]!), num(said![2]!), num(said![3]!), num(said![4]!), num(said![5]!), num(said![6]!)];
    // needed: the estimate's domain at the engine's bytes per cell; available: this machine's memory
    expect([h0, w0, cells, perCell]).toEqual([...e.shape, e.cells, BYTES_PER_CELL]);
    expect(Math.abs(needed - e.bytes / 2 ** 30)).toBeLessThanOrEqual(0.05);
    expect(Math.abs(available - totalmem() / 2 ** 30)).toBeLessThanOrEqual(0.05);
    expect([answer.refused.bytes, answer.refused.limitBytes]).toEqual([e.bytes, totalmem()]);
    // no price for a run that cannot be computed
    expect(JSON.stringify(huge.body)).not.toMatch(/credits/);
    // the submit refuses it in the same words, on the spec, with both numbers
    const submit = await as(h.http.post('/api/runs'), who).send({ labId, title: 'A trillion grains', spec: s });
    expect(submit.status).toBe(400);
    expect(submit.body.error).toBe(`spec: ${answer.refused.reason}`);
    expect(submit.body.issues).toEqual([{ path: 'spec', message: `needs about ${said![1]} GiB of working memory; the machines have ${said![6]} GiB` }]);
    const small = await as(h.http.post('/api/estimates'), who).send({ spec: { lattice: { preset: 'square' }, chips: 1000 } }).expect(200);
    const fits = estimateResponseSchema.parse(small.body);
    expect('estimate' in fits && fits.estimate.warnings).toEqual([]);
  });

  it('still refuses a malformed spec with 400 beside its field, also at sizes beyond the machines', async () => {
    // bad input stays a bad request, whatever the size: the schema is checked before the memory
    const res = await as(h.http.post('/api/estimates'), who).send({ spec: { lattice: { preset: 'square' }, chips: 1e12, background: { kind: 'constant', height: 3 } } });
    expect(res.status).toBe(400);
    expect(res.body.issues.map((i: { path: string }) => i.path)).toEqual(['spec.background.height']);
    const tooMany = await as(h.http.post('/api/estimates'), who).send({ spec: { lattice: { preset: 'square' }, chips: 1e20 } });
    expect(tooMany.status).toBe(400);
    expect(tooMany.body.issues).toEqual([{ path: 'spec.chips', message: 'must be at most 9,007,199,254,740,991 (2⁵³\u00a0−\u00a01), the largest grain count held exactly' }]);
  });
});
