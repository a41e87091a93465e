import { z } from 'zod';

/**
 * Statistics of one stabilized run: written by the engine, stored by the API, shown by the web app.
 * In memory the unbounded counts are bigint; the JSON form (this schema) carries them as decimal strings
 * so no reader silently rounds a count above 2^53.
 */
const decimal = z.string().regex(/^-?\d+$/, 'expected an integer as a decimal string');
const axisRange = z.tuple([z.number().int(), z.number().int()]);

export const runStatsSchema = z.strictObject({
  lattice: z.string(),
  /** grains at the origin (the spec's n) */
  chips: decimal,
  /** array shape, array axis order: (W), (H, W) or (D, H, W) */
  shape: z.array(z.number().int().min(1)).min(1).max(3),
  /** array index of the lattice origin, array axis order */
  origin: z.array(z.number().int()).min(1).max(3),
  /** all grains added by the sources */
  grainsIn: decimal,
  /** final grains minus background grains: equals grainsIn on the infinite lattice (mass check) */
  grainsOut: decimal,
  toppledSites: z.number().int().min(0),
  totalTopplings: decimal,
  originOdometer: decimal,
  /** per array axis, min and max offset of toppled sites from the origin; null when nothing toppled */
  bbox: z.array(axisRange).nullable(),
  radiusEuclidean: z.number().min(0),
  radiusLinf: z.number().int().min(0),
  /** radiusEuclidean / sqrt(grainsIn); null when no grains were added */
  radiusOverSqrtN: z.number().nullable(),
  /** heightCounts[h] = number of toppled sites with final height h */
  heightCounts: z.array(z.number().int().min(0)),
  meanHeightToppled: z.number().nullable(),
  /** whether the lattice graph is undirected (every edge listed both ways) */
  symmetric: z.boolean(),
  seconds: z.number().min(0),
});
export type RunStatsJson = z.infer<typeof runStatsSchema>;

type BigFields = 'chips' | 'grainsIn' | 'grainsOut' | 'totalTopplings' | 'originOdometer';
export type RunStats = Omit<RunStatsJson, BigFields> & Record<BigFields, bigint>;

const BIG: BigFields[] = ['chips', 'grainsIn', 'grainsOut', 'totalTopplings', 'originOdometer'];

export function runStatsToJSON(s: RunStats): RunStatsJson {
  const out: Record<string, unknown> = { ...s };
  for (const k of BIG) out[k] = s[k].toString();
  return runStatsSchema.parse(out);
}

export function runStatsFromJSON(json: unknown): RunStats {
  const j = runStatsSchema.parse(json);
  const out: Record<string, unknown> = { ...j };
  for (const k of BIG) out[k] = BigInt(j[k]);
  return out as RunStats;
}
