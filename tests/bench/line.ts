/**
 * `npm run bench:line`: the line's closed-form path (renderer/src/engine/line-path.ts) against the
 * plain tiled engine, n grains at the origin of Z on background 0 (never part of npm test).
 *
 *   --ns LIST       grain counts for the line path (default 1e3,1e4,1e5,1e6,1e7)
 *   --plain-max N   largest n the plain engine also runs (default 1e4: it needs about n³/24 topplings)
 *
 * Both run in this process, one after the other, on one thread (the line path has one); each row
 * checks that the two agree on the statistics where both ran.
 */
import { parseArgs } from 'node:util';
import { groupThousands, parseCount } from '../../renderer/src/cli/numbers.js';
import { resolveProblem, stabilize, type Outcome } from '../../renderer/src/engine/index.js';
import { shutdownWorkers } from '../../renderer/src/engine/parallel.js';

const { values } = parseArgs({ options: { ns: { type: 'string' }, 'plain-max': { type: 'string' } } });
const ns = (values.ns ?? '1e3,1e4,1e5,1e6,1e7').split(',').map((v) => parseCount('--ns', v, { min: 0 }));
const plainMax = parseCount('--plain-max', values['plain-max'] ?? '1e4', { min: 0 });

async function timed(n: number, scaled: boolean): Promise<{ seconds: number; out: Outcome }> {
  const p = resolveProblem({ lattice: { preset: 'line' }, chips: n, sources: [], background: { kind: 'constant', height: 0 } } as never);
  const t = performance.now();
  // the pile covers n sites; the default budget (2^26) would refuse n near 10^8
  const out = await stabilize(p, { threads: 1, scaled, maxSites: Math.max(2 ** 26, 2 * n + 4 * 4096) });
  return { seconds: (performance.now() - t) / 1000, out };
}

const rows: string[][] = [['n', 'line path s', 'plain s', 'plain / line', 'total topplings', 'same stats']];
for (const n of ns) {
  const fast = await timed(n, true);
  const plain = n <= plainMax ? await timed(n, false) : null;
  const { seconds: _a, certificate: _c, ...a } = fast.out.stats;
  const same = plain ? (({ seconds: _b, certificate: _d, ...b }) => JSON.stringify(a, (_k, v) => (typeof v === 'bigint' ? String(v) : v)) === JSON.stringify(b, (_k, v) => (typeof v === 'bigint' ? String(v) : v)))(plain.out.stats) : null;
  rows.push([
    groupThousands(n),
    fast.seconds.toFixed(2),
    plain ? plain.seconds.toFixed(2) : '',
    plain ? `${(plain.seconds / fast.seconds).toFixed(0)}×` : '',
    groupThousands(fast.out.stats.totalTopplings),
    same === null ? '' : same ? 'yes' : 'NO',
  ]);
  console.error(`n = ${groupThousands(n)} done`);
}
const widths = rows[0]!.map((_, c) => Math.max(...rows.map((r) => r[c]!.length)));
for (const [k, r] of rows.entries()) {
  console.log(r.map((v, c) => (c === 0 ? v.padEnd(widths[c]!) : v.padStart(widths[c]!))).join('  '));
  if (k === 0) console.log(widths.map((w) => '-'.repeat(w)).join('  '));
}
shutdownWorkers();
