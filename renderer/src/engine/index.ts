/**
 * The exact stabilization engine: typed arrays in, typed arrays and statistics out, no I/O.
 * Entry points for the CLI, the API and the renderer worker.
 */
export { resolveProblem, type Problem, type Uploads } from './problem.js';
export { stabilize, takesFastPath, takesLinePath, SCALED_MIN_CHIPS, type StabilizeOptions, type Progress, type CheckpointOptions } from './stabilize.js';
export { encodeSnapshot, decodeSnapshot, snapshotBytes, isSnapshotError, SnapshotError, SNAPSHOT_FORMAT, type Snapshot, type SeededSnapshot, type TiledSnapshot } from './snapshot.js';
export { stabilizeReference } from './reference.js';
export { stabilizeBox, boxStabilizer, type BoxResult, type BoxOptions } from './box.js';
export type { OdometerArray, Outcome } from './outcome.js';
export { runStatsToJSON, runStatsFromJSON, type RunStats, type RunStatsJson } from '../../../shared/run-stats.js';
export { EngineInputError, ExplosionError, NotStabilizedError, isEngineError, type EngineErrorName } from './errors.js';
export { ENGINE_VERSION } from './version.js';
export { latticePreset, periodicLattice, LATTICE_NAMES, PERIODIC_PRESETS, type LatticeGraph } from './lattice.js';
export { siteHash } from './random.js';
export { DEFAULT_MAX_SITES } from './limits.js';
