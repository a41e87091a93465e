import { z } from 'zod';
import { idSchema, isoDateSchema, pageSchema } from './errors.js';

/** Permanent-link slugs: lower-case words joined by hyphens. */
export const slugSchema = z.string().regex(/^[a-z0-9]+(?:-[a-z0-9]+)*$/, 'not a figure slug').max(120);

export const figureSchema = z.object({
  id: idSchema,
  slug: z.string(),
  title: z.string(),
  caption: z.string(),
  runId: idSchema,
  /** the lattice preset name, or the periodic graph's name ("periodic" when unnamed) */
  lattice: z.string(),
  /** the background kind from the run spec: constant, checkerboard, motif, random, annuli, array */
  background: z.string(),
  chips: z.number().int().min(0),
  /** null while unpublished (only lab members see those) */
  publishedAt: isoDateSchema.nullable(),
  authors: z.array(z.string()),
  labName: z.string(),
});
export type Figure = z.infer<typeof figureSchema>;

export const FIGURES_PAGE_SIZE = 24;
export const listFiguresQuerySchema = z.strictObject({
  lattice: z.string().min(1).max(64).optional(),
  background: z.string().min(1).max(32).optional(),
  page: pageSchema,
});
export type ListFiguresQuery = z.infer<typeof listFiguresQuerySchema>;
export type ListFiguresQueryInput = z.input<typeof listFiguresQuerySchema>;

export const listFiguresResponseSchema = z.object({ figures: z.array(figureSchema), total: z.number().int().min(0) });
export type ListFiguresResponse = z.infer<typeof listFiguresResponseSchema>;

export const figureParamsSchema = z.strictObject({ slug: slugSchema });
export const figureResponseSchema = z.object({ figure: figureSchema });
export type FigureResponse = z.infer<typeof figureResponseSchema>;
