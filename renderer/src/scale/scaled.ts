import { availableParallelism } from 'node:os';
import { NotStabilizedError } from '../engine/errors.js';
import { DEFAULT_MAX_SITES } from '../engine/limits.js';
import { buildOutcome, type OdometerArray, type Outcome } from '../engine/outcome.js';
import type { Problem } from '../engine/problem.js';
import { certify } from './certificate.js';
import { checkSnapshot, snapshotBase, SnapshotError, type SeededSnapshot, type Snapshot } from '../engine/snapshot.js';
import { FROZEN, forEachGuard, growGrid, innerBox, makeGrid, type Box, type ScaleGrid } from './grid.js';
import { guardUnstable, latticeKernel, pushAllUnstable, relaxSome, UnstableStack, type LatticeKernel } from './kernel.js';
import { lowerOdometer, peel, untopple, windowOf } from './peel.js';
import { collectGarbage } from './memory.js';
import { StripRelaxer } from './strips.js';
import { foldBox, foldGrid, foldOf, foldXY, countToppledFolded, restoreBoundary, unfitSeedHarmless, unfold, unfoldedCells, type Fold, type FoldedBoundary } from './symmetry.js';
import { applySeed, SEED_HEIGHT_LIMIT, bulkGainOf, flatSafety, peakOf, safetyAt, seedBox, seedError, type CoarseLevel, type SeedOptions } from './seed.js';

export interface ScaleProgress {
  stage: string;
  /** estimated fraction of the work done, 0..1, never decreasing */
  fraction: number;
  toppledSites: number;
  /** estimated seconds left (null until there is something to extrapolate from) */
  secondsLeft: number | null;
  level: number;
  levels: number;
}

export interface LevelInfo {
  chips: number;
  cells: number;
  /** toppling events of the legal relaxation */
  events: number;
  repairRounds: number;
  /** the level's odometer was lowered and relaxed again instead of repaired round by round (LOWER_SHARE) */
  lowered: boolean;
  relaxSeconds: number;
  repairSeconds: number;
  gain: number | null;
  /** with `measureSeed`: Σ max(0, u − seed) and Σ max(0, seed − u) over the level's cells, largest seed − u */
  seedDeficit?: number;
  seedExcess?: number;
  maxExcess?: number;
  /** largest seed − u the level would have had without its safety offsets */
  rawOvershoot?: number;
}

export interface ScaleOptions {
  onProgress?: (p: ScaleProgress) => void;
  signal?: AbortSignal;
  maxSites?: number;
  /** the coarsest level has at most this many grains and starts from a zero seed (default 2^12) */
  baseChips?: number;
  /** flat safety offset subtracted from each seed (default max(32, 0.25·√n_l)) */
  offset?: number;
  /** weight of the extrapolated error of the previous level (default 0.9) */
  alpha?: number;
  /** keep a copy of each seed and report its distance to the level's odometer in onLevel (tuning; 8 bytes per cell more) */
  measureSeed?: boolean;
  /** (tests) largest |height| a seed may leave, default 2^30 (SEED_HEIGHT_LIMIT): a small one makes small runs meet it */
  seedHeightLimit?: number;
  /**
   * threads for the relaxation, main thread included (default min(2, cores)): more than one relaxes
   * strips of rows concurrently (strips.ts), one uses a stack of unstable cells over the whole grid
   */
  threads?: number;
  /** relax by strips even on one thread or a small grid (benchmarks and tests; default: strips when threads > 1 on big grids) */
  strips?: boolean;
  /** called after each level with what it cost (benchmarks and tuning) */
  onLevel?: (info: LevelInfo) => void;
  /** growth of the seed error away from the source per level, beyond the value scaling (default 1) */
  bulkGain?: number;
  /** keep bulkGain fixed (default) instead of measuring it between levels (overshot at 10^6) */
  fixedGain?: boolean;
  /** override of the extra safety next to the source (tuning; see NEAR_SAFETY) */
  nearSafety?: number;
  /** periodic snapshots (kind 'seeded'); `save` runs synchronously while the state is still */
  checkpoint?: { everySeconds: number; save: (s: Snapshot) => void };
  /** continue from a seeded snapshot of the same problem (checked first; its arrays are taken over) */
  resume?: Snapshot;
  /**
   * relax each level on the quarter or eighth of the plane that mirror symmetry allows (symmetry.ts;
   * default true where the lattice and background allow it). The result is the same either way.
   */
  symmetry?: boolean;
  /** count topplings in this type on every level (tests; default uint32 unless `wideOdometer` says a level needs float64) */
  odometer?: 'uint32' | 'float64';
}

