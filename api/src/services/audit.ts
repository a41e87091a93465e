import { auditEvents } from '../../../drizzle/schema.js';
import type { Db } from '../db/client.js';

export type AuditEntry = {
  actorId: string | null;
  labId?: string | null;
  /** dotted verb, e.g. "lab.create", "run.cancel" */
  action: string;
  subjectType?: string;
  subjectId?: string;
  reason?: string | null;
  detail?: Record<string, unknown>;
};

type Executor = Pick<Db, 'insert'>;

/** Append one event; pass the transaction so the event commits with the change it describes. */
export async function audit(db: Executor, entry: AuditEntry): Promise<void> {
  await db.insert(auditEvents).values({
    actorId: entry.actorId,
    labId: entry.labId ?? null,
    action: entry.action,
    subjectType: entry.subjectType ?? null,
    subjectId: entry.subjectId ?? null,
    reason: entry.reason ?? null,
    detail: entry.detail ?? null,
  });
}
