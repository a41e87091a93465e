import { availableParallelism } from 'node:os';
import { Domain, initialNeed } from './domain.js';
import { NotStabilizedError } from './errors.js';
import { IDLE, PENDING_FULL, relaxTile, STACK_SLACK } from './kernel.js';
import { DEFAULT_MAX_SITES, RESERVE_BATCH } from './limits.js';
import { buildOutcome, type Outcome } from './outcome.js';
import { acquireWorkers, releaseWorkers, type TileWorker } from './parallel.js';
import type { Problem } from './problem.js';
import { snapshotBase, type Snapshot, type TiledSnapshot } from './snapshot.js';
import { checkTiledSnapshot, pendingTilesOf } from './tiled-resume.js';
import { drainWork, makeWork } from './work-queue.js';
import { tablesFor, tileDims } from './tiling.js';
import { certify } from '../scale/certificate.js';

export interface Progress {
  stage: string;
  fraction: number;
  toppledSites: number;
}

/** Periodic snapshots: `save` runs synchronously while the state is still (copy or write it before returning). */
export interface CheckpointOptions {
  everySeconds: number;
  save: (s: Snapshot) => void;
}

export interface TiledOptions {
  /** threads to use, main thread included (default: min(2, cores)) */
  threads?: number;
  onProgress?: (p: Progress) => void;
  signal?: AbortSignal;
  /** the working box may hold at most this many sites (default DEFAULT_MAX_SITES) */
  maxSites?: number;
  /** grains moved from a source into its cell per round (default RESERVE_BATCH; smaller only for tests) */
  reserveBatch?: number;
  checkpoint?: CheckpointOptions;
  /** continue from a snapshot of this engine (checked against the problem first; its arrays are taken over) */
  resume?: TiledSnapshot;
}

/** Below this many pending tiles in a colour, handing work to a thread costs more than it saves. */
const PARALLEL_MIN_TILES = 2;

/**
 * Stabilizes the problem exactly with the plain tiled engine: an active set of 64 x 64 tiles (4096-site tiles
 * in 1-D and 3-D), each relaxed by a stack of its unstable sites with multi-toppling, tiles of one
 * colour of a 2^d-colouring relaxed concurrently by worker threads over SharedArrayBuffers (same-colour
 * tiles are a tile apart, so their writes never meet). Sources feed their cells in batches.
 * Snapshots (`checkpoint`) are taken between colour phases, when no thread is working: the box, its
 * heights and odometer and the reserves are a legal intermediate state.
 * @throws NotStabilizedError when the box would exceed maxSites; AbortError when the signal fires;
 *   SnapshotError when `resume` does not fit the problem.
 */
