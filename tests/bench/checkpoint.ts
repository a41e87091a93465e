/**
 * `npm run bench:checkpoint`: what the farm's checkpoints (renderer/src/farm/checkpoints.ts) cost a
 * run, and what they save when a worker dies, as ratios against an uninterrupted run without
 * checkpoints measured in the same invocation (never a timed test: the machine is shared).
 *
 *   --engine both      fast, plain or both: the seeded fast path and/or the plain tiled engine
 *   --n 1e6            fast path: grains at the origin of the square lattice
 *   --plain-n 1e5      plain engine: grains at the origin plus half as many at (60, 0), square lattice
 *                      (two sources: the fast path does not apply)
 *   --every 0.5,2      checkpoint periods in seconds
 *   --repeat 1         repetitions of the baseline and each period, back to back (medians are shown)
 *
 * Cases, each in its own child process, all through the engine's entry point `stabilize()`, with
 * s3rver running in this parent process (it shares the two cores, as the object store would share
 * a machine's network):
 * - baseline: no checkpoints;
 * - every S: the same with the farm's checkpoints every S seconds (scratch file, then PutObject);
 * - resume: a run with checkpoints every 0.5 s aborted at half the baseline's time, then loaded
 *   from the store and resumed, as a new worker does; "resume s" is the load plus the rest.
 * Wall time and the child's CPU time (every thread; the store's side of an upload is in the parent,
 * not counted) are shown with their ratio to the baseline of the same repetition: on a loaded,
 * shared machine the CPU ratio is the steadier one. Every case must end on the same heights (sha256)
 * as its engine's baseline, or the benchmark stops with an error.
 */
import { mkdtempSync, rmSync } from 'node:fs';
import type { AddressInfo } from 'node:net';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { parseArgs } from 'node:util';
import { randomUUID } from 'node:crypto';
import S3rver from 's3rver';
import { resolveProblem, stabilize, type Snapshot } from '../../renderer/src/engine/index.js';
import { shutdownWorkers } from '../../renderer/src/engine/parallel.js';
import { runCheckpoints } from '../../renderer/src/farm/checkpoints.js';
import { createS3Client } from '../../renderer/src/render/index.js';
import { arrayHash, heightsForExport } from '../../renderer/src/cli/export-arrays.js';
import { runInChild } from './child-case.js';

const BUCKET = 'bench-checkpoints';

type Engine = 'fast' | 'plain';

interface CaseSpec {
  kind: 'baseline' | 'every' | 'resume';
  engine: Engine;
  n: number;
  every?: number;
  /** resume: abort the first attempt after this many seconds */
  abortAfter?: number;
  endpoint: string;
}

interface CaseResult {
  seconds: number;
  /** CPU seconds of the child process (every thread), over the same span as `seconds` */
  cpu: number;
  sha256: string;
  saves: number;
  uploaded: number;
  saveMsMean: number;
  mib: number;
  /** resume: seconds of the first attempt, of loading the checkpoint, of the rest */
  firstSeconds?: number;
  loadSeconds?: number;
  restSeconds?: number;
  resumedKind?: string;
  /** plain engine: topplings already in the resumed snapshot, over the run's total */
  resumedShare?: number;
  firstCpu?: number;
}

/** The benchmark's run of each engine: one source takes the fast path, a second one the plain engine. */
function problemOf(engine: Engine, n: number) {
  const sources = engine === 'plain' ? [{ at: [60, 0], chips: Math.floor(n / 2) }] : [];
  return resolveProblem({ lattice: { preset: 'square' }, chips: n, sources, background: { kind: 'constant', height: 0 } } as never);
}

/** Bytes of a snapshot's arrays (the checkpoint file is these plus a header of a few hundred bytes). */
function arrayBytes(s: Snapshot): number {
  if (s.kind === 'tiled') return s.h.byteLength + s.od.byteLength + s.reserves.byteLength;
  return s.grid.h.byteLength + s.grid.od.byteLength + (s.coarse ? s.coarse.u.byteLength + (s.coarse.err?.byteLength ?? 0) : 0);
}

const cpuSince = (c: NodeJS.CpuUsage) => {
  const d = process.cpuUsage(c);
  return (d.user + d.system) / 1e6;
};

