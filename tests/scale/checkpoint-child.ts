/**
 * Child process for the kill-and-resume test: `tsx checkpoint-child.ts N PATH` runs the fast path on
 * the square lattice with a checkpoint to PATH every 0.05 s and prints one line when done.
 */
import { resolveProblem } from '../../renderer/src/engine/index.js';
import { writeSnapshotFile } from '../../renderer/src/farm/checkpoint-file.js';
import { stabilizeScaled } from '../../renderer/src/scale/scaled.js';

const [n, path] = [Number(process.argv[2]), process.argv[3]!];
const p = resolveProblem({ lattice: { preset: 'square' }, chips: n, sources: [], background: { kind: 'constant', height: 0 } });
const o = await stabilizeScaled(p, { checkpoint: { everySeconds: 0.05, save: (s) => writeSnapshotFile(path, s) } });
console.log(`done ${o.stats.totalTopplings}`);
