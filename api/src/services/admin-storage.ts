import { desc, eq } from 'drizzle-orm';
import { labs, runs } from '../../../drizzle/schema.js';
import { RETENTION_RULE, type AdminStorageResponse } from '../../../shared/api/admin.js';
import type { Db } from '../db/client.js';
import { notFound, conflict } from '../http/http-error.js';
import type { BlobStore } from '../storage/blob-store.js';
import { runUsageOf } from '../storage/run-usage.js';
import { dueForNotice, expiryOf, keptRunIds, mailRetentionNotices, noticesOf, removalDateOf, type RetentionDeps } from './admin-retention.js';

/**
 * Storage per lab with each run's size (from the runs' rows: only sizes not known yet are listed),
 * whether a published figure keeps it, when its artifacts go (the end of retention, or later when
 * the notice came late) and the notice already mailed.
 */
export async function storageReport(deps: { db: Db; blobs: BlobStore }, now = new Date()): Promise<AdminStorageResponse> {
  const bytes = await runUsageOf(deps);
  const rows = await deps.db
    .select({ id: runs.id, title: runs.title, labId: runs.labId, finishedAt: runs.finishedAt, expiredAt: runs.artifactsExpiredAt, labName: labs.name })
    .from(runs)
    .innerJoin(labs, eq(labs.id, runs.labId))
    .orderBy(desc(runs.createdAt));
  const kept = await keptRunIds(deps.db);
  const notices = await noticesOf(deps.db);
  const allLabs = await deps.db.select({ id: labs.id, name: labs.name }).from(labs).orderBy(labs.name);
  const byLab = new Map(allLabs.map((l) => [l.id, { labId: l.id, name: l.name, bytes: 0, publishedBytes: 0, unpublishedBytes: 0, dueForNotice: 0, runs: [] as AdminStorageResponse['labs'][number]['runs'] }]));
  for (const r of rows) {
    const lab = byLab.get(r.labId)!;
    const size = bytes.get(r.id) ?? { bytes: 0, objects: 0 };
    const isKept = kept.has(r.id);
    const end = size.objects > 0 && !r.expiredAt ? expiryOf(r.finishedAt, isKept) : null;
    const noticeAt = notices.get(r.id) ?? null;
    const expiresAt = end ? (removalDateOf(end, noticeAt) ?? end) : null;
    lab.bytes += size.bytes;
    if (isKept) lab.publishedBytes += size.bytes;
    else lab.unpublishedBytes += size.bytes;
    if (dueForNotice(end, now)) lab.dueForNotice += 1;
    if (size.objects === 0 && !r.expiredAt) continue;
    lab.runs.push({
      runId: r.id,
      title: r.title,
      bytes: size.bytes,
      objects: size.objects,
      published: isKept,
      finishedAt: r.finishedAt?.toISOString() ?? null,
      expiresAt: expiresAt?.toISOString() ?? null,
      noticeMailedAt: noticeAt?.toISOString() ?? null,
      artifactsExpiredAt: r.expiredAt?.toISOString() ?? null,
    });
  }
  return { rule: { ...RETENTION_RULE }, labs: [...byLab.values()] };
}

/** The admin's "mail the managers" button: the same notice the sweep sends, waiting for a sweep mailing the lab at that moment. */
export async function sendRetentionNotice(deps: RetentionDeps, labId: string, actorId: string, now = new Date()) {
  const sent = await mailRetentionNotices(deps, labId, actorId, { now, wait: true });
  if (!sent) throw notFound('lab not found');
  if (sent.runs === 0) throw conflict('no unpublished run of this lab is within its notice period without a notice already mailed');
  return { mailedTo: sent.mailedTo, runs: sent.runs };
}
