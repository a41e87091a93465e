import { z } from 'zod';

/**
 * The radial profile the worker stores in a run's run.json (renderer/src/analysis/radial-profile.ts)
 * and the run page plots: mean final height of toppled sites in bins of the rescaled distance.
 */
export const radialProfileSchema = z.object({
  /**
   * The length the distance is divided by: 'natural' is the pile's own n^(1/d) (shared/natural-scale.ts);
   * profiles stored before the field existed were binned by √n whatever the dimension.
   */
  unit: z.enum(['natural', 'sqrt-n']).default('sqrt-n'),
  /** width of each bin in that unit */
  binWidth: z.number().positive(),
  /** mean height of the sites in each bin (null where a bin holds no site) */
  meanHeight: z.array(z.number().nullable()),
  /** sites in each bin */
  sites: z.array(z.number().int().min(0)),
});
export type RadialProfile = z.infer<typeof radialProfileSchema>;
export type RadialProfileInput = z.input<typeof radialProfileSchema>;
