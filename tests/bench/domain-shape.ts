/**
 * `npx tsx tests/bench/domain-shape.ts`: measures the shape factors of shared/estimate.ts
 * (DOMAIN_SHAPE_FACTORS) by stabilizing single sources with the engine and comparing each planar
 * preset's array with the square lattice's. Not a speed benchmark; each run takes seconds at most.
 *
 *   --n 1e4,3e4,1e5,3e5,1e6   grain counts (default; keep them at 10^6 or below)
 *   --height 0                constant background height
 *
 * For each preset and n it prints the array's width × height and its half-extent along x and y over
 * the estimator's mass radius sqrt(n / (π g)); the factor is that ratio divided by the square
 * lattice's at the same n. The last lines give, per preset, the largest factor over the n asked for,
 * rounded up to two decimals: the value the estimator uses, so every lattice keeps the square
 * lattice's margin over its real pile.
 */
import { parseArgs } from 'node:util';
import { resolveProblem, stabilize } from '../../renderer/src/engine/index.js';
import { shutdownWorkers } from '../../renderer/src/engine/parallel.js';
import { latticeShape } from '../../shared/estimate.js';
import { runSpecSchema } from '../../shared/run-spec.js';

const PLANAR = ['square', 'triangular', 'honeycomb', 'f-lattice', 'manhattan'] as const;

const { values } = parseArgs({ options: { n: { type: 'string', default: '1e4,3e4,1e5,3e5,1e6' }, height: { type: 'string', default: '0' } } });
const ns = values.n.split(',').map(Number);
const height = Number(values.height);
if (ns.some((n) => !Number.isInteger(n) || n < 1 || n > 1e6)) throw new Error('--n: whole numbers from 1 to 10^6');

/** Half-extents (x, y) of the array beyond its centre cell and one-cell margin, over the mass radius. */
async function relativeHalfExtents(preset: string, n: number): Promise<{ W: number; H: number; fx: number; fy: number }> {
  const spec = runSpecSchema.parse({ lattice: { preset }, chips: n, background: { kind: 'constant', height } });
  const out = await stabilize(resolveProblem(spec));
  const [H, W] = out.shape as [number, number];
  const gain = (2 / 3) * (latticeShape(spec.lattice).degree - 1 - height);
  const r = Math.sqrt(n / (Math.PI * gain));
  // the estimator's box is 2·half + 3 cells: the centre, a margin of one cell on each side
  return { W, H, fx: (W - 3) / 2 / r, fy: (H - 3) / 2 / r };
}

const measured = new Map<string, { fx: number; fy: number }[]>();
for (const preset of PLANAR) {
  const rows: { fx: number; fy: number }[] = [];
  for (const n of ns) {
    const m = await relativeHalfExtents(preset, n);
    rows.push(m);
    console.log(`${preset.padEnd(10)} n=${n.toExponential(0).padEnd(5)} ${m.W} × ${m.H} (W/H ${(m.W / m.H).toFixed(4)})  x ${m.fx.toFixed(4)}  y ${m.fy.toFixed(4)}`);
  }
  measured.set(preset, rows);
}
const square = measured.get('square')!;
const up2 = (v: number) => Math.ceil(v * 100 - 1e-9) / 100;
console.log('\nrelative to the square lattice (largest over n, rounded up):');
for (const preset of PLANAR) {
  const rows = measured.get(preset)!;
  const fx = Math.max(...rows.map((m, k) => m.fx / square[k]!.fx));
  const fy = Math.max(...rows.map((m, k) => m.fy / square[k]!.fy));
  console.log(`  ${preset}: [${up2(fx)}, ${up2(fy)}]   (${fx.toFixed(4)}, ${fy.toFixed(4)})`);
}
await shutdownWorkers();
