import { createHash } from 'node:crypto';
import { and, eq } from 'drizzle-orm';
import { figureVersions, runs, type FigureFileRecord } from '../../drizzle/schema.js';
import { runStatsSchema } from '../../shared/run-stats.js';
import type { Harness } from './support/harness.js';

/**
 * Figure fixtures written straight to the database and the store, the way the worker would leave
 * them, for route tests that are not about computing (the farm tests print real runs).
 */

/** A finished square-lattice run with n = 16 grains: 9 topplings over 5 sites (regression value from an independent numpy run, computed only). */
export async function finishedRun(h: Harness, labId: string, authorId: string, title = 'sixteen grains', background: 'constant' | 'checkerboard' = 'constant'): Promise<string> {
  const stats = runStatsSchema.parse({
    lattice: 'square',
    chips: '16',
    shape: [7, 7],
    origin: [3, 3],
    grainsIn: '16',
    grainsOut: '16',
    toppledSites: 5,
    totalTopplings: '9',
    originOdometer: '5',
    bbox: [
      [-1, 1],
      [-1, 1],
    ],
    radiusEuclidean: 1,
    radiusLinf: 1,
    radiusOverSqrtN: 0.25,
    heightCounts: [1, 0, 4, 0],
    meanHeightToppled: 1.6,
    symmetric: true,
    seconds: 0.01,
  });
  const bg = background === 'constant' ? { kind: 'constant' as const, height: 0 } : { kind: 'checkerboard' as const, a: 0, b: 1 };
  const [r] = await h.deps.db
    .insert(runs)
    .values({ labId, authorId, title: `${title} ${h.tag}`, spec: { lattice: { preset: 'square' }, chips: 16, sources: [], background: bg } as never, status: 'finished', stats, finishedAt: new Date() })
    .returning();
  return r!.id;
}

/** Mark a version printed with one stored PNG, as print-run.ts would. */
export async function markReady(h: Harness, figureId: string, number: number, bytes = Buffer.from(`printed file ${figureId} v${number}`)): Promise<FigureFileRecord> {
  const name = `fixture-v${number}.png`;
  const key = `figures/${figureId}/v${number}/${name}`;
  await h.deps.blobs.put(key, bytes, 'image/png');
  const file: FigureFileRecord = { format: 'png', key, name, bytes: bytes.length, sha256: createHash('sha256').update(bytes).digest('hex'), widthPx: 1063, heightPx: 800 };
  const [v] = await h.deps.db
    .update(figureVersions)
    .set({ status: 'ready', files: [file], finishedAt: new Date() })
    .where(and(eq(figureVersions.figureId, figureId), eq(figureVersions.number, number)))
    .returning();
  if (!v) throw new Error(`no version ${number} to mark ready`);
  return file;
}
