import { z } from 'zod';

/**
 * The specification of one run: the single contract read by the CLI, the API, the web form and the
 * renderer worker. It is plain JSON, so it is also the job payload and part of the cache key.
 */

/**
 * Lattices the engine ships. Periodic presets (the last two: oriented periodic subgraphs of Z^2) are
 * built on the same mechanism as uploaded graphs; renderer/src/engine/README.md draws their unit cells.
 */
export const LATTICE_PRESETS = ['line', 'square', 'cubic', 'triangular', 'honeycomb', 'f-lattice', 'manhattan'] as const;
export type LatticePreset = (typeof LATTICE_PRESETS)[number];

const offset2 = z.tuple([z.number().int(), z.number().int()]);

/**
 * A periodic graph on Z^2: neighbours[y mod py][x mod px] lists the outgoing offsets [dx, dy] of that
 * residue class (remainders non-negative, the origin is class [0][0]).
 */
export const periodicGraphSchema = z.strictObject({
  period: z.tuple([z.number().int().min(1).max(64), z.number().int().min(1).max(64)]),
  neighbours: z.array(z.array(z.array(offset2).max(64))),
});
export type PeriodicGraph = z.infer<typeof periodicGraphSchema>;

export const latticeSchema = z.union([
  z.strictObject({ preset: z.string().min(1).max(64) }),
  z.strictObject({ periodic: periodicGraphSchema, name: z.string().max(120).optional() }),
]);
export type LatticeChoice = z.infer<typeof latticeSchema>;

const height = z.number().int().min(0).max(2 ** 31 - 1);

export const backgroundSchema = z.discriminatedUnion('kind', [
  z.strictObject({ kind: z.literal('constant'), height }),
  /** a where x+y is even, b where it is odd */
  z.strictObject({ kind: z.literal('checkerboard'), a: height, b: height }),
  /** a small array repeated over the lattice, with rows indexed by y mod rows and x mod columns */
  z.strictObject({ kind: z.literal('motif'), cells: z.array(z.array(height).min(1).max(256)).min(1).max(256) }),
  /** i.i.d. heights: P(height = i) = weights[i] / sum(weights), from a portable counter-based generator */
  z.strictObject({
    kind: z.literal('random'),
    seed: z.number().int().min(0).max(2 ** 32 - 1),
    weights: z.array(z.number().min(0)).min(1).max(64),
  }),
  /** concentric annuli around the origin alternating a, b with growing widths */
  z.strictObject({ kind: z.literal('annuli'), a: height, b: height }),
  /** an uploaded array stored by content hash; centred on the origin, 0 outside */
  z.strictObject({ kind: z.literal('array'), sha256: z.string().regex(/^[0-9a-f]{64}$/), shape: z.array(z.number().int().min(1)).min(1).max(3) }),
]);
export type Background = z.infer<typeof backgroundSchema>;

/** Grain counts up to 2^53 - 1 are accepted even where this machine cannot finish them. */
export const chipsSchema = z.number().int().min(0).max(Number.MAX_SAFE_INTEGER);

export const sourceSchema = z.strictObject({
  at: z.array(z.number().int()).min(1).max(3),
  chips: chipsSchema,
});
export type Source = z.infer<typeof sourceSchema>;

export const runSpecSchema = z.strictObject({
  lattice: latticeSchema,
  /** grains at the origin */
  chips: chipsSchema,
  /** further point sources, each with its own count */
  sources: z.array(sourceSchema).max(64).default([]),
  background: backgroundSchema.default({ kind: 'constant', height: 0 }),
});
export type RunSpec = z.infer<typeof runSpecSchema>;
export type RunSpecInput = z.input<typeof runSpecSchema>;
