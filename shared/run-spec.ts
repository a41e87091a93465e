import { z } from 'zod';
import { DEFAULT_PALETTE_ID, layerSchema, PALETTE_IDS, paletteIdSchema, untoppledStyleSchema, type Layer, type PaletteId, type UntoppledStyle } from './palettes.js';
import { neverStabilizesReason } from './stability.js';

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

/**
 * The largest grain count: counts travel as JSON numbers (doubles), whose whole numbers are exact
 * only up to 2^53 − 1. Accepted even where the machines cannot finish such a run (the estimate and
 * the submit then refuse it for its memory, api/src/services/run-memory.ts).
 */
export const MAX_CHIPS = Number.MAX_SAFE_INTEGER;
// no-break spaces keep "2⁵³ − 1" on one line under a narrow field
export const CHIPS_TOO_LARGE_MESSAGE = 'must be at most 9,007,199,254,740,991 (2⁵³\u00a0−\u00a01), the largest grain count held exactly';

/** zod's whole numbers stop at 2^53 − 1 already (its "safe integer range"): that refusal gets our words. */
const grainCount = () => z.number().int({ error: (issue) => (issue.code === 'too_big' ? CHIPS_TOO_LARGE_MESSAGE : undefined) });

export const chipsSchema = grainCount().min(0);

export const sourceSchema = z.strictObject({
  at: z.array(z.number().int()).min(1).max(3),
  chips: chipsSchema,
});
export type Source = z.infer<typeof sourceSchema>;

/** The layers drawn when a specification does not say (specifications older than the `render` field included). */
export const DEFAULT_RENDER_LAYERS: readonly Layer[] = ['heights', 'toppled', 'odometer'];

/** What the farm draws for a run: every layer in every palette, one deep-zoom pyramid each. */
export const renderSpecSchema = z.strictObject({
  layers: z
    .array(layerSchema)
    .min(1, 'choose at least one layer to draw')
    .max(4)
    .refine((xs) => new Set(xs).size === xs.length, 'each layer may be chosen once'),
  palettes: z
    .array(paletteIdSchema)
    .min(1, 'choose at least one palette')
    .max(PALETTE_IDS.length)
    .refine((xs) => new Set(xs).size === xs.length, 'each palette may be chosen once'),
  /** how cells that never toppled look in the toppled and odometer layers */
  untoppled: untoppledStyleSchema,
});
export type RenderSpec = z.infer<typeof renderSpecSchema>;
export const DEFAULT_RENDER: RenderSpec = { layers: [...DEFAULT_RENDER_LAYERS], palettes: [DEFAULT_PALETTE_ID], untoppled: 'neutral' };

/**
 * True when the background is 0 on every site, as far as the specification says: then "difference
 * from the background" would repeat the heights. An uploaded array is taken as non-zero (the
 * specification holds only its hash).
 */
export function isZeroBackground(bg: Background): boolean {
  switch (bg.kind) {
    case 'constant':
      return bg.height === 0;
    case 'checkerboard':
    case 'annuli':
      return bg.a === 0 && bg.b === 0;
    case 'motif':
      return bg.cells.every((row) => row.every((h) => h === 0));
    case 'random':
      // every weight but height 0's is zero: all sites draw 0
      return bg.weights.slice(1).every((w) => w === 0);
    case 'array':
      return false;
  }
}

export const DIFFERENCE_NEEDS_BACKGROUND = 'the difference layer needs a background that is not 0 everywhere: choose a background or leave that layer out';

/** Cross-field rules of a specification (kept apart so the series form can reuse them on its own shape). */
export function checkRenderAgainstBackground(spec: { background: Background; render?: RenderSpec }, ctx: z.RefinementCtx): void {
  if (spec.render?.layers.includes('difference') && isZeroBackground(spec.background)) {
    ctx.addIssue({ code: 'custom', path: ['render', 'layers'], message: DIFFERENCE_NEEDS_BACKGROUND });
  }
}

