/** Default site budget: 2^26 sites is about 0.9 GB of working arrays (4 B heights + 8 B odometer + state). */
export const DEFAULT_MAX_SITES = 2 ** 26;

/**
 * Grains moved from a source's reserve into its cell per round. Keeping every height below 2^31 lets the
 * working heights stay Int32 while n goes up to 2^53 - 1: adding grains in batches and stabilizing in
 * between ends in the same configuration (abelian property).
 */
export const RESERVE_BATCH = 2 ** 24;
