import type { User } from '../../../shared/api/auth.js';
import type { Run } from '../../../shared/api/runs.js';
import type { RunSpec } from '../../../shared/run-spec.js';
import type { runs, users } from '../../../drizzle/schema.js';

/** Row → contract shapes. Pure, so every route answers the same shape for the same row. */

const iso = (d: Date | null) => (d ? d.toISOString() : null);

export function userView(u: typeof users.$inferSelect): User {
  return { id: u.id, email: u.email, name: u.name, emailVerified: u.emailVerifiedAt !== null, isAdmin: u.isAdmin };
}

export function runView(r: typeof runs.$inferSelect, author: { id: string; name: string }): Run {
  return {
    id: r.id,
    labId: r.labId,
    title: r.title,
    spec: r.spec,
    status: r.status,
    stage: r.stage,
    progress: r.progress,
    stats: r.stats ?? null,
    error: r.error,
    author,
    createdAt: r.createdAt.toISOString(),
    startedAt: iso(r.startedAt),
    finishedAt: iso(r.finishedAt),
    seriesId: r.seriesId,
    artifactsExpiredAt: iso(r.artifactsExpiredAt),
  };
}

/** A short lattice label for lists and filters: the preset, the periodic graph's name, or "periodic". */
export function latticeLabel(spec: RunSpec): string {
  const l = spec.lattice;
  return 'preset' in l ? l.preset : (l.name ?? 'periodic');
}
