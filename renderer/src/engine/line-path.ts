import { certify } from '../scale/certificate.js';
import { Domain, initialNeed } from './domain.js';
import { NotStabilizedError } from './errors.js';
import { DEFAULT_MAX_SITES } from './limits.js';
import { buildOutcome, type Outcome } from './outcome.js';
import type { Problem } from './problem.js';
import { snapshotBase, type TiledSnapshot } from './snapshot.js';
import type { CheckpointOptions, Progress } from './tiled.js';
import { checkTiledSnapshot } from './tiled-resume.js';
import { ZeroFinder } from './zero-finder.js';

/**
 * The exact fast path of the line Z (two neighbours, threshold 2), grain by grain in closed form.
 *
 * On a stable line (heights 0 and 1) one added grain at x does this: if h(x) = 0 it becomes 1;
 * otherwise, with a < x < b the nearest zeros on either side, every site of (a, b) topples, and the
 * result is 1 on all of [a, b] except a single 0 at a + b − x. (One-dimensional chip-firing, common
 * practice; the tests check it grain count by grain count against the plain engine.) Grains may be
 * added one at a time in any order (abelian property), and a background height h ≥ 2 is a 1 with
 * h − 1 grains still to add, so n grains cost n nearest-zero look-ups, O(log L) each in a Fenwick tree
 * (zero-finder.ts), instead of the ~n³/24 topplings the plain engine spends.
 *
 * The odometer then follows from the final heights alone: u = 0 at the left end of the box, and the
 * toppling balance Δu(y) = h_final(y) − h_start(y) − grains added at y fixes u(y+1) from u(y) and
 * u(y−1); it must come back to 0 at the right end. The result gets the certificate every run gets
 * (stable, grains conserved, balance, minimal by peeling); stabilize falls back to the plain engine
 * if it fails.
 *
 * The box is the plain engine's box (domain.ts: same first guess, same tiles, same growth plan) and
 * grows when, and only when, the plain engine's would: an avalanche reaches a site of its outer
 * guard tiles. Every avalanche topples sites the plain engine topples too (legal topplings never
 * exceed the final odometer), so both refuse the same runs with the same NotStabilizedError.
 */

export interface LineOptions {
  onProgress?: (p: Progress) => void;
  signal?: AbortSignal;
  /** the working box may hold at most this many sites (default DEFAULT_MAX_SITES) */
  maxSites?: number;
  /**
   * Snapshots of the tiled kind (the box, its heights, the odometer so far from the balance, and the
   * grains still to add as reserves): either path resumes them. At about 3 million grains a second (10^7 in 3 s, `npm run bench:line`) a
   * run within the default site budget ends before WORKER_CHECKPOINT_SECONDS (60 s) is due; larger
   * budgets on the farm make longer line runs, so they are honoured all the same.
   */
  checkpoint?: CheckpointOptions;
  /** a tiled snapshot of either path (plain engine or this one); its arrays are taken over */
  resume?: TiledSnapshot;
}

/** Grains added between looks at the clock (abort, progress, checkpoint): a few milliseconds of work. */
const GRAINS_PER_LOOK = 4096;

/** Largest odometer value the solve trusts: doubling it stays an exact integer in a double. */
const ODOMETER_LIMIT = 2 ** 52;

/** Whether the problem's lattice is the line: one class, offsets +1 and −1 only. */
export function linePathApplies(p: Problem): boolean {
  const g = p.lattice;
  if (g.dim !== 1 || g.classes.length !== 1) return false;
  const offs = g.classes[0]!;
  const has = (dx: number) => offs.some((o) => o[0] === dx && o[1] === 0 && o[2] === 0);
  // heights >= 2 may only sit on a finite upload (recurring ones are refused as explosive anyway),
  // so growing the box never meets an unstable background site
  return offs.length === 2 && has(1) && has(-1) && (p.background.recurring ?? []).every((h) => h <= 1);
}

/**
 * Stabilizes a line problem exactly (see above). Returns the outcome with its certificate; the caller
 * must not publish it unless `stats.certificate.passed` (stabilize falls back to the plain engine).
 * Returns null when the odometer solve does not close (never expected; the caller falls back too).
 * @throws NotStabilizedError when the box would exceed maxSites; the signal's reason when it fires;
 *   SnapshotError when `resume` does not fit the problem.
 */