/** Where the fast path applies: planar lattices, grains at the origin only, no uploaded array. */
export function scaledPathApplies(p: Problem): boolean {
  return (
    p.lattice.dim === 2 &&
    p.sources.length === 1 &&
    p.sources[0]!.chips > 0 &&
    p.sources[0]!.chips < 2 ** 30 &&
    p.background.extent === undefined &&
    p.lattice.classes.length <= 256 &&
    p.lattice.classes.every((c) => c.length <= 64)
  );
}

/** Grain counts of the levels, finest first: n, floor(n/4), … down to baseChips or less. */
export function levelChips(n: number, base: number): number[] {
  const out = [n];
  while (out[out.length - 1]! > base) out.push(Math.floor(out[out.length - 1]! / 4));
  return out;
}

/**
 * A snapshot this path can resume: same engine and specification (checkSnapshot), of this kind, at a
 * level this run has, with arrays that fill their grids.
 * @throws SnapshotError naming what does not fit.
 */
function checkSeededSnapshot(p: Problem, s: Snapshot, levels: number, fold: Fold | null): SeededSnapshot {
  checkSnapshot(p, s);
  if (s.kind !== 'seeded') throw new SnapshotError('the checkpoint is of the plain tiled engine, not of the seeded fast path');
  if ((s.fold ?? null) !== fold) throw new SnapshotError(`the checkpoint relaxes ${s.fold ? `a folded grid (${s.fold})` : 'the whole plane'}; this run relaxes ${fold ? `a folded grid (${fold})` : 'the whole plane'}`);
  const { grid, coarse } = s;
  if (!Number.isInteger(s.level) || s.level < 0 || s.level >= levels) throw new SnapshotError(`the checkpoint is at level ${s.level}, which this run (${levels} levels) does not have`);
  if (grid.h.length !== grid.W * grid.H || grid.od.length !== grid.W * grid.H || grid.guard < Math.max(1, p.lattice.reach))
    throw new SnapshotError("the checkpoint's grid is malformed");
  if (coarse && (coarse.u.length !== coarse.W * coarse.H || (coarse.err && coarse.err.length !== coarse.u.length))) throw new SnapshotError("the checkpoint's coarse level is malformed");
  // the finest level lets its coarser level go once relaxed (a lowered level relaxes again without it)
  if (!coarse && s.level < levels - 1 && s.level > 0) throw new SnapshotError('the checkpoint lacks the coarser level it was seeded from');
  return s;
}

/**
 * Safety offset per √n_l of the levels above the finest. They are cheap in events but an overshoot
 * costs one repair round over the whole plane per unit, and what they get wrong never reaches the
 * finest seed (it extrapolates the exact error u − P of the level below it). Measured at square
 * n = 10^7 (one thread, folded): 0.25 → n/4 overshot by up to 994, 1,001 repair rounds, 36.1 s in all;
 * 1 → no repairs, 17.5 s; 2 → 18.7 s. At 10^6: 0.80, 0.61 (0.5), 0.67 s.
 */
const COARSE_OFFSET_PER_ROOT_N = 1;

/**
 * A folded level whose first peeled set holds more than this share of its toppled sites is lowered
 * by LOWER_BY times its flat safety offset and relaxed again instead of repaired round by round.
 * Measured on the triangular lattice (wedge fold, two threads): n = 10^6 relaxed in 0.41 s and then
 * spent 4.8 s in 740 repair rounds (first peeled set 60,553 cells); a seed offset four times larger
 * took 1.07 s with no repairs; at 10^7, 5.4 s + 108 s against 30.1 s. At 4·10^6 nothing overshot.
 */
const LOWER_SHARE = 0.02;
const LOWER_BY = 4;

/** Grids from this many cells on collect garbage before and after their largest allocations (memory.ts). */
const BIG_GRID = 2 ** 22;

