/**
 * The engine at scale: the exact fast path (coarse-to-fine odometer seeding, legal relaxation with a
 * stack of unstable cells, repairs and certificate by peeling), checkpoints, and the certificate that
 * every run of either engine ends with.
 */
export { stabilizeScaled, scaledPathApplies, levelChips, type ScaleOptions, type ScaleProgress, type LevelInfo } from './scaled.js';
export { certify } from './certificate.js';
export { writeCheckpoint, readCheckpoint, type Snapshot } from './checkpoint.js';
