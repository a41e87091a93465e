/**
 * `npm run bench:scale`: the fast path (renderer/src/scale/) at scale, as the table: n,
 * lattice, threads, wall seconds, cell updates per second, peak resident memory, bytes per cell, the
 * two-thread over one-thread speed-up, the ratio against the plain C sweep (tests/bench/naive.c)
 * where it ran in this same invocation, the other lattices against the square lattice at the same n,
 * and the growth exponent of wall time fitted by least squares (log-log) over the square-lattice sizes.
 * Ratios only; no absolute targets.
 *
 *   --max-n N          largest square-lattice n (default 1e6; sizes are 10^5, 10^6, … up to N).
 *                      10^8 and 10^9 take long: pass them by hand, CI never does.
 *   --c-at N           also run the C sweep at this n (default 1e6; repeatable; --no-c to skip)
 *   --lattices-at N    run the square lattice unfolded (whole plane), triangular, honeycomb, manhattan
 *                      and a random background at this n, on two
 *                      threads (default 1e6; the issue compares them at 1e7: pass --lattices-at 1e7)
 *   --one-thread-to N  square sizes up to N also run on one thread for the speed-up (default: max-n)
 *   --case JSON        internal: run one case in this process and print one JSON line
 *
 * Every case runs in its own child process so its peak RSS (getrusage maxRSS) is its own; bytes per
 * cell subtract a baseline child (n = 0) and divide by the cells of the final result arrays.
 */
import { execFileSync, spawnSync } from 'node:child_process';
import { mkdirSync } from 'node:fs';
import { cpus, loadavg, totalmem } from 'node:os';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { parseArgs } from 'node:util';
import { groupThousands, parseCount, powerOfTen } from '../../renderer/src/cli/numbers.js';
import { resolveProblem, runStatsToJSON } from '../../renderer/src/engine/index.js';
import { stabilizeScaled, type LevelInfo } from '../../renderer/src/scale/scaled.js';
import { BYTES_PER_CELL } from '../../shared/estimate.js';

const here = dirname(fileURLToPath(import.meta.url));
const self = fileURLToPath(import.meta.url);

interface CaseSpec {
  n: number;
  lattice: string;
  background: 'zero' | 'random';
  threads: number;
  /** relax the whole plane even where mirror folding applies (the square lattice on background 0) */
  whole?: boolean;
}
interface CaseResult extends CaseSpec {
  seconds: number;
  cells: number;
  events: number;
  totalTopplings: string;
  toppledSites: number;
  originOdometer: string;
  certified: boolean;
  repairRounds: number;
  maxRssBytes: number;
}

async function runCaseHere(c: CaseSpec): Promise<CaseResult> {
  const background = c.background === 'random' ? { kind: 'random' as const, seed: 20261202, weights: [1, 1, 1] } : { kind: 'constant' as const, height: 0 };
  const problem = resolveProblem({ lattice: { preset: c.lattice }, chips: c.n, sources: [], background });
  const levels: LevelInfo[] = [];
  const t0 = performance.now();
  // the farm's site budget (memory over BYTES_PER_CELL, renderer/src/farm/farm-worker.ts), not the
  // engine's default 2^26, which 3·10^8 grains exceed
  const maxSites = Math.floor(totalmem() / BYTES_PER_CELL);
  const outcome = c.n > 0 ? await stabilizeScaled(problem, { threads: c.threads, maxSites, ...(c.whole ? { symmetry: false } : {}), onLevel: (l) => levels.push(l) }) : null;
  const seconds = (performance.now() - t0) / 1000;
  const stats = outcome ? runStatsToJSON(outcome.stats) : null;
  return {
    ...c,
    seconds,
    cells: outcome ? outcome.shape.reduce((a, b) => a * b, 1) : 1,
    events: levels.reduce((a, l) => a + l.events, 0),
    totalTopplings: stats?.totalTopplings ?? '0',
    toppledSites: stats?.toppledSites ?? 0,
    originOdometer: stats?.originOdometer ?? '0',
    certified: stats?.certificate?.passed ?? c.n === 0,
    repairRounds: stats?.certificate?.repairRounds ?? 0,
    // kilobytes on Linux (getrusage ru_maxrss)
    maxRssBytes: process.resourceUsage().maxRSS * 1024,
  };
}

