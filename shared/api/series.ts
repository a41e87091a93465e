import { z } from 'zod';
import { checkBackgroundCanStabilize, checkRenderAgainstBackground, chipsSchema, runSpecShapeSchema } from '../run-spec.js';
import { idSchema, isoDateSchema } from './errors.js';
import { runSchema, runTitleSchema } from './runs.js';

/** A series: one specification at several grain counts, shown side by side rescaled by n^(1/d), d its lattice's dimension. */
export const SERIES_MAX_RUNS = 12;

export const createSeriesRequestSchema = z.strictObject({
  labId: idSchema,
  title: runTitleSchema,
  /** the run specification without its grain count; each run gets one of `chips` */
  spec: runSpecShapeSchema.omit({ chips: true }).superRefine((spec, ctx) => {
    checkRenderAgainstBackground(spec, ctx);
    // every run of a series gets at least one grain, so the new-run rule applies to each
    checkBackgroundCanStabilize(spec, ctx);
  }),
  chips: z
    .array(chipsSchema.min(1, 'each grain count must be at least 1'))
    .min(2, 'a series needs at least 2 grain counts')
    .max(SERIES_MAX_RUNS, `a series has at most ${SERIES_MAX_RUNS} runs`)
    .refine((xs) => new Set(xs).size === xs.length, 'grain counts must be distinct'),
});
export type CreateSeriesRequest = z.infer<typeof createSeriesRequestSchema>;
export type CreateSeriesRequestInput = z.input<typeof createSeriesRequestSchema>;

export const seriesSchema = z.object({
  id: idSchema,
  labId: idSchema,
  title: z.string(),
  author: z.object({ id: idSchema, name: z.string() }),
  createdAt: isoDateSchema,
  /** ascending by grain count */
  runs: z.array(runSchema),
});
export type Series = z.infer<typeof seriesSchema>;

export const seriesParamsSchema = z.strictObject({ id: idSchema });
/** POST /api/series (201), GET /api/series/:id */
export const seriesResponseSchema = z.object({ series: seriesSchema });
export type SeriesResponse = z.infer<typeof seriesResponseSchema>;
