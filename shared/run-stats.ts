import { z } from 'zod';

/**
 * Statistics of one stabilized run: written by the engine, stored by the API, shown by the web app.
 * In memory the unbounded counts are bigint; the JSON form (this schema) carries them as decimal strings
 * so no reader silently rounds a count above 2^53.
 */
const decimal = z.string().regex(/^-?\d+$/, 'expected an integer as a decimal string');
const axisRange = z.tuple([z.number().int(), z.number().int()]);

/**
 * Computed from the final state of every run and stored with it: a run is published only when
 * `passed`. Minimality is the burning-type peeling test (least action principle, arXiv:0901.3805);
 * it applies on lattices whose classes have as many in- as out-edges (every preset), and is null
 * elsewhere (there the odometer comes from legal topplings only, which never exceed the true one).
 */
export const certificateSchema = z.strictObject({
  /** every final height is below its site's threshold */
  stable: z.boolean(),
  /** every final height is at least 0 */
  nonNegative: z.boolean(),
  /** final grains minus background grains equal the grains added */
  massConserved: z.boolean(),
  /**
   * every height is its start plus the grains added there, minus what its topplings sent and plus
   * what its in-neighbours' topplings brought (optional: certificates stored before it existed lack it)
   */
  odometerMatches: z.boolean().optional(),
  /** the peeled set is empty: no set of toppled sites could topple once less and stay stable */
  minimal: z.boolean().nullable(),
  /** sites left in the peeled set (0 when minimal) */
  peeledSites: z.number().int().min(0),
  /** rounds of "topple S* once less" the fast path needed before this certificate passed */
  repairRounds: z.number().int().min(0),
  /**
   * how the odometer was computed: plain legal toppling, coarse-to-fine seeding, or (the line) closed-form
   * avalanches grain by grain and the balance solved for the odometer
   */
  method: z.enum(['legal', 'seeded', 'closed-form']),
  passed: z.boolean(),
});
export type Certificate = z.infer<typeof certificateSchema>;

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
  /** optional so statistics stored before certificates existed still parse */
  certificate: certificateSchema.optional(),
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
