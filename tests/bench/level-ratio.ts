/**
 * `npx tsx tests/bench/level-ratio.ts --n 1.6e7 --ratio 2 --levels 5 --gain carry`: how well a level's
 * seed error is predicted when levels are `ratio` apart in grains (4: space scale 2, what the engine
 * does; 2: space scale √2), on exact odometers of the square lattice (each solved by the fast path; a
 * tuning tool, not a test).
 *
 * For each level l (finest first) with the next coarser level l+1, E_l = u_l − P_l, P_l the plain
 * scaled seed (f·u_{l+1}(x/s) with the source's logarithmic peak lifted, as in renderer/src/scale/seed.ts),
 * and the residual R = E_l − a·f·E_{l+1}(x/s) after extrapolating the coarser level's error with weight
 * a: `--gain fixed` a = 0.9 (the engine's default), `oracle` a fitted on the level itself (not
 * available to a run), `carry` the weight fitted on the last level of the same parity (l+2 for ratio
 * 2, l+1 for ratio 4). Printed per level: Σ|R| / Σu, mean |R|, quantiles of R, and Σ(R + o)⁺ with
 * o = −(0.05 % quantile), the relaxation's work with a just-safe flat offset (whole plane). Sites within
 * 8 cells of the source are left out (the engine treats them on their own).
 */
import { parseArgs } from 'node:util';
import { resolveProblem } from '../../renderer/src/engine/index.js';
import { stabilizeScaled } from '../../renderer/src/scale/index.js';
import { peakAt, peakOf } from '../../renderer/src/scale/seed.js';

const { values } = parseArgs({
  options: { n: { type: 'string', default: '4e6' }, ratio: { type: 'string', default: '2' }, levels: { type: 'string', default: '4' }, gain: { type: 'string', default: 'carry' } },
});
const N = Math.round(Number(values.n));
const RATIO = Number(values.ratio);
const LEVELS = Math.max(1, Number(values.levels));
const MODE = values.gain;
if (RATIO !== 2 && RATIO !== 4) throw new Error('--ratio must be 2 or 4');
if (!['fixed', 'oracle', 'carry'].includes(MODE!)) throw new Error('--gain must be fixed, oracle or carry');
if (!Number.isFinite(N) || N / RATIO ** (LEVELS + 1) < 1000) throw new Error('--n is too small for that many levels');

interface Level { n: number; W: number; H: number; ox: number; oy: number; u: Float64Array }
const spec = (n: number) => resolveProblem({ lattice: { preset: 'square' }, chips: n, sources: [], background: { kind: 'constant', height: 0 } });
const peak = peakOf(spec(1).lattice);
async function solve(n: number): Promise<Level> {
  const o = await stabilizeScaled(spec(n), { threads: 2 });
  return { n, H: o.shape[0]!, W: o.shape[1]!, oy: o.origin[0]!, ox: o.origin[1]!, u: Float64Array.from(o.odometer) };
}
const at = (f: Level, a: Float64Array, x: number, y: number) => {
  const i = x + f.ox, j = y + f.oy;
  return i >= 0 && j >= 0 && i < f.W && j < f.H ? a[j * f.W + i]! : 0;
};
/** bilinear value of a coarse field at real coarse coordinates, optionally lifted by the peak */
function bilinear(c: Level, a: Float64Array, x: number, y: number, lift: boolean): number {
  const x0 = Math.floor(x), y0 = Math.floor(y), wx = x - x0, wy = y - y0;
  const v = [at(c, a, x0, y0), at(c, a, x0 + 1, y0), at(c, a, x0, y0 + 1), at(c, a, x0 + 1, y0 + 1)];
  if (lift && v.every((t) => t > 0)) {
    const corners = [[x0, y0], [x0 + 1, y0], [x0, y0 + 1], [x0 + 1, y0 + 1]] as const;
    corners.forEach(([cx, cy], k) => (v[k]! += peakAt(peak, c.n, cx, cy)));
    return (1 - wy) * ((1 - wx) * v[0]! + wx * v[1]!) + wy * ((1 - wx) * v[2]! + wx * v[3]!) - peakAt(peak, c.n, x, y);
  }
  return (1 - wy) * ((1 - wx) * v[0]! + wx * v[1]!) + wy * ((1 - wx) * v[2]! + wx * v[3]!);
}
function eachToppled(f: Level, fn: (X: number, Y: number, i: number) => void) {
  for (let j = 0; j < f.H; j++)
    for (let i = 0; i < f.W; i++) {
      const X = i - f.ox, Y = j - f.oy;
      if (f.u[j * f.W + i]! > 0 && Math.abs(X) + Math.abs(Y) >= 8) fn(X, Y, j * f.W + i);
    }
}