function runCase(c: CaseSpec): CaseResult {
  process.stdout.write(`  running ${c.lattice}${c.background === 'random' ? ' (random background)' : ''}${c.whole ? ' (whole plane)' : ''}, n = ${groupThousands(c.n)}, ${c.threads} thread(s) … `);
  const r = spawnSync(process.execPath, ['--max-old-space-size=8192', '--import', 'tsx', self, '--case', JSON.stringify(c)], { encoding: 'utf8', maxBuffer: 1 << 20 });
  if (r.status !== 0) throw new Error(`case ${JSON.stringify(c)} failed: ${r.stderr.trim().split('\n').pop()}`);
  const result = JSON.parse(r.stdout.trim().split('\n').pop()!) as CaseResult;
  // the whole row's raw numbers at once: a long bench stopped midway still tells what it measured
  process.stdout.write(`${result.seconds.toFixed(2)} s, peak RSS ${(result.maxRssBytes / 2 ** 20).toFixed(0)} MiB, ${groupThousands(result.cells)} result cells, ${result.repairRounds} repair rounds\n`);
  return result;
}

/** Least-squares slope of log(seconds) against log(n). */
function growthExponent(points: { n: number; seconds: number }[]): number | null {
  if (points.length < 2) return null;
  const xs = points.map((p) => Math.log(p.n)), ys = points.map((p) => Math.log(p.seconds));
  const mx = xs.reduce((a, b) => a + b, 0) / xs.length, my = ys.reduce((a, b) => a + b, 0) / ys.length;
  let num = 0, den = 0;
  xs.forEach((x, i) => ((num += (x - mx) * (ys[i]! - my)), (den += (x - mx) ** 2)));
  return num / den;
}