/** Smallest grid relaxed by strips on several threads (measured: at 2^18 cells, n ≈ 10^5, the stack was still faster). */
const PARALLEL_MIN_CELLS = 2 ** 19;

/**
 * Whether a level must count topplings in float64 rather than uint32 (grid.ts). The odometer's peak
 * grows a little faster than the grains from level to level (its log term gains n·ln 2/(2π√det M)),
 * so the bound is the coarser level's largest count scaled by the grains, with a quarter more and a
 * further n to spare; a level relaxed from zero is small unless asked otherwise. The certificate would
 * catch a wrapped count (odometerMatches), but then the run would fall back to the plain engine.
 */
export function wideOdometer(chips: number, coarse: Pick<CoarseLevel, 'u' | 'chips'> | null): boolean {
  if (!coarse) return chips >= 2 ** 24;
  let max = 0;
  for (let i = 0; i < coarse.u.length; i++) if (coarse.u[i]! > max) max = coarse.u[i]!;
  return (chips / coarse.chips) * max * 1.25 + chips >= 2 ** 32;
}

const abortError = (signal: AbortSignal) => signal.reason ?? new DOMException('stabilization aborted', 'AbortError');

/**
 * The exact fast path: coarse-to-fine odometer seeding. Level l solves n_l = floor(n / 4^l) grains;
 * each finer level starts from the coarser odometer scaled by 2 in space and by n_l / n_{l+1} in
 * value, plus the coarser level's own seed error extrapolated the same way, minus a flat offset
 * (odometers behave like n·w(x/√n)). A seed below the true odometer makes the legal relaxation that
 * follows end exactly on it (least action principle, arXiv:0901.3805); any overshoot is found by the
 * peeling test and removed one unit at a time, so the result is exact either way and certified.
 * @throws NotStabilizedError past maxSites; the signal's reason when aborted.
 */
