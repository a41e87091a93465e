import type { Outcome } from './outcome.js';
import type { Problem } from './problem.js';
import { checkSnapshot, SnapshotError, type Snapshot } from './snapshot.js';
import { stabilizeTiled, type CheckpointOptions, type Progress } from './tiled.js';
import { scaledPathApplies, stabilizeScaled } from '../scale/scaled.js';

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
   * use the scaled fast path (renderer/src/scale/) where it applies and n >= SCALED_MIN_CHIPS
   * (default true); the result is the same bit for bit, only faster
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

/**
 * The engine's one entry point: the seeded fast path where it applies, else (or when its certificate
 * fails, which must never be published) the plain tiled engine. Checkpoints and resume work on both:
 * a fast-path snapshot resumes the fast path, a tiled one the tiled engine (also when it was written
 * by the fallback of a fast-path run).
 * @throws NotStabilizedError, AbortError (the signal's reason), SnapshotError (see `resume`).
 */
export async function stabilize(problem: Problem, options: StabilizeOptions = {}): Promise<Outcome> {
  const { resume, checkpoint, ...rest } = options;
  if (resume) checkSnapshot(problem, resume);
  const fast = takesFastPath(problem, options);
  if (resume?.kind === 'seeded' && !fast) throw new SnapshotError('the checkpoint is of the seeded fast path, which this run does not take');
  if (fast && resume?.kind !== 'tiled') {
    const out = await stabilizeScaled(problem, { onProgress: rest.onProgress, signal: rest.signal, maxSites: rest.maxSites, threads: rest.threads, checkpoint, resume });
    if (out.stats.certificate?.passed) return out;
    // never publish an uncertified result: fall back to plain legal toppling (with checkpoints of its own)
  }
  return stabilizeTiled(problem, { ...rest, checkpoint, resume: resume?.kind === 'tiled' ? resume : undefined });
}
