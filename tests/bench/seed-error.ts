/**
 * `npm run bench:seed-error -- --n 4e6`: what a coarse-to-fine seed gets wrong, measured on exact
 * odometers of the square lattice at n, n/4, …, n/256 (each solved by the fast path; a tuning tool,
 * not a test). For the finest level it prints, as fractions of Σu:
 * - Σ|E| with E(x) = u_n(x) − (n/n')·u_{n'}(x/2), the plain scaled seed's error (n' = ⌊n/4⌋);
 * - Σ|E − a·P| for predictors P built from the coarser levels' exact errors, P(x) = (n/n')·E'(x/2),
 *   with a fixed weight a, a weight fitted on the same level (an oracle: not available to a run),
 *   per ring of |x|/√n (oracle), and the same weights fitted one level coarser and carried over
 *   (what a run could do), plus a two-term recurrence a·P + b·Q, Q from the level below that;
 * - the mean residual per ring (is what is left smooth and radial, or structure?).
 * Sites within 8 cells of the source are left out of the fits (the source's logarithmic peak is
 * handled on its own by seed.ts).
 */
import { parseArgs } from 'node:util';
import { resolveProblem } from '../../renderer/src/engine/index.js';
import { stabilizeScaled } from '../../renderer/src/scale/index.js';

const { values } = parseArgs({ options: { n: { type: 'string', default: '1e6' }, rings: { type: 'string', default: '16' } } });
const N = Math.round(Number(values.n));
const RINGS = Math.max(1, Number(values.rings));
if (!Number.isFinite(N) || N < 4 ** 5 * 16) throw new Error('--n must be at least 16,384');

type Field = (x: number, y: number) => number;
interface Level { n: number; W: number; H: number; ox: number; oy: number; u: Float64Array | Uint32Array }

async function solve(n: number): Promise<Level> {
  const p = resolveProblem({ lattice: { preset: 'square' }, chips: n, sources: [], background: { kind: 'constant', height: 0 } });
  const o = await stabilizeScaled(p, { threads: 1 });
  return { n, H: o.shape[0]!, W: o.shape[1]!, oy: o.origin[0]!, ox: o.origin[1]!, u: o.odometer };
}

const valueAt = (f: Level, a: Float64Array | Uint32Array, x: number, y: number) => {
  const i = x + f.ox, j = y + f.oy;
  return i >= 0 && j >= 0 && i < f.W && j < f.H ? a[j * f.W + i]! : 0;
};
const bilinear = (g: Field, x: number, y: number) => {
  const x0 = Math.floor(x), y0 = Math.floor(y), fx = x - x0, fy = y - y0;
  return (1 - fx) * (1 - fy) * g(x0, y0) + fx * (1 - fy) * g(x0 + 1, y0) + (1 - fx) * fy * g(x0, y0 + 1) + fx * fy * g(x0 + 1, y0 + 1);
};
/** A field tabulated on a level's cells (the predictors are read many times). */
function tabulate(f: Level, g: Field): Field {
  const a = new Float64Array(f.W * f.H);
  for (let j = 0; j < f.H; j++) for (let i = 0; i < f.W; i++) a[j * f.W + i] = g(i - f.ox, j - f.oy);
  return (x, y) => valueAt(f, a, x, y);
}

const t0 = performance.now();
const L: Level[] = [];
for (let k = 0; k < 5; k++) L.push(await solve(Math.floor(N / 4 ** k)));
const u = (l: number): Field => (x, y) => valueAt(L[l]!, L[l]!.u, x, y);
const ratio = (l: number) => L[l]!.n / L[l + 1]!.n;
// E[l]: the plain scaled seed's error on level l; P[l], Q[l]: predictors of E[l] from E[l+1], E[l+2]
const E = [0, 1, 2, 3].map((l) => tabulate(L[l]!, (x, y) => u(l)(x, y) - ratio(l) * bilinear(u(l + 1), x / 2, y / 2)));
const P = [0, 1, 2].map((l) => tabulate(L[l]!, (x, y) => ratio(l) * bilinear(E[l + 1]!, x / 2, y / 2)));
const Q = [0, 1].map((l) => tabulate(L[l]!, (x, y) => ratio(l) * bilinear(P[l + 1]!, x / 2, y / 2)));