export async function stabilizeScaled(problem: Problem, options: ScaleOptions = {}): Promise<Outcome> {
  const t0 = performance.now();
  if (!scaledPathApplies(problem)) throw new Error('the scaled path does not apply to this problem');
  const g = problem.lattice;
  const bg = problem.background;
  const n = problem.sources[0]!.chips;
  const maxSites = options.maxSites ?? DEFAULT_MAX_SITES;
  const chips = levelChips(n, Math.max(1, options.baseChips ?? 2 ** 12));
  // defaults measured on Z^2 at n = 10^6 (wall seconds, loaded machine): measured gain + offset 32: 7.7;
  // error scaled like the values (gain 1) + offset 32: 4.5 (215 repair rounds); gain 1 + offset 250: 2.9
  const seedOpts = {
    alpha: options.alpha ?? 0.9,
    offset: options.offset ?? 32,
    offsetPerRootN: options.offset === undefined ? 0.25 : 0,
    bulkGain: options.bulkGain ?? 1,
    nearSafety: options.nearSafety,
    fixedGain: options.fixedGain ?? g.classes.length === 1,
  };
  const L = chips.length;
  const fold = options.symmetry === false ? null : foldOf(g, bg);
  // a folded level is unfolded onto the whole plane once relaxed: the site budget applies to that grid,
  // checked before relaxing (3·10^8 grains relaxed 45 minutes on an eighth before the unfolding refused)
  const planeCells = (grid: ScaleGrid) => (fold ? unfoldedCells(grid, g, fold) : grid.W * grid.H);
  // progress weights: work per level grows about 12x per 4x grains (measured growth ~n^1.8)
  const weights = chips.map((_, l) => Math.pow(12, L - 1 - l));
  const totalWeight = weights.reduce((a, b) => a + b, 0);
  const stack = new UnstableStack();
  /** cells a folded grid's restored boundary made unstable, for the strip relaxation */
  const scratch = new UnstableStack(1 << 10);
  const peak = peakOf(g);
  let coarse: CoarseLevel | null = null;
  let startLevel = L - 1;
  let resumeGrid: ScaleGrid | null = null;
  let repairRounds = 0;
  let prevEvents = 0;
  /** events the resumed level had done before its checkpoint (progress goes on from there) */
  let resumedEvents = 0;
  /** the last level's peeling marks, lent to the certificate with the stack (peak memory) */
  let lastMark: Uint8Array | null = null;

  if (options.resume) {
    const s = checkSeededSnapshot(problem, options.resume, L, fold);
    startLevel = s.level;
    coarse = s.coarse;
    resumeGrid = s.grid;
    repairRounds = s.repairRounds;
    prevEvents = s.prevEvents;
    resumedEvents = s.levelEvents ?? 0;
  }

  let best = 0;
  /** the fraction when this process began: a resumed run's time left comes from its own pace */
  let startFraction: number | null = null;
  let lastReport = 0;
  let lastYield = performance.now();
  let lastSave = performance.now();
  let base: ReturnType<typeof snapshotBase> | undefined;
  const counted: { grid: ScaleGrid | null; sites: number; at: number; cost: number } = { grid: null, sites: 0, at: 0, cost: 0 };
  const report = (stage: string, level: number, inLevel: number, grid: ScaleGrid | null, force = false, folded: Fold | null = null, knownToppled = 0) => {
    if (!options.onProgress) return;
    const now = performance.now();
    if (!force && now - lastReport < 500) return;
    lastReport = now;
    let done = 0;
    for (let l = L - 1; l > level; l--) done += weights[l]!;
    const f = stage === 'done' ? 1 : Math.min(0.99, (done + weights[level]! * Math.min(0.99, inLevel)) / totalWeight);
    best = Math.max(best, f);
    startFraction ??= options.resume ? best : 0;
    const elapsed = (now - t0) / 1000;
    const gained = best - startFraction;
    let toppled = knownToppled;
    if (grid) {
      // counting reads the whole grid (0.1 s per 10^7 cells): between forced reports it runs at most
      // once per 20 times its own duration, so progress costs under 5 % of a large level's time
      if (force || grid !== counted.grid || now - counted.at > 20 * counted.cost) {
        const t = performance.now();
        counted.sites = folded ? countToppledFolded(grid, folded) : countToppled(grid);
        counted.at = performance.now();
        counted.cost = counted.at - t;
        counted.grid = grid;
      }
      toppled = counted.sites;
    }
    options.onProgress({
      stage, fraction: best, toppledSites: toppled, level: L - 1 - level, levels: L,
      secondsLeft: stage === 'done' ? 0 : gained > 0.01 ? (elapsed * (1 - best)) / gained : null,
    });
  };

  const threads = Math.max(1, Math.min(16, Math.floor(options.threads ?? Math.min(2, availableParallelism()))));
  // strips pay off on big grids only: below PARALLEL_MIN_CELLS one stack is faster (and the workers need not boot)
  const useStrips = (cells: number) => options.strips ?? (threads > 1 && cells >= PARALLEL_MIN_CELLS);
  let strips: StripRelaxer | null = null;
  try {
  let grid!: ScaleGrid;
  for (let level = startLevel; level >= 0; level--) {
    const c = chips[level]!;
    let k: LatticeKernel;
    let fb: FoldedBoundary | null = null;
    const levelOpts = level > 0 && seedOpts.offsetPerRootN > 0 ? { ...seedOpts, offsetPerRootN: COARSE_OFFSET_PER_ROOT_N } : seedOpts;
    if (resumeGrid) {
      grid = resumeGrid;
      resumeGrid = null;
      k = latticeKernel(g, grid.W);
    } else if (!coarse) {
      const r = Math.ceil(0.5 * Math.sqrt(c / Math.max(1, Math.min(...g.classes.map((x) => x.length)) / 4))) + 2;
      const box = { x0: -r, x1: r, y0: -r, y1: r };
      grid = makeGrid(g, bg, fold ? foldBox(fold, box) : box, options.odometer ? options.odometer === 'float64' : wideOdometer(c, null));
      if (planeCells(grid) > maxSites) throw new NotStabilizedError(maxSites);
      grid.h[grid.oy * grid.W + grid.ox] += c;
      k = latticeKernel(g, grid.W);
    } else {
      const box = fold ? foldBox(fold, seedBox(coarse, 4 + g.reach)) : seedBox(coarse, 4 + g.reach);
      const wide = options.odometer ? options.odometer === 'float64' : wideOdometer(c, coarse);
      grid = makeGrid(g, bg, box, wide);
      if (planeCells(grid) > maxSites) throw new NotStabilizedError(maxSites);
      k = latticeKernel(g, grid.W);
      grid.h[grid.oy * grid.W + grid.ox] += c;
      const limit = options.seedHeightLimit ?? SEED_HEIGHT_LIMIT;
      const unfit = applySeed(grid, k, coarse, c, levelOpts, peak, limit);
      if (fold) fb = foldGrid(grid, g, fold, bg.uniform!, c);
      if (unfit.length > 0 && !(fb && unfitSeedHarmless(grid, fb, unfit, limit))) {
        // a seed this rough is useless: start the level from zero instead (still exact)
        grid = makeGrid(g, bg, box, wide);
        grid.h[grid.oy * grid.W + grid.ox] += c;
        fb = null;
      }
    }
    if (fold && !fb) fb = foldGrid(grid, g, fold, bg.uniform!, c);
    const seedCopy = options.measureSeed ? { s: grid.od.slice(), W: grid.W, ox: grid.ox, oy: grid.oy, chips: c, opts: { ...levelOpts } } : null;
    const tLevel = performance.now();
    const repairsBefore = repairRounds;
    let tRepair = tLevel;
    const expected = Math.max(1, prevEvents * 12);
    let events = resumedEvents;
    resumedEvents = 0;
    let lowered = false;
    // between batches of topplings (a legal state): timers, progress, abort requests and checkpoints
    const pauseIfDue = async (eventsNow: number) => {
      if (performance.now() - lastYield <= 100) return;
      await new Promise<void>((resolve) => setImmediate(resolve));
      lastYield = performance.now();
      if (options.signal?.aborted) throw abortError(options.signal);
      report('relax', level, prevEvents ? eventsNow / expected : 0.5, grid, false, fb?.fold ?? null);
      if (options.checkpoint && lastYield - lastSave > options.checkpoint.everySeconds * 1000) {
        options.checkpoint.save({ ...(base ??= snapshotBase(problem)), kind: 'seeded', level, grid, coarse, repairRounds, prevEvents, levelEvents: eventsNow, ...(fb ? { fold: fb.fold } : {}) });
        lastSave = performance.now();
      }
    };
    for (;;) {
      if (useStrips(grid.W * grid.H)) {
        const before = events;
        strips ??= new StripRelaxer(threads);
        const folded = fb;
        const restore = folded
          ? () => {
              scratch.sp = 0;
              restoreBoundary(grid, folded, scratch);
              return scratch.data.subarray(0, scratch.sp);
            }
          : undefined;
        restore?.(); // true boundary heights before the first phase
        events += await strips.relax(grid, k, (e) => pauseIfDue(before + e), restore);
      } else if (fb) {
        restoreBoundary(grid, fb, stack);
        pushAllUnstable(grid, k, stack);
        // stable only when a restored boundary pushes nothing more
        do {
          while (stack.sp > 0) {
            events += relaxSome(grid, k, stack, 1 << 20);
            restoreBoundary(grid, fb, stack);
            await pauseIfDue(events);
          }
        } while (restoreBoundary(grid, fb, stack) > 0);
      } else {
        pushAllUnstable(grid, k, stack);
        while (stack.sp > 0) {
          events += relaxSome(grid, k, stack, 1 << 20);
          await pauseIfDue(events);
        }
      }
      if (guardUnstable(grid, k)) {
        const b = innerBox(grid);
        const w = b.x1 - b.x0 + 1, hgt = b.y1 - b.y0 + 1;
        const ax = Math.max(8, Math.ceil(w / 4)), ay = Math.max(8, Math.ceil(hgt / 4));
        const grown: Box = { x0: b.x0 - ax, x1: b.x1 + ax, y0: b.y0 - ay, y1: b.y1 + ay };
        const next = fold ? foldBox(fold, grown) : grown; // a folded grid grows at its far sides only
        grid = growGrid(g, bg, grid, next);
        if (planeCells(grid) > maxSites) throw new NotStabilizedError(maxSites);
        k = latticeKernel(g, grid.W);
        if (fold) fb = foldGrid(grid, g, fold, bg.uniform!, c);
        report('grow', level, prevEvents ? events / expected : 0.5, grid, true, fb?.fold ?? null);
        continue;
      }
      // the finest level needs its coarser level no more (it only seeds and goes into checkpoints of
      // the relaxation): let it go before the whole plane and the peeling marks are allocated (peak memory)
      if (level === 0) coarse = null;
      // the repairs, the certificate and the next level's seed work on the whole plane
      if (fb) {
        // the unfolded grid is 4 or 8 times the folded one: that size decides (at 3·10^7 the folded
        // grid alone was below BIG_GRID, and 50 MB of coarser grids stayed alive through the unfolding)
        const big = grid.W * grid.H * 4 >= BIG_GRID;
        if (big) collectGarbage(); // the coarser levels' grids first (peak memory)
        grid = unfold(grid, g, bg, fb.fold);
        if (big) collectGarbage(); // and the folded grid
        fb = null;
        if (grid.W * grid.H > maxSites) throw new NotStabilizedError(maxSites);
        k = latticeKernel(g, grid.W);
      }
      // stable: any overshoot of the seed shows up as a non-empty peeled set; undo it unit by unit
      tRepair = performance.now();
      if (level === L - 1 && !options.resume) break; // zero seed: legal topplings only, nothing to repair
      const mark = new Uint8Array(grid.h.length);
      lastMark = mark;
      // A big first peeled set means the seed overshot over a wide area, and the relaxation made the
      // excess grow: undoing it a unit per round over the whole plane costs far more than lowering the
      // odometer and relaxing the folded level again (see LOWER_SHARE). The state is still symmetric
      // here (the largest peelable set is unique), so the grid can be folded again.
      let peeled = peel(grid.h, grid.od, k, stack, mark);
      if (fold && !lowered && peeled > 0 && peeled > LOWER_SHARE * countToppled(grid)) {
        lowerOdometer(grid.h, grid.od, k, Math.ceil(LOWER_BY * flatSafety(levelOpts, c)));
        lowered = true;
        stack.sp = 0;
        fb = foldGrid(grid, g, fold, bg.uniform!, c);
        continue;
      }
      // global test; repairs continue in the window of the last peeled set, then the global test again
      while (peeled > 0) {
        do {
          const win = windowOf(stack, grid.W, grid.H, 2 * g.reach + 2, grid.guard);
          untopple(grid.h, grid.od, k, stack);
          repairRounds++;
          if (options.signal?.aborted) throw abortError(options.signal);
          if (peel(grid.h, grid.od, k, stack, mark, win) === 0) break;
        } while (stack.sp > 0);
        peeled = peel(grid.h, grid.od, k, stack, mark);
      }
      stack.sp = 0;
      break;
    }
    prevEvents = events;
    if (level > 0) {
      const err = coarse ? seedError(grid, coarse, c, peak) : null;
      const gain = err && coarse ? bulkGainOf(grid, err, coarse, c) : null;
      coarse = { chips: c, W: grid.W, H: grid.H, ox: grid.ox, oy: grid.oy, u: grid.od, err, gain, toppled: toppledBox(grid) };
    }
    const tEnd = performance.now();
    const dist = seedCopy ? seedDistance(grid, seedCopy, fold) : null;
    options.onLevel?.({ chips: c, cells: grid.W * grid.H, events, repairRounds: repairRounds - repairsBefore, lowered, relaxSeconds: (tRepair - tLevel) / 1000, repairSeconds: (tEnd - tRepair) / 1000, gain: coarse?.gain ?? null, ...(dist ?? {}) });
    report('level', level, 1, grid, true);
  }
  coarse = null;
  return finish(grid);
  } finally {
    strips?.close();
  }

  function finish(grid: ScaleGrid): Outcome {
  forEachGuard(grid, (i) => (grid.h[i] = grid.h[i]! + FROZEN));
  const outcome = buildOutcome(problem, compactToCrop(grid, g.reach), 0);
  const certificate = certify(problem, outcome, { method: 'seeded', repairRounds, scratch: { stack, mark: lastMark ?? undefined } });
  lastMark = null;
  outcome.stats.certificate = certificate;
  outcome.stats.seconds = (performance.now() - t0) / 1000;
  report('done', 0, 1, null, true, null, outcome.stats.toppledSites);
  return outcome;
  }
}