export async function stabilizeLine(problem: Problem, options: LineOptions = {}): Promise<Outcome | null> {
  const t0 = performance.now();
  if (options.signal?.aborted) throw options.signal.reason ?? new DOMException('stabilization aborted', 'AbortError');
  const maxSites = options.maxSites ?? DEFAULT_MAX_SITES;
  const resume = options.resume;
  if (resume) checkTiledSnapshot(problem, resume);
  const domain = resume ? Domain.restore(problem, resume.tiles, resume.origin, resume.h, resume.od) : new Domain(problem, initialNeed(problem, maxSites));
  if (domain.sites > maxSites) throw new NotStabilizedError(maxSites);
  const bg = problem.background;
  const TX = domain.geo.TX;

  // grains still to add, one entry per site (lattice x): the sources' grains, and h − 1 of every height
  // h >= 2 (an upload's tall sites; in a resumed box also sites a plain-engine snapshot left unstable)
  const at: number[] = [];
  const left: number[] = [];
  /** toppled range of the avalanches started at each site, lattice x (progress only) */
  const lo: number[] = [];
  const hi: number[] = [];
  const slot = new Map<number, number>();
  const owe = (x: number, grains: number) => {
    if (grains <= 0) return;
    let k = slot.get(x);
    if (k === undefined) (slot.set(x, (k = at.length)), at.push(x), left.push(0), lo.push(Infinity), hi.push(-Infinity));
    left[k] = left[k]! + grains;
  };
  if (resume) {
    const r = resume.reserves;
    for (let k = 0; k < r.length; k += 4) owe(r[k]!, r[k + 3]!);
  } else for (const s of problem.sources) owe(s.at[0], s.chips);
  {
    const h = domain.h;
    for (let i = 0; i < h.length; i++) if (h[i]! >= 2) (owe(i - domain.ox, h[i]! - 1), (h[i] = 1));
  }
  // a resumed box has toppled already: its toppled range counts for progress
  let priorLo = Infinity, priorHi = -Infinity;
  if (resume) for (let i = 0; i < domain.od.length; i++) if (domain.od[i]! > 0) ((priorLo = Math.min(priorLo, i - domain.ox)), (priorHi = Math.max(priorHi, i - domain.ox)));

  let zeros = new ZeroFinder(domain.h);
  let fed = resume?.injected ?? 0;
  const total = fed + left.reduce((a, b) => a + b, 0);

  const grow = () => {
    const add = domain.growthPlan(maxSites);
    if (!add) throw new NotStabilizedError(maxSites);
    domain.grow(add);
    zeros = new ZeroFinder(domain.h);
    report('grow', true);
  };

  // the odometer from the balance, u = 0 on the box's two leftmost sites (a guard tile never topples);
  // false if it does not close on the right, goes negative or leaves the exact range
  const solveOdometer = (): boolean => {
    const { h, od } = domain;
    const n = h.length;
    const net = new Map<number, number>(); // grains added minus grains still owed, per array index
    for (const s of problem.sources) if (s.chips > 0) net.set(s.at[0] + domain.ox, (net.get(s.at[0] + domain.ox) ?? 0) + s.chips);
    for (let k = 0; k < at.length; k++) if (left[k]! > 0) net.set(at[k]! + domain.ox, (net.get(at[k]! + domain.ox) ?? 0) - left[k]!);
    const uniform = bg.uniform;
    od[0] = 0;
    od[1] = 0;
    for (let y = 1; y < n - 1; y++) {
      const start = uniform ?? bg.heightAt(y - domain.ox, 0, 0);
      const next = 2 * od[y]! - od[y - 1]! + (h[y]! - start - (net.get(y) ?? 0));
      if (!(next >= 0 && next <= ODOMETER_LIMIT)) return false;
      od[y + 1] = next;
    }
    // the balance of the two end sites, which the recurrence does not cover (u is 0 beyond the box)
    const endsBalance = (y: number) => h[y]! - (uniform ?? bg.heightAt(y - domain.ox, 0, 0)) - (net.get(y) ?? 0) === 0;
    return od[n - 1] === 0 && od[n - 2] === 0 && endsBalance(0) && endsBalance(n - 1);
  };

  let lastReport = 0;
  let best = 0;
  const report = (stage: string, force = false) => {
    if (!options.onProgress) return;
    const now = performance.now();
    if (!force && now - lastReport < 500) return;
    lastReport = now;
    // the toppled set is the union of the avalanches' ranges (each holds its start site)
    const ranges: [number, number][] = [];
    for (let k = 0; k < at.length; k++) if (lo[k]! <= hi[k]!) ranges.push([lo[k]!, hi[k]!]);
    if (priorLo <= priorHi) ranges.push([priorLo, priorHi]);
    ranges.sort((a, b) => a[0] - b[0]);
    let toppled = 0, end = -Infinity;
    for (const [a, b] of ranges) {
      if (b <= end) continue;
      toppled += b - Math.max(a, end + 1) + 1;
      end = b;
    }
    const fraction = stage === 'done' ? 1 : total > 0 ? fed / total : 0;
    best = Math.max(best, Math.min(stage === 'done' ? 1 : 0.99, fraction));
    options.onProgress({ stage, fraction: best, toppledSites: toppled });
  };

  const base = options.checkpoint ? snapshotBase(problem) : null;
  let lastYield = performance.now();
  let lastSave = lastYield;

  for (let k = 0; k < at.length; k++) {
    while (left[k]! > 0) {
      if (performance.now() - lastYield > 100) {
        // let timers, progress listeners and abort requests run on this event loop
        await new Promise<void>((resolve) => setImmediate(resolve));
        lastYield = performance.now();
        if (options.signal?.aborted) throw options.signal.reason ?? new DOMException('stabilization aborted', 'AbortError');
        if (options.checkpoint && lastYield - lastSave > options.checkpoint.everySeconds * 1000) {
          if (!solveOdometer()) return null;
          options.checkpoint.save(snapshot());
          lastSave = performance.now();
        }
        report('relax');
      }
      const batch = Math.min(left[k]!, GRAINS_PER_LOOK);
      for (let g = 0; g < batch; g++) {
        let x = at[k]! + domain.ox;
        const h = domain.h;
        if (h[x] === 0) {
          h[x] = 1;
          zeros.add(x, -1);
        } else {
          let a: number, b: number;
          for (;;) {
            const c = zeros.before(x);
            a = c > 0 ? zeros.kth(c - 1) : -1;
            b = c < zeros.zeros ? zeros.kth(c) : -1;
            // the avalanche topples (a, b): it must stay off the guard tiles, as in the plain engine
            if (a >= 0 && b >= 0 && a + 1 >= TX && b - 1 < domain.geo.nx - TX) break;
            grow();
            x = at[k]! + domain.ox;
          }
          const hh = domain.h;
          const m = a + b - x;
          hh[a] = 1;
          hh[b] = 1;
          zeros.add(a, -1);
          zeros.add(b, -1);
          hh[m] = 0;
          zeros.add(m, 1);
          if (a + 1 - domain.ox < lo[k]!) lo[k] = a + 1 - domain.ox;
          if (b - 1 - domain.ox > hi[k]!) hi[k] = b - 1 - domain.ox;
        }
      }
      left[k] = left[k]! - batch;
      fed += batch;
    }
  }

  function snapshot(): TiledSnapshot {
    const owed = at.map((x, k) => [x, 0, 0, left[k]!]).filter((r) => r[3]! > 0);
    return {
      ...base!,
      kind: 'tiled',
      tiles: [domain.geo.tnx, domain.geo.tny, domain.geo.tnz],
      origin: [domain.ox, domain.oy, domain.oz],
      h: domain.h,
      od: domain.od,
      reserves: new Float64Array(owed.flat()),
      injected: fed,
      roundFed: 0,
    };
  }

  if (!solveOdometer()) return null;
  report('done', true);
  const outcome = buildOutcome(problem, { nx: domain.geo.nx, ny: 1, nz: 1, ox: domain.ox, oy: 0, oz: 0, heights: domain.h, odometer: domain.od }, (performance.now() - t0) / 1000);
  // the same certificate as every run, from the final arrays alone: a wrong closed form cannot pass it
  outcome.stats.certificate = certify(problem, outcome, { method: 'closed-form' });
  return outcome;
}
