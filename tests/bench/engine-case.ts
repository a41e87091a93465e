/**
 * One benchmark case in its own process, so its peak resident memory is its own:
 * `tsx tests/bench/engine-case.ts N THREADS` prints one JSON line. N = 0 measures the baseline
 * (runtime, modules and a trivial run) that is subtracted before computing bytes per cell.
 */
import { resolveProblem, runStatsToJSON, stabilize } from '../../renderer/src/engine/index.js';

const [n, threads] = process.argv.slice(2).map(Number) as [number, number];
const problem = resolveProblem({ lattice: { preset: 'square' }, chips: n, sources: [], background: { kind: 'constant', height: 0 } });
const started = performance.now();
// the tiled multi-thread engine itself; the seeded fast path has its own table (tests/bench/scale.ts)
const outcome = await stabilize(problem, { threads, scaled: false });
const seconds = (performance.now() - started) / 1000;
const stats = runStatsToJSON(outcome.stats);
const cells = outcome.shape.reduce((a: number, b: number) => a * b, 1);
process.stdout.write(
  JSON.stringify({
    n,
    threads,
    seconds,
    cells,
    shape: outcome.shape,
    totalTopplings: stats.totalTopplings,
    toppledSites: stats.toppledSites,
    originOdometer: stats.originOdometer,
    // kilobytes on Linux (getrusage ru_maxrss), for the whole process including worker threads
    maxRssBytes: process.resourceUsage().maxRSS * 1024,
  }) + '\n',
);
process.exit(0);