/** Σ(u − seed)⁺, Σ(seed − u)⁺ and the largest excess; the seed's grid may be smaller than the final one (growth). */
function seedDistance(grid: ScaleGrid, seed: { s: OdometerArray; W: number; ox: number; oy: number; chips: number; opts: SeedOptions }, fold: Fold | null) {
  let seedDeficit = 0, seedExcess = 0, maxExcess = 0, rawOvershoot = 0;
  const sH = seed.s.length / seed.W;
  for (let y = 0; y < grid.H; y++)
    for (let x = 0; x < grid.W; x++) {
      // a folded level's seed covers the fundamental domain only: read each site's image
      const [fx, fy] = fold ? foldXY(fold, x - grid.ox, y - grid.oy) : [x - grid.ox, y - grid.oy];
      const sx = fx + seed.ox, sy = fy + seed.oy;
      const s0 = sx >= 0 && sx < seed.W && sy >= 0 && sy < sH ? seed.s[sy * seed.W + sx]! : 0;
      const d = grid.od[y * grid.W + x]! - s0;
      // the bulk only: next to the source the extra safety already scales with n
      if (s0 > 0 && Math.abs(x - grid.ox) + Math.abs(y - grid.oy) >= 64) rawOvershoot = Math.max(rawOvershoot, safetyAt(seed.opts, seed.chips, x - grid.ox, y - grid.oy) - d);
      if (d > 0) seedDeficit += d;
      else ((seedExcess -= d), (maxExcess = Math.max(maxExcess, -d)));
    }
  return { seedDeficit, seedExcess, maxExcess, rawOvershoot };
}