async function runCase(spec: CaseSpec): Promise<CaseResult> {
  const problem = problemOf(spec.engine, spec.n);
  const c0 = process.cpuUsage();
  if (spec.kind === 'baseline') {
    const t0 = performance.now();
    const o = await stabilize(problem);
    return { seconds: (performance.now() - t0) / 1000, cpu: cpuSince(c0), sha256: arrayHash(heightsForExport(o.heights)), saves: 0, uploaded: 0, saveMsMean: 0, mib: 0 };
  }
  const s3 = createS3Client({ endpoint: spec.endpoint, region: 'us-east-1', accessKeyId: 'S3RVER', secretAccessKey: 'S3RVER' });
  const ck = runCheckpoints({ s3, bucket: BUCKET, runId: randomUUID(), log: () => {} });
  let saves = 0;
  let saveMs = 0;
  let mib = 0;
  const save = (s: Parameters<typeof ck.save>[0]) => {
    const t = performance.now();
    ck.save(s);
    saveMs += performance.now() - t;
    saves++;
    mib = arrayBytes(s) / 2 ** 20;
  };
  try {
    if (spec.kind === 'every') {
      const t0 = performance.now();
      const o = await stabilize(problem, { checkpoint: { everySeconds: spec.every!, save } });
      await ck.flush();
      return { seconds: (performance.now() - t0) / 1000, cpu: cpuSince(c0), sha256: arrayHash(heightsForExport(o.heights)), saves, uploaded: ck.uploaded, saveMsMean: saves ? saveMs / saves : 0, mib };
    }
    // resume: a first attempt dies at abortAfter seconds; a "new worker" loads the checkpoint and finishes
    const t0 = performance.now();
    const ac = new AbortController();
    setTimeout(() => ac.abort(new Error('killed')), spec.abortAfter! * 1000);
    await stabilize(problem, { signal: ac.signal, checkpoint: { everySeconds: 0.5, save } }).then(
      () => {
        throw new Error('the first attempt finished before it was aborted: use a larger --n');
      },
      (err: Error) => {
        if (err.message !== 'killed') throw err;
      },
    );
    await ck.flush();
    const first = (performance.now() - t0) / 1000;
    const firstCpu = cpuSince(c0);
    const t1 = performance.now();
    const c1 = process.cpuUsage();
    const stored = await ck.load();
    if (!stored) throw new Error('no checkpoint reached the store before the abort');
    const t2 = performance.now();
    const inSnapshot = stored.snapshot.kind === 'tiled' ? stored.snapshot.od.reduce((a, b) => a + b, 0) : null;
    const o = await stabilize(problem, { resume: stored.snapshot });
    const t3 = performance.now();
    return {
      seconds: (t3 - t1) / 1000, cpu: cpuSince(c1), sha256: arrayHash(heightsForExport(o.heights)), saves, uploaded: ck.uploaded, saveMsMean: saves ? saveMs / saves : 0, mib,
      firstSeconds: first, loadSeconds: (t2 - t1) / 1000, restSeconds: (t3 - t2) / 1000, resumedKind: stored.snapshot.kind === 'seeded' ? `level-${stored.snapshot.level} seeded` : 'tiled',
      firstCpu, resumedShare: inSnapshot === null ? undefined : inSnapshot / Number(o.stats.totalTopplings),
    };
  } finally {
    ck.dispose();
    s3.destroy();
  }
}

const median = (xs: number[]) => {
  const v = [...xs].sort((a, b) => a - b);
  return v.length % 2 ? v[(v.length - 1) / 2]! : (v[v.length / 2 - 1]! + v[v.length / 2]!) / 2;
};