export async function stabilizeTiled(problem: Problem, options: TiledOptions = {}): Promise<Outcome> {
  const t0 = performance.now();
  const maxSites = options.maxSites ?? DEFAULT_MAX_SITES;
  const batch = Math.max(1, Math.min(RESERVE_BATCH, Math.floor(options.reserveBatch ?? RESERVE_BATCH)));
  const threads = Math.max(1, Math.min(Math.floor(options.threads ?? Math.min(2, availableParallelism())), 16));
  const g = problem.lattice;
  const dim = g.dim;
  const tables = tablesFor(g);

  const need = initialNeed(problem, maxSites);
  const total = Number(problem.grainsIn);
  const ext = problem.background.extent;
  const T = tileDims(dim);
  const resume = options.resume;
  if (resume) checkTiledSnapshot(problem, resume);
  const domain = resume ? Domain.restore(problem, resume.tiles, resume.origin, resume.h, resume.od) : new Domain(problem, need);
  if (domain.sites > maxSites) throw new NotStabilizedError(maxSites);

  const workers: TileWorker[] = threads > 1 ? acquireWorkers(threads - 1) : [];
  const colours = 1 << dim;
  let lists: number[][] = [];
  let listed = new Uint8Array(0);
  const rebuildLists = () => {
    lists = Array.from({ length: colours }, () => []);
    listed = new Uint8Array(domain.state.length);
    for (let t = 0; t < domain.state.length; t++) if (domain.state[t] !== IDLE) ((listed[t] = 1), lists[domain.colourOf(t)]!.push(t));
  };
  const enlist = (t: number) => {
    if (listed[t]) return;
    listed[t] = 1;
    lists[domain.colourOf(t)]!.push(t);
  };
  const publish = () => workers.forEach((w) => w.setDomain(domain.h.buffer as SharedArrayBuffer, domain.od.buffer as SharedArrayBuffer, domain.state.buffer as SharedArrayBuffer, domain.geo, tables));
  publish();
  rebuildLists();

  // sources: each site's grains wait in a reserve and enter in batches (heights stay below 2^31)
  const reserves: { at: [number, number, number]; left: number }[] = [];
  if (resume) {
    const r = resume.reserves;
    for (let k = 0; k < r.length; k += 4) reserves.push({ at: [r[k]!, r[k + 1]!, r[k + 2]!], left: r[k + 3]! });
    pendingTilesOf(g, resume, (i) => enlist(domain.markFull(i)));
  } else for (const s of problem.sources) if (s.chips > 0) reserves.push({ at: s.at, left: s.chips });
  // an uploaded array may hold sites above the batch size or unstable sites of its own
  const minDeg = Math.min(...tables.deg);
  if (ext && !resume) {
    for (let z = ext[2][0]; z <= ext[2][1]; z++)
      for (let y = ext[1][0]; y <= ext[1][1]; y++)
        for (let x = ext[0][0]; x <= ext[0][1]; x++) {
          const i = domain.index(x, y, z);
          const v = domain.h[i]!;
          if (v > batch) {
            domain.h[i] = batch;
            reserves.push({ at: [x, y, z], left: v - batch });
          }
          if (v >= minDeg) enlist(domain.markFull(i));
        }
  }
  const stack = new Int32Array(T[0] * T[1] * T[2] + STACK_SLACK);
  let injected = resume?.injected ?? 0;
  let lastReport = 0;
  let lastYield = performance.now();
  let lastSave = lastYield;
  const base = options.checkpoint ? snapshotBase(problem) : null;
  const snapshot = (): TiledSnapshot => {
    const r = new Float64Array(4 * reserves.length);
    reserves.forEach((v, k) => r.set([...v.at, v.left], 4 * k));
    return { ...base!, kind: 'tiled', tiles: [domain.geo.tnx, domain.geo.tny, domain.geo.tnz], origin: [domain.ox, domain.oy, domain.oz], h: domain.h, od: domain.od, reserves: r, injected, roundFed: lastFed };
  };
  // progress is an estimate: grains fed so far, and within a batch the toppled area against the area
  // such a pile usually covers (about grains / (0.55 * degree) sites: n / 2.2 on Z^2, common practice)
  let best = 0;
  let lastFed = 0;
  const maxDeg = Math.max(...tables.deg);
  const report = (stage: string, force = false) => {
    if (!options.onProgress) return;
    const now = performance.now();
    if (!force && now - lastReport < 500) return;
    lastReport = now;
    let toppled = 0;
    for (let i = 0; i < domain.od.length; i++) if (domain.od[i] !== 0) toppled++;
    const expected = Math.max(1, injected / (0.55 * maxDeg));
    const inBatch = Math.min(0.99, toppled / expected);
    const fraction = stage === 'done' ? 1 : total > 0 ? (injected - lastFed + lastFed * inBatch) / total : 0;
    best = Math.max(best, Math.min(stage === 'done' ? 1 : 0.99, fraction));
    options.onProgress({ stage, fraction: best, toppledSites: toppled });
  };

  // a resumed box first relaxes what it holds, as the interrupted round would have
  let feed = !resume;
  try {
    for (;;) {
      let fed = false;
      // progress within a round counts from what the round fed (a resumed round: what it had fed)
      lastFed = feed ? 0 : Math.min(resume!.roundFed, injected);
      if (feed) for (const r of reserves) {
        if (r.left === 0) continue;
        const amount = Math.min(r.left, batch);
        r.left -= amount;
        injected += amount;
        lastFed += amount;
        const i = domain.index(...r.at);
        domain.h[i] = domain.h[i]! + amount;
        enlist(domain.markFull(i));
        fed = true;
      }
      feed = true;
      if (!fed && lists.every((l) => l.length === 0) && reserves.every((r) => r.left === 0)) break;
      // relax until no tile is pending
      for (;;) {
        let worked = false;
        for (let c = 0; c < colours; c++) {
          const list = lists[c]!;
          if (list.length === 0) continue;
          if (performance.now() - lastYield > 100) {
            // let timers, progress listeners and abort requests run on this event loop
            await new Promise<void>((resolve) => setImmediate(resolve));
            lastYield = performance.now();
          }
          if (options.signal?.aborted) throw options.signal.reason ?? new DOMException('stabilization aborted', 'AbortError');
          if (options.checkpoint && lastYield - lastSave > options.checkpoint.everySeconds * 1000) {
            // between colour phases no thread is working: the box is a legal intermediate state
            options.checkpoint.save(snapshot());
            lastSave = performance.now();
          }
          if (list.some((t) => domain.isGuard(t))) {
            const add = domain.growthPlan(maxSites);
            if (!add) throw new NotStabilizedError(maxSites);
            domain.grow(add);
            publish();
            rebuildLists();
            report('grow', true);
            worked = true;
            break;
          }
          lists[c] = [];
          const modes = list.map((t) => domain.state[t]!);
          for (const t of list) ((domain.state[t] = IDLE), (listed[t] = 0));
          const activated: number[] = [];
          if (workers.length === 0 || list.length < PARALLEL_MIN_TILES) {
            for (let k = 0; k < list.length; k++)
              relaxTile(domain.h, domain.od, domain.geo, tables, domain.state, list[k]!, modes[k] === PENDING_FULL, stack, activated);
          } else {
            // shared work queue: every thread takes the next tile, so one heavy tile cannot stall the rest
            const work = makeWork(list, modes);
            const pending = workers.map((w) => w.relax(work.buffer as SharedArrayBuffer));
            drainWork(work, (tile, full) => relaxTile(domain.h, domain.od, domain.geo, tables, domain.state, tile, full, stack, activated));
            for (const r of await Promise.all(pending)) activated.push(...r.activated!);
          }
          for (const t of activated) enlist(t);
          worked = true;
          report('relax');
        }
        if (!worked) break;
      }
      // yield between rounds so progress, abort and other work on this event loop get their turn
      if (reserves.some((r) => r.left > 0)) await new Promise<void>((resolve) => setImmediate(resolve));
    }
  } finally {
    releaseWorkers(workers);
  }
  report('done', true);
  const outcome = buildOutcome(
    problem,
    { nx: domain.geo.nx, ny: domain.geo.ny, nz: domain.geo.nz, ox: domain.ox, oy: domain.oy, oz: domain.oz, heights: domain.h, odometer: domain.od },
    (performance.now() - t0) / 1000,
  );
  // every run ends with its certificate, computed from the final arrays alone
  outcome.stats.certificate = certify(problem, outcome, { method: 'legal' });
  if (!outcome.stats.certificate.passed) throw new Error(`the final state failed its certificate: ${JSON.stringify(outcome.stats.certificate)}`);
  return outcome;
}