/**
 * Moves the crop that buildOutcome would cut (toppled sites plus the lattice's reach) to the start of
 * the grid's own arrays, row by row (each row moves to a lower index, so copying forwards is safe),
 * and returns views of it: the outcome then adopts them instead of copying (peak memory).
 */
function compactToCrop(grid: ScaleGrid, reach: number) {
  const t = toppledBox(grid, true);
  const whole = { nx: grid.W, ny: grid.H, nz: 1, ox: grid.ox, oy: grid.oy, oz: 0, heights: grid.h, odometer: grid.od };
  if (!t) return whole;
  const x0 = t.x0 - reach + grid.ox, x1 = t.x1 + reach + grid.ox, y0 = t.y0 - reach + grid.oy, y1 = t.y1 + reach + grid.oy;
  if (x0 < 0 || y0 < 0 || x1 >= grid.W || y1 >= grid.H) return whole;
  const w = x1 - x0 + 1, hh = y1 - y0 + 1;
  for (let y = 0; y < hh; y++) {
    const from = (y + y0) * grid.W + x0;
    grid.h.copyWithin(y * w, from, from + w);
    grid.od.copyWithin(y * w, from, from + w);
  }
  return { nx: w, ny: hh, nz: 1, ox: grid.ox - x0, oy: grid.oy - y0, oz: 0, heights: grid.h.subarray(0, w * hh), odometer: grid.od.subarray(0, w * hh) };
}

/** Sites of the grid that toppled (odometers are never negative). */
function countToppled(grid: ScaleGrid): number {
  let n = 0;
  for (let i = 0; i < grid.od.length; i++) if (grid.od[i]! > 0) n++;
  return n;
}

function toppledBox(grid: ScaleGrid): Box;
function toppledBox(grid: ScaleGrid, orNull: true): Box | null;
function toppledBox(grid: ScaleGrid, orNull = false): Box | null {
  const { W, H, ox, oy, od } = grid;
  let x0 = Infinity, x1 = -Infinity, y0 = Infinity, y1 = -Infinity;
  for (let y = 0; y < H; y++)
    for (let x = 0; x < W; x++)
      if (od[y * W + x]! > 0) {
        if (x < x0) x0 = x;
        if (x > x1) x1 = x;
        if (y < y0) y0 = y;
        if (y > y1) y1 = y;
      }
  if (x0 === Infinity) return orNull ? null : { x0: 0, x1: 0, y0: 0, y1: 0 };
  return { x0: x0 - ox, x1: x1 - ox, y0: y0 - oy, y1: y1 - oy };
}