const ringOf = (l: number, x: number, y: number) => Math.min(RINGS - 1, Math.floor((Math.hypot(x, y) / Math.sqrt(L[l]!.n) / 0.45) * RINGS));
function eachToppled(l: number, fn: (x: number, y: number, u: number) => void, nearToo = false) {
  const f = L[l]!;
  for (let y = -f.oy; y < f.H - f.oy; y++)
    for (let x = -f.ox; x < f.W - f.ox; x++) {
      const v = f.u[(y + f.oy) * f.W + x + f.ox]!;
      if (v > 0 && (nearToo || Math.abs(x) + Math.abs(y) >= 8)) fn(x, y, v);
    }
}
/** least-squares weights of E[l] ≈ a·P[l] (+ b·Q[l]) per ring (or one ring for all) */
function fit(l: number, rings: boolean, twoTerm: boolean): number[][] {
  const s = Array.from({ length: RINGS }, () => [0, 0, 0, 0, 0]);
  eachToppled(l, (x, y) => {
    const r = s[rings ? ringOf(l, x, y) : 0]!;
    const p = P[l]!(x, y), q = twoTerm ? Q[l]!(x, y) : 0, e = E[l]!(x, y);
    r[0]! += p * p; r[1]! += p * q; r[2]! += q * q; r[3]! += p * e; r[4]! += q * e;
  });
  return s.map(([pp, pq, qq, pe, qe]) => {
    if (!twoTerm) return [pp! > 0 ? pe! / pp! : 0, 0];
    const d = pp! * qq! - pq! * pq!;
    return d > 0 ? [(pe! * qq! - qe! * pq!) / d, (qe! * pp! - pe! * pq!) / d] : [0, 0];
  });
}
const totalU = (() => { let t = 0; eachToppled(0, (_x, _y, v) => (t += v), true); return t; })();
const rows: [string, string, string][] = [];
function score(label: string, weights: (x: number, y: number) => number[]) {
  let t = 0, worst = 0;
  eachToppled(0, (x, y) => {
    const [a, b] = weights(x, y);
    const r = E[0]!(x, y) - a! * P[0]!(x, y) - b! * Q[0]!(x, y);
    t += Math.abs(r);
    if (Math.abs(x) + Math.abs(y) > 32) worst = Math.min(worst, r);
  });
  rows.push([label, `${((100 * t) / totalU).toFixed(4)} %`, worst.toFixed(0)]);
}
score('plain scaled seed (no predictor)', () => [0, 0]);
for (const a of [0.8, 0.9, 1]) score(`a = ${a}`, () => [a, 0]);
for (const rings of [false, true])
  for (const two of [false, true]) {
    const own = fit(0, rings, two), coarser = fit(1, rings, two);
    const pick = (w: number[][]) => (x: number, y: number) => w[rings ? ringOf(0, x, y) : 0]!;
    const what = `${rings ? 'per ring' : 'one weight'}${two ? ', a·P + b·Q' : ''}`;
    score(`${what}, fitted on this level (oracle)`, pick(own));
    score(`${what}, fitted one level coarser`, pick(coarser));
  }

console.log(`seed error of the square lattice at n = ${N.toLocaleString('en-US')} (levels down to ${L[4]!.n.toLocaleString('en-US')}, ${((performance.now() - t0) / 1000).toFixed(1)} s)`);
console.log(`Σu = ${totalU.toExponential(4)}; Σ|residual| as a share of Σu, and the most negative residual beyond 32 cells of the source\n`);
const w0 = Math.max(...rows.map((r) => r[0].length));
for (const [a, b, c] of rows) console.log(`${a.padEnd(w0)}  ${b.padStart(9)}  ${c.padStart(8)}`);
const fits = [fit(2, false, false)[0]![0]!, fit(1, false, false)[0]![0]!, fit(0, false, false)[0]![0]!];
console.log(`\nbest single weight at n/16, n/4, n: ${fits.map((v) => v.toFixed(3)).join(', ')}`);
const sum = new Float64Array(RINGS), cnt = new Float64Array(RINGS), mean = new Float64Array(RINGS);
eachToppled(0, (x, y, v) => { const r = ringOf(0, x, y); sum[r]! += E[0]!(x, y) - 0.9 * P[0]!(x, y); mean[r]! += v; cnt[r]!++; });
console.log('\n|x|/√n   mean u      mean residual (a = 0.9)');
for (let r = 0; r < RINGS; r++) if (cnt[r]) console.log(`${((r * 0.45) / RINGS).toFixed(3).padEnd(8)} ${(mean[r]! / cnt[r]!).toFixed(0).padStart(10)}  ${(sum[r]! / cnt[r]!).toFixed(1).padStart(10)}`);