async function main(): Promise<void> {
  const { values } = parseArgs({
    options: { engine: { type: 'string', default: 'both' }, n: { type: 'string', default: '1e6' }, 'plain-n': { type: 'string', default: '1e5' }, every: { type: 'string', default: '0.5,2' }, repeat: { type: 'string', default: '1' }, case: { type: 'string' } },
  });
  if (values.case) {
    const r = await runCase(JSON.parse(values.case) as CaseSpec);
    await shutdownWorkers();
    console.log(JSON.stringify(r));
    return;
  }
  const sizes: Record<Engine, number> = { fast: Number(values.n), plain: Number(values['plain-n']) };
  const engines: Engine[] = values.engine === 'both' ? ['fast', 'plain'] : [values.engine as Engine];
  const periods = values.every!.split(',').map(Number);
  const repeat = Number(values.repeat);
  if (!engines.every((e) => e === 'fast' || e === 'plain') || !(Number.isInteger(sizes.fast) && sizes.fast >= 2 ** 16) || !(Number.isInteger(sizes.plain) && sizes.plain >= 1000) || periods.some((p) => !(p > 0)) || !(Number.isInteger(repeat) && repeat >= 1)) {
    console.error('--engine must be fast, plain or both, --n an integer ≥ 65536, --plain-n an integer ≥ 1000, --every positive seconds and --repeat a whole number ≥ 1');
    process.exit(2);
  }
  const root = mkdtempSync(join(tmpdir(), 'tw-bench-ckpt-'));
  const server = new S3rver({ address: '127.0.0.1', port: 0, silent: true, directory: join(root, 's3'), configureBuckets: [{ name: BUCKET, configs: [] }] });
  const endpoint = `http://127.0.0.1:${((await server.run()) as AddressInfo).port}`;
  const script = fileURLToPath(import.meta.url);
  try {
    for (const engine of engines) {
      const n = sizes[engine];
      // each repetition runs the baseline and every period back to back, so a ratio compares runs
      // made at about the same load; the table shows medians over the repetitions
      const reps: { base: CaseResult; every: CaseResult[] }[] = [];
      for (let k = 0; k < repeat; k++) {
        const base = await runInChild<CaseResult>(script, { kind: 'baseline', engine, n, endpoint }, `${engine} baseline`);
        const every: CaseResult[] = [];
        for (const p of periods) every.push(await runInChild<CaseResult>(script, { kind: 'every', engine, n, every: p, endpoint }, `${engine} every ${p}`));
        reps.push({ base, every });
      }
      const base0 = reps[0]!.base;
      const resumed = await runInChild<CaseResult>(script, { kind: 'resume', engine, n, endpoint, abortAfter: median(reps.map((r) => r.base.seconds)) / 2 }, `${engine} resume`);
      for (const r of [...reps.flatMap((x) => [x.base, ...x.every]), resumed]) if (r.sha256 !== base0.sha256) throw new Error(`${engine}: a case's heights differ from the baseline's`);

      const what = engine === 'fast' ? `seeded fast path, square lattice, n = ${n.toLocaleString('en-US')} at the origin` : `plain tiled engine, square lattice, n = ${n.toLocaleString('en-US')} at the origin + ${Math.floor(n / 2).toLocaleString('en-US')} at (60, 0)`;
      console.log(`\n${what}; heights sha256 ${base0.sha256.slice(0, 16)}… in every case; medians of ${repeat} repetition(s)`);
      console.log(['case'.padEnd(22), 'wall s'.padStart(7), '× base'.padStart(7), 'cpu s'.padStart(7), '× base'.padStart(7), 'saves'.padStart(6), 'stored'.padStart(7), 'save ms'.padStart(8), 'MiB'.padStart(6)].join('  '));
      const row = (label: string, rs: CaseResult[], bases: CaseResult[]) => {
        const m = (f: (r: CaseResult, i: number) => number) => median(rs.map(f));
        console.log([
          label.padEnd(22), m((r) => r.seconds).toFixed(2).padStart(7), m((r, i) => r.seconds / bases[i]!.seconds).toFixed(2).padStart(7),
          m((r) => r.cpu).toFixed(2).padStart(7), m((r, i) => r.cpu / bases[i]!.cpu).toFixed(2).padStart(7),
          String(m((r) => r.saves)).padStart(6), String(m((r) => r.uploaded)).padStart(7), m((r) => r.saveMsMean).toFixed(1).padStart(8), m((r) => r.mib).toFixed(1).padStart(6),
        ].join('  '));
      };
      const bases = reps.map((r) => r.base);
      row('baseline', bases, bases);
      periods.forEach((p, j) => row(`every ${p} s`, reps.map((r) => r.every[j]!), bases));
      row('killed at ½, resumed', [resumed], [reps[0]!.base]);
      console.log(
        `resume: first attempt ran ${resumed.firstSeconds!.toFixed(2)} s (${resumed.firstCpu!.toFixed(2)} CPU s), loading its ${resumed.resumedKind} checkpoint ${resumed.loadSeconds!.toFixed(2)} s, the rest ${resumed.restSeconds!.toFixed(2)} s ` +
          `(${((resumed.seconds / median(bases.map((b) => b.seconds))) * 100).toFixed(0)} % of an uninterrupted run)` +
          (resumed.resumedShare === undefined ? '' : `; the checkpoint held ${(resumed.resumedShare * 100).toFixed(0)} % of the run's topplings`),
      );
    }
  } finally {
    await server.close();
    rmSync(root, { recursive: true, force: true });
  }
}

await main();
