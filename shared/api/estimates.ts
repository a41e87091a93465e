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
export const estimateResponseSchema = z.object({ estimate: estimateSchema });
export type EstimateResponse = z.infer<typeof estimateResponseSchema>;