async function main(): Promise<void> {
  const { values } = parseArgs({
    options: {
      'max-n': { type: 'string' },
      'c-at': { type: 'string', multiple: true },
      'no-c': { type: 'boolean' },
      'lattices-at': { type: 'string' },
      'one-thread-to': { type: 'string' },
      case: { type: 'string' },
    },
  });
  if (values.case) {
    process.stdout.write(JSON.stringify(await runCaseHere(JSON.parse(values.case) as CaseSpec)) + '\n');
    process.exit(0);
  }
  const maxN = parseCount('--max-n', values['max-n'] ?? '1e6', { min: 1 });
  const cAt = values['no-c'] ? [] : (values['c-at'] ?? ['1e6']).map((v) => parseCount('--c-at', v, { min: 1 }));
  const latticesAt = parseCount('--lattices-at', values['lattices-at'] ?? '1e6', { min: 1 });
  const oneThreadTo = parseCount('--one-thread-to', values['one-thread-to'] ?? String(maxN), { min: 1 });
  const ns = [1e5, 1e6, 1e7, 1e8, 1e9].filter((n) => n <= maxN);
  if (!ns.includes(maxN)) ns.push(maxN);

  const cpu = cpus();
  console.log(`machine: ${cpu[0]?.model ?? 'unknown cpu'}, ${cpu.length} cores, ${(totalmem() / 2 ** 30).toFixed(1)} GiB, node ${process.version}`);
  console.log(`load average at start: ${loadavg().map((v) => v.toFixed(2)).join(' ')}`);
  console.log('fast path: coarse-to-fine odometer seeding, legal relaxation (1 thread: one stack; 2: strips of rows), peeling repairs and certificate\n');
  const baseline = runCase({ n: 0, lattice: 'square', background: 'zero', threads: 1 });

  let naive: string | null = null;
  if (cAt.length) {
    mkdirSync(join(here, '.out'), { recursive: true });
    naive = join(here, '.out', 'naive');
    execFileSync('gcc', ['-O2', '-o', naive, join(here, 'naive.c'), '-lm'], { stdio: 'inherit' });
  }
  const results: CaseResult[] = [];
  for (const n of ns) {
    if (n <= oneThreadTo) results.push(runCase({ n, lattice: 'square', background: 'zero', threads: 1 }));
    results.push(runCase({ n, lattice: 'square', background: 'zero', threads: 2 }));
  }
  if (!results.some((r) => r.n === latticesAt && r.lattice === 'square' && r.background === 'zero' && r.threads === 2))
    results.push(runCase({ n: latticesAt, lattice: 'square', background: 'zero', threads: 2 }));
  results.push(runCase({ n: latticesAt, lattice: 'square', background: 'zero', threads: 2, whole: true }));
  for (const lattice of ['triangular', 'honeycomb', 'manhattan']) results.push(runCase({ n: latticesAt, lattice, background: 'zero', threads: 2 }));
  results.push(runCase({ n: latticesAt, lattice: 'square', background: 'random', threads: 2 }));

  let failures = 0;
  const cSeconds = new Map<number, number>();
  for (const n of cAt) {
    process.stdout.write(`  running the plain C sweep at n = ${groupThousands(n)} … `);
    const c = JSON.parse(execFileSync(naive!, [String(n)], { encoding: 'utf8', maxBuffer: 1 << 20 })) as { totalTopplings: string; originOdometer: string; seconds: number };
    process.stdout.write(`${c.seconds.toFixed(2)} s\n`);
    const ours = results.find((r) => r.n === n && r.lattice === 'square' && r.background === 'zero' && !r.whole && r.threads === 2) ?? runCase({ n, lattice: 'square', background: 'zero', threads: 2 });
    if (!results.includes(ours)) results.push(ours);
    if (c.totalTopplings !== ours.totalTopplings || c.originOdometer !== ours.originOdometer) {
      console.error(`n=${n}: C sweep gave ${c.totalTopplings} topplings (origin ${c.originOdometer}), fast path ${ours.totalTopplings} (origin ${ours.originOdometer})`);
      failures++;
    }
    cSeconds.set(n, c.seconds);
  }
  for (const r of results) {
    const other = results.find((o) => o !== r && o.n === r.n && o.lattice === r.lattice && o.background === r.background);
    if (other && (other.totalTopplings !== r.totalTopplings || other.originOdometer !== r.originOdometer))
      (failures++, console.error(`${r.lattice} n=${r.n}: ${r.threads} thread(s) gave ${r.totalTopplings} topplings, ${other.threads} gave ${other.totalTopplings}`));
  }
  for (const r of results) if (!r.certified) (failures++, console.error(`${r.lattice} n=${r.n}: certificate did not pass`));

  const isSquare = (r: CaseResult) => r.lattice === 'square' && r.background === 'zero' && !r.whole;
  const fit = (threads: number) => growthExponent(results.filter((r) => isSquare(r) && r.threads === threads).sort((a, b) => a.n - b.n));
  const fitFrom = (threads: number, from: number) => growthExponent(results.filter((r) => isSquare(r) && r.threads === threads && r.n >= from));
  const header = ['n', 'lattice', 'threads', 'wall s', 'cell updates/s', 'events/s', 'peak RSS MiB', 'bytes/cell', '2T speed-up', 'vs square', 'C s', 'C / ours', 'repairs'];
  const rows = results.map((r) => {
    const c = isSquare(r) ? cSeconds.get(r.n) : undefined;
    const one = results.find((o) => o.n === r.n && o.lattice === r.lattice && o.background === r.background && !o.whole === !r.whole && o.threads === 1);
    const square = results.find((o) => o.n === r.n && isSquare(o) && o.threads === r.threads);
    return [
      `${groupThousands(r.n)} (${powerOfTen(r.n)})`,
      r.lattice + (r.background === 'random' ? ' + random' : '') + (r.whole ? ', whole plane' : ''),
      String(r.threads),
      r.seconds.toFixed(2),
      groupThousands(Math.round(Number(r.totalTopplings) / r.seconds)),
      groupThousands(Math.round(r.events / r.seconds)),
      (r.maxRssBytes / 2 ** 20).toFixed(0),
      ((r.maxRssBytes - baseline.maxRssBytes) / r.cells).toFixed(1),
      r.threads === 2 && one ? `${(one.seconds / r.seconds).toFixed(2)}×` : '',
      !isSquare(r) && square ? `${(r.seconds / square.seconds).toFixed(2)}×` : '',
      c === undefined ? '' : c.toFixed(1),
      c === undefined ? '' : `${(c / r.seconds).toFixed(1)}×`,
      String(r.repairRounds),
    ];
  });
  const widths = header.map((h, k) => Math.max(h.length, ...rows.map((r) => r[k]!.length)));
  const line = (cells: string[]) => cells.map((c, k) => (k < 2 ? c.padEnd(widths[k]!) : c.padStart(widths[k]!))).join('  ');
  console.log('\n' + line(header));
  console.log(widths.map((w) => '-'.repeat(w)).join('  '));
  for (const r of rows) console.log(line(r));
  const fmt = (e: number | null) => (e === null ? 'needs two sizes' : e.toFixed(2));
  console.log(
    `\ngrowth exponent of wall time, least squares on log-log (square, background 0): 2 threads ${fmt(fit(2))} over all sizes run, ${fmt(fitFrom(2, 1e6))} over n ≥ 10^6; ` +
      `1 thread ${fmt(fit(1))} over all sizes run, ${fmt(fitFrom(1, 1e6))} over n ≥ 10^6`,
  );
  console.log(`load average at the end: ${loadavg().map((v) => v.toFixed(2)).join(' ')}`);
  console.log('cell updates/s = topplings of the result / wall s; events/s = toppling events the relaxation actually performed / wall s');
  console.log('bytes/cell = (peak RSS − baseline RSS) / cells of the result arrays; C / ours = C sweep wall time over ours in the same row (one and two threads, same n)');
  console.log('2T speed-up = 1-thread wall time over 2-thread wall time at the same n; vs square = wall time over the square lattice\'s at the same n and threads');
  if (failures) {
    console.error(`${failures} check(s) failed`);
    process.exit(1);
  }
}

await main();
