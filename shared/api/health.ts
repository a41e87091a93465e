import { z } from 'zod';

/** GET /api/health: liveness only, no database call. */
export const healthResponseSchema = z.object({ ok: z.literal(true), version: z.string() });
export type HealthResponse = z.infer<typeof healthResponseSchema>;

/** GET /api/health/ready: 200 when PostgreSQL and Redis answer, 503 otherwise. */
export const readyResponseSchema = z.object({
  ok: z.boolean(),
  postgres: z.boolean(),
  redis: z.boolean(),
  /** set when not ready, like every error body */
  error: z.string().optional(),
});
export type ReadyResponse = z.infer<typeof readyResponseSchema>;
