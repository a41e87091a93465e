import { and, desc, eq, inArray, isNotNull, isNull } from 'drizzle-orm';
import { auditEvents, figures, labs, memberships, runs, users } from '../../../drizzle/schema.js';
import { RETENTION_RULE, type AdminStorageResponse } from '../../../shared/api/admin.js';
import type { Env } from '../../../shared/env.js';
import type { Db } from '../db/client.js';
import { htmlMail } from '../mail/layout.js';
import type { Mailer, MailMessage } from '../mail/mailer.js';
import { notFound, conflict } from '../http/http-error.js';
import { audit } from './audit.js';
import type { BlobStore } from '../storage/blob-store.js';

export type RunBytes = Map<string, { bytes: number; objects: number }>;

/** Runs listed at once when summing storage: enough to hide latency, few enough for a small store. */
const LISTINGS_AT_ONCE = 8;

/**
 * Bytes stored per run, one listing of `runs/<id>/` per run (with sizes, so no request per tile).
 * Per-run listings stay small and never walk objects that other runs are writing at that moment.
 */
export async function storedBytesByRun(deps: { db: Db; blobs: BlobStore }): Promise<RunBytes> {
  const ids = (await deps.db.select({ id: runs.id }).from(runs)).map((r) => r.id);
  const out: RunBytes = new Map();
  for (let i = 0; i < ids.length; i += LISTINGS_AT_ONCE) {
    const batch = ids.slice(i, i + LISTINGS_AT_ONCE);
    const sizes = await Promise.all(batch.map((id) => deps.blobs.usage(`runs/${id}/`)));
    batch.forEach((id, k) => sizes[k]!.objects > 0 && out.set(id, sizes[k]!));
  }
  return out;
}

const DAY = 86400_000;

/** When an unpublished run's artifacts go (pure): keepDays after it ended; never for published or unfinished runs. */
export function expiryOf(finishedAt: Date | null, published: boolean): Date | null {
  if (!finishedAt || published) return null;
  return new Date(finishedAt.getTime() + RETENTION_RULE.keepDays * DAY);
}

/** Whether the notice period has begun (pure). */
export function dueForNotice(expiresAt: Date | null, now: Date): boolean {
  return expiresAt !== null && expiresAt.getTime() - RETENTION_RULE.noticeDays * DAY <= now.getTime();
}

/** Storage per lab with each run's size, published state, end of retention and the notice already mailed. */
export async function storageReport(deps: { db: Db; blobs: BlobStore }, now = new Date()): Promise<AdminStorageResponse> {
  const bytes = await storedBytesByRun(deps);
  const rows = await deps.db
    .select({ id: runs.id, title: runs.title, labId: runs.labId, finishedAt: runs.finishedAt, labName: labs.name })
    .from(runs)
    .innerJoin(labs, eq(labs.id, runs.labId))
    .orderBy(desc(runs.createdAt));
  const published = new Set(
    (await deps.db.select({ runId: figures.runId }).from(figures).where(and(isNotNull(figures.publishedAt), isNull(figures.withdrawnAt)))).map((f) => f.runId),
  );
  const notices = new Map<string, Date>();
  for (const n of await deps.db.select({ subjectId: auditEvents.subjectId, at: auditEvents.at }).from(auditEvents).where(eq(auditEvents.action, 'retention.notice'))) {
    if (n.subjectId) notices.set(n.subjectId, n.at);
  }
  const allLabs = await deps.db.select({ id: labs.id, name: labs.name }).from(labs).orderBy(labs.name);
  const byLab = new Map(allLabs.map((l) => [l.id, { labId: l.id, name: l.name, bytes: 0, publishedBytes: 0, unpublishedBytes: 0, dueForNotice: 0, runs: [] as AdminStorageResponse['labs'][number]['runs'] }]));
  for (const r of rows) {
    const lab = byLab.get(r.labId)!;
    const size = bytes.get(r.id) ?? { bytes: 0, objects: 0 };
    const isPublished = published.has(r.id);
    const expiresAt = size.objects > 0 ? expiryOf(r.finishedAt, isPublished) : null;
    lab.bytes += size.bytes;
    if (isPublished) lab.publishedBytes += size.bytes;
    else lab.unpublishedBytes += size.bytes;
    if (dueForNotice(expiresAt, now)) lab.dueForNotice += 1;
    lab.runs.push({
      runId: r.id,
      title: r.title,
      bytes: size.bytes,
      objects: size.objects,
      published: isPublished,
      finishedAt: r.finishedAt?.toISOString() ?? null,
      expiresAt: expiresAt?.toISOString() ?? null,
      noticeMailedAt: notices.get(r.id)?.toISOString() ?? null,
    });
  }
  return { rule: { ...RETENTION_RULE }, labs: [...byLab.values()] };
}

export function retentionMail(publicUrl: string, to: string, labName: string, items: { title: string; expiresAt: string }[]): MailMessage {
  const lines = [
    `Some unpublished runs of ${labName} reach the end of their ${RETENTION_RULE.keepDays}-day storage period soon.`,
    ...items.map((i) => `• ${i.title}: tiles and arrays are deleted on ${i.expiresAt.slice(0, 10)}.`),
    'The runs themselves, their statistics and specifications stay, so any of them can be computed again. Publish a figure of a run to keep its artifacts for good.',
  ];
  const href = `${publicUrl}/runs`;
  return { to, subject: `Toppleworks: ${items.length} unpublished run${items.length === 1 ? '' : 's'} of ${labName} will be cleared`, text: `${lines.join('\n\n')}\n\n${href}\n`, html: htmlMail(lines, { href, label: 'Open the runs' }) };
}

/** Mail a lab's managers about its runs in the notice period, once per run; each notice is an audit event. */
export async function sendRetentionNotice(deps: { db: Db; env: Env; mailer: Mailer; blobs: BlobStore }, labId: string, actorId: string, now = new Date()) {
  const report = await storageReport(deps, now);
  const lab = report.labs.find((l) => l.labId === labId);
  if (!lab) throw notFound('lab not found');
  const due = lab.runs.filter((r) => r.noticeMailedAt === null && dueForNotice(r.expiresAt ? new Date(r.expiresAt) : null, now));
  if (due.length === 0) throw conflict('no unpublished run of this lab is within its notice period without a notice already mailed');
  const managers = await deps.db
    .select({ email: users.email })
    .from(memberships)
    .innerJoin(users, eq(users.id, memberships.userId))
    .where(and(eq(memberships.labId, labId), inArray(memberships.role, ['manager'])));
  if (managers.length === 0) throw conflict('the lab has no manager to mail');
  for (const m of managers) await deps.mailer.send(retentionMail(deps.env.PUBLIC_URL, m.email, lab.name, due.map((r) => ({ title: r.title, expiresAt: r.expiresAt! }))));
  await deps.db.transaction(async (tx) => {
    for (const r of due) {
      await audit(tx, { actorId, labId, action: 'retention.notice', subjectType: 'run', subjectId: r.runId, detail: { expiresAt: r.expiresAt, mailedTo: managers.map((m) => m.email) } });
    }
  });
  return { mailedTo: managers.map((m) => m.email), runs: due.length };
}