/** The field of each background kind that a refusal of the whole background is shown by (for the form). */
const BACKGROUND_FIELD: Record<Background['kind'], string | undefined> = {
  constant: 'height',
  checkerboard: 'a',
  annuli: 'a',
  motif: 'cells',
  random: 'weights',
  array: undefined,
};

/**
 * A new run whose background can never stabilize on its lattice is refused before it is stored or
 * charged (shared/stability.ts says when that is certain; runs that only might not are accepted
 * with the estimator's warning). `params.neverStabilizes` lets the CLI answer as the engine would.
 */
export function checkBackgroundCanStabilize(spec: { lattice: LatticeChoice; background: Background }, ctx: z.RefinementCtx): void {
  const reason = neverStabilizesReason(spec.lattice, spec.background);
  if (!reason) return;
  const field = BACKGROUND_FIELD[spec.background.kind];
  ctx.addIssue({ code: 'custom', path: field ? ['background', field] : ['background'], message: reason, params: { neverStabilizes: true } });
}

/** The fields of a specification, without its cross-field rules (for `.omit`, which refinements forbid). */
export const runSpecShapeSchema = z.strictObject({
  lattice: latticeSchema,
  /** grains at the origin */
  chips: chipsSchema,
  /** further point sources, each with its own count */
  sources: z.array(sourceSchema).max(64).default([]),
  background: backgroundSchema.default({ kind: 'constant', height: 0 }),
  /** layers and palettes to draw; absent means DEFAULT_RENDER (so older specifications keep their meaning and cache key) */
  render: renderSpecSchema.optional(),
});

export const runSpecSchema = runSpecShapeSchema.superRefine(checkRenderAgainstBackground);
export type RunSpec = z.infer<typeof runSpecSchema>;
export type RunSpecInput = z.input<typeof runSpecSchema>;

export const NEW_RUN_MIN_CHIPS_MESSAGE = 'must be at least 1';

/**
 * A specification for a run about to be created or estimated: at least one grain in all, since a run
 * of none computes nothing yet is charged (0 at the origin is fine when further sources hold grains),
 * and a background that can stabilize at all (checkBackgroundCanStabilize).
 * runSpecSchema stays at 0, because it also reads back stored runs, jobs and run.json files written
 * before this rule.
 */
export const newRunSpecSchema = runSpecShapeSchema
  // negative counts get the same message as 0 (not "at least 0", which read as if 0 were fine)
  .extend({ chips: grainCount().min(0, NEW_RUN_MIN_CHIPS_MESSAGE) })
  .superRefine((spec, ctx) => {
    checkRenderAgainstBackground(spec, ctx);
    checkBackgroundCanStabilize(spec, ctx);
    if (spec.chips === 0 && spec.sources.every((s) => s.chips === 0)) ctx.addIssue({ code: 'custom', path: ['chips'], message: NEW_RUN_MIN_CHIPS_MESSAGE });
  });

/** One drawn view of a run: a layer in a palette, with the untoppled style it was drawn with. */
export interface RenderView {
  layer: Layer;
  palette: PaletteId;
  untoppled: UntoppledStyle;
}

/** Layers with cells that carry no value (never toppled), whose look the `untoppled` choice sets. */
export const layerHasMaskedCells = (layer: Layer): boolean => layer === 'toppled' || layer === 'odometer';

/**
 * Every pyramid a specification asks for, layer by layer. Layers without masked cells are always
 * drawn (and stored) in the neutral style, so their address does not depend on `untoppled`.
 */
export function renderViews(spec: { render?: RenderSpec }): RenderView[] {
  const r = spec.render ?? DEFAULT_RENDER;
  return r.layers.flatMap((layer) => r.palettes.map((palette) => ({ layer, palette, untoppled: layerHasMaskedCells(layer) ? r.untoppled : 'neutral' })));
}

/** The palette segment of a view's address: `<palette>` or `<palette>~clear` (renderer/src/render/keys.ts). */
export const viewPaletteSegment = (v: RenderView): string => `${v.palette}${v.untoppled === 'transparent' ? '~clear' : ''}`;
