import type { Outcome } from './outcome.js';
import type { Problem } from './problem.js';
import { checkSnapshot, SnapshotError, type Snapshot } from './snapshot.js';
import { stabilizeTiled, type CheckpointOptions, type Progress } from './tiled.js';
import { scaledPathApplies, stabilizeScaled } from '../scale/scaled.js';
import { linePathApplies, stabilizeLine } from './line-path.js';

export type { CheckpointOptions, Progress } from './tiled.js';

export interface StabilizeOptions {
  /** threads to use, main thread included (default: min(2, cores)) */
  threads?: number;
  onProgress?: (p: Progress) => void;
  signal?: AbortSignal;
  /** the working box may hold at most this many sites (default DEFAULT_MAX_SITES) */
  maxSites?: number;
  /** grains moved from a source into its cell per round (default RESERVE_BATCH; smaller only for tests) */
  reserveBatch?: number;
  /**
   * use a fast path where one applies (default true): the scaled one (renderer/src/scale/) on planar
   * lattices with n >= SCALED_MIN_CHIPS, the closed-form one (line-path.ts) on every line run; false
   * forces the plain tiled engine (comparisons). The result is the same bit for bit, only faster.
   */
  scaled?: boolean;
  /** snapshots of whichever path runs, every `everySeconds` (`save` is called synchronously) */
  checkpoint?: CheckpointOptions;
  /**
   * continue from a snapshot of this problem (either kind; its arrays are taken over). One of another
   * engine version or specification, or one the state checks refuse, throws SnapshotError before any work.
   */
  resume?: Snapshot;
}

/** Below this n the tiled engine is as fast as seeding (measured: both well under a second at 2^16). */
export const SCALED_MIN_CHIPS = 2 ** 16;

/** Whether stabilize takes the seeded fast path for this problem (before any certificate fallback). */
export function takesFastPath(problem: Problem, options: Pick<StabilizeOptions, 'scaled'> = {}): boolean {
  return options.scaled !== false && scaledPathApplies(problem) && problem.sources[0]!.chips >= SCALED_MIN_CHIPS;
}

/** Whether stabilize takes the line's closed-form path for this problem (before any certificate fallback). */
export function takesLinePath(problem: Problem, options: Pick<StabilizeOptions, 'scaled'> = {}): boolean {
  return options.scaled !== false && linePathApplies(problem);
}

/**
 * The engine's three paths. `stabilizeWith` takes them as a parameter so a test can hand it a path
 * that returns a wrong result with its honest (failing) certificate and watch the fallback work;
 * `stabilize` always uses these.
 */
export interface EnginePaths {
  line: typeof stabilizeLine;
  scaled: typeof stabilizeScaled;
  tiled: typeof stabilizeTiled;
}
const PATHS: EnginePaths = { line: stabilizeLine, scaled: stabilizeScaled, tiled: stabilizeTiled };

/**
 * The engine's one entry point: the line's closed-form path on line runs, the seeded fast path where
 * it applies, else (or when a fast path's certificate fails, which must never be published) the plain
 * tiled engine. Checkpoints and resume work on all three: a seeded snapshot resumes the seeded path, a
 * tiled one the tiled engine, or on a line run the line path (both write and read the tiled kind).
 * @throws NotStabilizedError, AbortError (the signal's reason), SnapshotError (see `resume`).
 */
export function stabilize(problem: Problem, options: StabilizeOptions = {}): Promise<Outcome> {
  return stabilizeWith(PATHS, problem, options);
}

/** `stabilize` over the given paths (tests of the certificate fallback). */
export async function stabilizeWith(paths: EnginePaths, problem: Problem, options: StabilizeOptions = {}): Promise<Outcome> {
  const { resume, checkpoint, ...rest } = options;
  if (resume) checkSnapshot(problem, resume);
  if (resume?.kind !== 'seeded' && takesLinePath(problem, options)) {
    const out = await paths.line(problem, { onProgress: rest.onProgress, signal: rest.signal, maxSites: rest.maxSites, checkpoint, resume });
    if (out?.stats.certificate?.passed) return out;
    // never publish an uncertified result: the plain engine starts over (the line path took the
    // snapshot's arrays over), with checkpoints of its own
    return paths.tiled(problem, { ...rest, checkpoint });
  }
  const fast = takesFastPath(problem, options);
  if (resume?.kind === 'seeded' && !fast) throw new SnapshotError('the checkpoint is of the seeded fast path, which this run does not take');
  if (fast && resume?.kind !== 'tiled') {
    const out = await paths.scaled(problem, { onProgress: rest.onProgress, signal: rest.signal, maxSites: rest.maxSites, threads: rest.threads, checkpoint, resume });
    if (out.stats.certificate?.passed) return out;
    // never publish an uncertified result: fall back to plain legal toppling (with checkpoints of its own)
  }
  return paths.tiled(problem, { ...rest, checkpoint, resume: resume?.kind === 'tiled' ? resume : undefined });
}