const t0 = performance.now();
const L: Level[] = [];
for (let k = 0; k < LEVELS + 2; k++) L.push(await solve(Math.floor(N / RATIO ** k)));
const scaleOf = (l: number) => (RATIO === 4 ? 2 : Math.sqrt(L[l]!.n / L[l + 1]!.n));
// E[l] = u_l − P_l on levels 0 … LEVELS
const E = L.slice(0, LEVELS + 1).map((f, l) => {
  const c = L[l + 1]!, s = scaleOf(l), e = new Float64Array(f.W * f.H);
  for (let j = 0; j < f.H; j++)
    for (let i = 0; i < f.W; i++) if (f.u[j * f.W + i]! > 0) e[j * f.W + i] = f.u[j * f.W + i]! - (f.n / c.n) * bilinear(c, c.u, (i - f.ox) / s, (j - f.oy) / s, true);
  return e;
});
const predicted = (l: number, X: number, Y: number) => (L[l]!.n / L[l + 1]!.n) * bilinear(L[l + 1]!, E[l + 1]!, X / scaleOf(l), Y / scaleOf(l), false);
const best = L.slice(0, LEVELS).map((f, l) => {
  let num = 0, den = 0;
  eachToppled(f, (X, Y, i) => {
    const p = predicted(l, X, Y);
    (num += E[l]![i]! * p), (den += p * p);
  });
  return den > 0 ? num / den : 0;
});
const weight = (l: number) => (MODE === 'fixed' ? 0.9 : MODE === 'oracle' ? best[l]! : best[l + (RATIO === 2 ? 2 : 1)] ?? 0.9);

console.log(`square lattice, levels ${RATIO}× apart from n = ${N.toLocaleString('en-US')}, gain ${MODE}; fitted gains ${best.map((b) => b.toFixed(3)).join(', ')}`);
let total = 0;
for (let l = 0; l < LEVELS; l++) {
  const f = L[l]!, r: number[] = [];
  let sumAbs = 0, sumU = 0;
  eachToppled(f, (X, Y, i) => {
    const v = E[l]![i]! - weight(l) * predicted(l, X, Y);
    r.push(v);
    (sumAbs += Math.abs(v)), (sumU += f.u[i]!);
  });
  r.sort((a, b) => a - b);
  const q = (p: number) => r[Math.floor(p * (r.length - 1))]!;
  const offset = Math.max(0, -q(0.0005));
  const work = r.reduce((a, v) => a + Math.max(0, v + offset), 0);
  total += work;
  console.log(
    `n = ${f.n.toLocaleString('en-US').padStart(12)}  Σ|R|/Σu ${((100 * sumAbs) / sumU).toFixed(3)} %  mean |R| ${(sumAbs / r.length).toFixed(1).padStart(6)}  ` +
      `R quantiles 0.05 % ${q(0.0005).toFixed(0)}, 1 % ${q(0.01).toFixed(0)}, median ${q(0.5).toFixed(0)}, 99 % ${q(0.99).toFixed(0)}  Σ(R + o)⁺ ${(work / 1e6).toFixed(0)}M (o = ${offset.toFixed(0)})`,
  );
}
console.log(`Σ over the levels: ${(total / 1e6).toFixed(0)}M single topplings (whole plane); ${((performance.now() - t0) / 1000).toFixed(0)} s`);
