import { and, eq, inArray, isNull } from 'drizzle-orm';
import { runs } from '../../../drizzle/schema.js';
import type { Executor } from '../billing/ledger.js';
import type { BlobStore } from './blob-store.js';

/**
 * How much of the object store each run holds, kept in `runs.stored_bytes` / `stored_objects` so the
 * admin's storage and usage reports are sums over rows rather than one listing per run per request.
 *
 * The figure always comes from a listing of `runs/<id>/` taken right after a write or a deletion by
 * the one who made it (the worker after a checkpoint, the arrays and the pyramids; retention after
 * clearing), never from adding up puts: a retried job overwrites keys, and a listing counts each once.
 */

export type RunUsage = { bytes: number; objects: number };
export type RunUsageMap = Map<string, RunUsage>;

/** Everything of a run lives under this prefix (renderer/src/farm/artifacts.ts, renderer/src/render/keys.ts). */
export const runPrefix = (runId: string) => `runs/${runId}/`;

/**
 * List the run's prefix and store what it holds; for whoever has just written or deleted objects there.
 * The listing is taken while the run's row is locked, so two writers record in the order they listed:
 * a worker that lost its job and lists late cannot overwrite the newer figure of the one that took over.
 */
export async function recordRunUsage(ex: Executor, blobs: BlobStore, runId: string): Promise<RunUsage> {
  return ex.transaction(async (tx) => {
    await tx.select({ id: runs.id }).from(runs).where(eq(runs.id, runId)).for('update');
    const size = await blobs.usage(runPrefix(runId));
    await tx.update(runs).set({ storedBytes: size.bytes, storedObjects: size.objects }).where(eq(runs.id, runId));
    return size;
  });
}

/** After a writer failed to record: unknown rather than stale, so the next report lists it again. Best effort. */
export async function forgetRunUsage(ex: Executor, runId: string): Promise<void> {
  await ex.update(runs).set({ storedBytes: null, storedObjects: null }).where(eq(runs.id, runId));
}

/** Listings at once when filling unknown sizes: enough to hide latency, few enough for a small store. */
const LISTINGS_AT_ONCE = 8;

/**
 * The stored size of the given runs (every run when `runIds` is omitted), from their rows. Rows whose
 * size is unknown (null: written before the column existed) are listed once and filled in; the update
 * only touches rows still null, so a size a writer recorded meanwhile is never replaced by an older listing.
 */
export async function runUsageOf(deps: { db: Executor; blobs: BlobStore }, runIds?: string[]): Promise<RunUsageMap> {
  if (runIds && runIds.length === 0) return new Map();
  const rows = await deps.db
    .select({ id: runs.id, bytes: runs.storedBytes, objects: runs.storedObjects })
    .from(runs)
    .where(runIds ? inArray(runs.id, runIds) : undefined);
  const out: RunUsageMap = new Map();
  const unknown: string[] = [];
  for (const r of rows) {
    if (r.bytes === null || r.objects === null) unknown.push(r.id);
    else out.set(r.id, { bytes: r.bytes, objects: r.objects });
  }
  for (let i = 0; i < unknown.length; i += LISTINGS_AT_ONCE) {
    const batch = unknown.slice(i, i + LISTINGS_AT_ONCE);
    const sizes = await Promise.all(batch.map((id) => deps.blobs.usage(runPrefix(id))));
    for (const [k, id] of batch.entries()) {
      const size = sizes[k]!;
      out.set(id, size);
      await deps.db
        .update(runs)
        .set({ storedBytes: size.bytes, storedObjects: size.objects })
        .where(and(eq(runs.id, id), isNull(runs.storedBytes)));
    }
  }
  return out;
}

/**
 * recordRunUsage for a worker whose job must not fail over bookkeeping: when the listing or the
 * update fails, the size becomes unknown (null) if the database allows, so the next report lists the
 * run instead of showing a stale figure.
 */
export async function refreshRunUsage(ex: Executor, blobs: BlobStore, runId: string, log: (line: string) => void): Promise<void> {
  try {
    await recordRunUsage(ex, blobs, runId);
  } catch (err) {
    log(`its stored size could not be recorded (${(err as Error).message}); the storage report will list it`);
    await forgetRunUsage(ex, runId).catch(() => {});
  }
}
