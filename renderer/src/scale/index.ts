/**
 * The engine at scale: the exact fast path (coarse-to-fine odometer seeding, legal relaxation with a
 * stack of unstable cells, repairs and certificate by peeling) and the certificate that every run of
 * either engine ends with. Its snapshots are the engine's (renderer/src/engine/snapshot.ts, kind 'seeded').
 */
export { stabilizeScaled, scaledPathApplies, levelChips, type ScaleOptions, type ScaleProgress, type LevelInfo } from './scaled.js';
export { certify } from './certificate.js';
