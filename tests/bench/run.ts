/**
 * `npm run bench`: speed and memory of the exact engine on the square lattice, background 0,
 * measured as ratios inside one run (never as timed unit tests).
 *
 *   --max-n N       largest n to run (default 1e6; cases are 10^5, 10^6, … up to N)
 *   --with-c-at N   also run the plain C sweep at this n (default: 10^5 only; repeatable)
 *   --no-c          skip the C comparator
 *   --scale-max-n N largest n of the scaled fast path's table (tests/bench/scale.ts; default 1e6)
 *   --scale-c-at N  C sweep for that table (default 1e6; --no-c skips it as well)
 *   --lattices-at N other lattices and a random background in that table (default 1e6)
 *
 * Every engine case runs in a child process so peak RSS (getrusage maxRSS) is per case. Bytes per
 * cell subtract the baseline child (n = 0) and divide by the cells of the result array.
 */
import { execFileSync, spawnSync } from 'node:child_process';
import { mkdirSync } from 'node:fs';
import { cpus, totalmem } from 'node:os';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { parseArgs } from 'node:util';
import { groupThousands, parseCount, powerOfTen } from '../../renderer/src/cli/numbers.js';

const here = dirname(fileURLToPath(import.meta.url));
const { values } = parseArgs({
  options: {
    'max-n': { type: 'string' },
    'with-c-at': { type: 'string', multiple: true },
    'no-c': { type: 'boolean' },
    'scale-max-n': { type: 'string' },
    'scale-c-at': { type: 'string', multiple: true },
    'lattices-at': { type: 'string' },
  },
});
const maxN = parseCount('--max-n', values['max-n'] ?? '1e6', { min: 1 });
const cAt = new Set((values['with-c-at'] ?? ['1e5']).map((v) => parseCount('--with-c-at', v, { min: 1 })));
const ns = [1e5, 1e6, 1e7, 1e8].filter((n) => n <= maxN);
for (const n of cAt) if (!ns.includes(n) && !values['no-c']) ns.push(n);
ns.sort((a, b) => a - b);

interface CaseResult {
  n: number;
  threads: number;
  seconds: number;
  cells: number;
  totalTopplings: string;
  toppledSites: number;
  originOdometer: string;
  maxRssBytes: number;
}

function runCase(n: number, threads: number): CaseResult {
  process.stdout.write(`  running n = ${groupThousands(n)}, ${threads} thread(s) … `);
  const r = spawnSync(process.execPath, ['--import', 'tsx', join(here, 'engine-case.ts'), String(n), String(threads)], {
    encoding: 'utf8',
    maxBuffer: 1 << 20,
  });
  if (r.status !== 0) throw new Error(`engine case n=${n} threads=${threads} failed: ${r.stderr.trim().split('\n').pop()}`);
  const result = JSON.parse(r.stdout.trim().split('\n').pop()!) as CaseResult;
  process.stdout.write(`${result.seconds.toFixed(2)} s\n`);
  return result;
}

function buildNaive(): string {
  const out = join(here, '.out');
  mkdirSync(out, { recursive: true });
  const binary = join(out, 'naive');
  execFileSync('gcc', ['-O2', '-o', binary, join(here, 'naive.c'), '-lm'], { stdio: 'inherit' });
  return binary;
}

const cpu = cpus();
console.log(`machine: ${cpu[0]?.model ?? 'unknown cpu'}, ${cpu.length} cores, ${(totalmem() / 2 ** 30).toFixed(1)} GiB, node ${process.version}`);
console.log(`square lattice, background 0, n grains at the origin\n`);

const baseline = runCase(0, 1);
console.log(`baseline process (n = 0): peak RSS ${(baseline.maxRssBytes / 2 ** 20).toFixed(1)} MiB (subtracted for bytes/cell)\n`);

const naive = values['no-c'] ? null : buildNaive();
const header = ['n', 'lattice', 'threads', 'wall s', 'topplings/s', 'peak RSS MiB', 'bytes/cell', '2T speed-up', 'C s', 'ours/C'];
const rows: string[][] = [];
let failures = 0;
for (const n of ns) {
  const one = runCase(n, 1);
  const two = runCase(n, 2);
  if (one.totalTopplings !== two.totalTopplings) {
    console.error(`n=${n}: one thread gave ${one.totalTopplings} topplings, two threads ${two.totalTopplings}`);
    failures++;
  }
  let cSeconds: number | null = null;
  if (naive && cAt.has(n)) {
    const c = JSON.parse(execFileSync(naive, [String(n)], { encoding: 'utf8' })) as { totalTopplings: string; seconds: number; originOdometer: string };
    if (c.totalTopplings !== one.totalTopplings || c.originOdometer !== one.originOdometer) {
      console.error(`n=${n}: C loop gave ${c.totalTopplings} topplings (origin ${c.originOdometer}), ours ${one.totalTopplings} (origin ${one.originOdometer})`);
      failures++;
    }
    cSeconds = c.seconds;
  }
  const speedup = one.seconds / two.seconds;
  for (const r of [one, two]) {
    rows.push([
      `${groupThousands(n)} (${powerOfTen(n)})`,
      'square',
      String(r.threads),
      r.seconds.toFixed(3),
      groupThousands(Math.round(Number(r.totalTopplings) / r.seconds)),
      (r.maxRssBytes / 2 ** 20).toFixed(1),
      ((r.maxRssBytes - baseline.maxRssBytes) / r.cells).toFixed(1),
      r.threads === 2 ? `${speedup.toFixed(2)}×` : '',
      cSeconds === null ? '' : cSeconds.toFixed(3),
      cSeconds === null ? '' : (r.seconds / cSeconds).toFixed(3),
    ]);
  }
  console.log(`n=${groupThousands(n)}: ${groupThousands(one.totalTopplings)} topplings, ${groupThousands(one.toppledSites)} toppled sites, array ${groupThousands(one.cells)} cells` + (cSeconds === null ? '' : ', C loop agrees'));
}
const widths = header.map((h, k) => Math.max(h.length, ...rows.map((r) => r[k]!.length)));
const line = (cells: string[]) => cells.map((c, k) => (k < 2 ? c.padEnd(widths[k]!) : c.padStart(widths[k]!))).join('  ');
console.log('\n' + line(header));
console.log(widths.map((w) => '-'.repeat(w)).join('  '));
for (const r of rows) console.log(line(r));
console.log('\nbytes/cell = (peak RSS − baseline RSS) / cells of the result array; ours/C = our wall time over the C sweep at the same n');

// the table for the scaled fast path, in its own processes
console.log('\n== scaled fast path ==');
const scaleArgs = ['--max-n', values['scale-max-n'] ?? '1e6', '--lattices-at', values['lattices-at'] ?? '1e6'];
if (values['no-c']) scaleArgs.push('--no-c');
else for (const n of values['scale-c-at'] ?? ['1e6']) scaleArgs.push('--c-at', n);
const scale = spawnSync(process.execPath, ['--import', 'tsx', join(here, 'scale.ts'), ...scaleArgs], { stdio: 'inherit' });
if (scale.status !== 0) failures++;
if (failures) {
  console.error(`${failures} check(s) failed`);
  process.exit(1);
}
