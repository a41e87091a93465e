import { z } from 'zod';
import { newRunSpecSchema } from '../run-spec.js';

/** POST /api/estimates: what a run would cost before it is submitted (shared/estimate.ts), so the same rules as a new run. */
export const estimateRequestSchema = z.strictObject({ spec: newRunSpecSchema });
export type EstimateRequest = z.infer<typeof estimateRequestSchema>;
export type EstimateRequestInput = z.input<typeof estimateRequestSchema>;

export const estimateSchema = z.object({
  cells: z.number().int().min(1),
  shape: z.array(z.number().int().min(1)),
  radius: z.number().min(0),
  bytes: z.number().int().min(0),
  topplings: z.number().min(0),
  pyramids: z.number().int().min(0),
  computeSeconds: z.number().min(0),
  renderSeconds: z.number().min(0),
  seconds: z.number().min(0),
  credits: z.number().int().min(1),
  warnings: z.array(z.string()),
});
export type Estimate = z.infer<typeof estimateSchema>;

/**
 * A run the farm cannot compute (its working memory is beyond the machines'): the estimate's answer,
 * not a bad request, so it comes with 200; submitting such a run is refused (400) in the same words,
 * `spec: <reason>`.
 */
export const estimateRefusalSchema = z.object({
  /** the whole sentence, e.g. "this run needs about 14,901.2 GiB of working memory (…); use fewer grains" */
  reason: z.string().min(1),
  /** working memory the run needs, bytes */
  bytes: z.number().int().min(0),
  /** memory of the machines that compute it, bytes */
  limitBytes: z.number().int().min(0),
});
export type EstimateRefusal = z.infer<typeof estimateRefusalSchema>;

/** Either the prediction, or why the farm cannot do the run at all (bad input is a 400 instead). */
export const estimateResponseSchema = z.union([z.strictObject({ estimate: estimateSchema }), z.strictObject({ refused: estimateRefusalSchema })]);
export type EstimateResponse = z.infer<typeof estimateResponseSchema>;
