import { and, desc, eq, gte, like, lt, or, sql } from 'drizzle-orm';
import { alias } from 'drizzle-orm/pg-core';
import { auditEvents, figures, labs, runs, series, users } from '../../../drizzle/schema.js';
import type { AuditEvent, auditQuerySchema } from '../../../shared/api/admin.js';
import type { z } from 'zod';
import type { Db } from '../db/client.js';
import { toCsv } from './admin-csv.js';

type AuditQuery = z.output<typeof auditQuerySchema>;

const subjectUser = alias(users, 'subject_user');
/** the event is about this person */
const aboutPerson = (id: string) => and(eq(auditEvents.subjectType, 'user'), eq(auditEvents.subjectId, id));

const nextDay = (day: string) => new Date(Date.parse(`${day}T00:00:00Z`) + 86400_000);

/** The trail, newest first, filtered by lab, actor, person (actor or subject), kind (an action or a "prefix.") and UTC dates (both ends included). */
export async function auditTrail(db: Db, q: AuditQuery): Promise<AuditEvent[]> {
  const kind = q.kind ? (q.kind.endsWith('.') ? like(auditEvents.action, `${q.kind}%`) : eq(auditEvents.action, q.kind)) : undefined;
  const rows = await db
    .select({ e: auditEvents, actorName: users.name, labName: labs.name, personName: subjectUser.name, figure: { title: figures.title, slug: figures.slug }, runTitle: runs.title, seriesTitle: series.title })
    .from(auditEvents)
    .leftJoin(users, eq(users.id, auditEvents.actorId))
    .leftJoin(labs, eq(labs.id, auditEvents.labId))
    .leftJoin(subjectUser, and(eq(auditEvents.subjectType, 'user'), eq(sql`${subjectUser.id}::text`, auditEvents.subjectId)))
    .leftJoin(figures, and(eq(auditEvents.subjectType, 'figure'), eq(sql`${figures.id}::text`, auditEvents.subjectId)))
    .leftJoin(runs, and(eq(auditEvents.subjectType, 'run'), eq(sql`${runs.id}::text`, auditEvents.subjectId)))
    .leftJoin(series, and(eq(auditEvents.subjectType, 'series'), eq(sql`${series.id}::text`, auditEvents.subjectId)))
    .where(
      and(
        q.labId ? eq(auditEvents.labId, q.labId) : undefined,
        q.actorId ? eq(auditEvents.actorId, q.actorId) : undefined,
        q.personId ? or(eq(auditEvents.actorId, q.personId), aboutPerson(q.personId)) : undefined,
        kind,
        q.from ? gte(auditEvents.at, new Date(`${q.from}T00:00:00Z`)) : undefined,
        q.to ? lt(auditEvents.at, nextDay(q.to)) : undefined,
      ),
    )
    .orderBy(desc(auditEvents.at), desc(auditEvents.id))
    .limit(q.limit);
  return rows.map(({ e, actorName, labName, personName, figure, runTitle, seriesTitle }) => ({
    id: e.id,
    at: e.at.toISOString(),
    actorId: e.actorId,
    actorName,
    labId: e.labId,
    labName,
    action: e.action,
    subjectType: e.subjectType,
    subjectId: e.subjectId,
    subjectName: personName ?? figure?.title ?? runTitle ?? seriesTitle ?? null,
    // site admins read every figure's lab page, drafts and withdrawn ones included (figureAccess)
    // and every run's and series' page (lab access in read mode lets site admins in: checkLabAccess)
    subjectHref: figure || runTitle !== null || seriesTitle !== null ? subjectHref(e.subjectType, e.subjectId, figure?.slug ?? null) : null,
    reason: e.reason,
    detail: (e.detail as Record<string, unknown> | null) ?? null,
  }));
}

/** The page of an event's subject that still exists, for the kinds that have one (a figure's address is its slug). */
function subjectHref(type: string | null, id: string | null, figureSlug: string | null): string | null {
  if (type === 'figure') return figureSlug === null ? null : `/lab/figures/${encodeURIComponent(figureSlug)}`;
  if (id === null) return null;
  return type === 'run' ? `/runs/${id}` : type === 'series' ? `/series/${id}` : null;
}

/** Every action name recorded so far, for the kind filter. */
export async function auditKinds(db: Db): Promise<string[]> {
  const rows = await db.selectDistinct({ action: auditEvents.action }).from(auditEvents).orderBy(sql`1`);
  return rows.map((r) => r.action);
}

export function auditCsv(events: AuditEvent[]): string {
  return toCsv(
    ['id', 'at', 'actor_id', 'actor', 'lab_id', 'lab', 'action', 'subject_type', 'subject_id', 'subject', 'reason', 'detail'],
    events.map((e) => [e.id, e.at, e.actorId, e.actorName, e.labId, e.labName, e.action, e.subjectType, e.subjectId, e.subjectName, e.reason, e.detail ? JSON.stringify(e.detail) : null]),
  );
}
