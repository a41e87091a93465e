import { asc, sql } from 'drizzle-orm';
import { Router } from 'express';
import { adminLabsResponseSchema, adminUsersResponseSchema } from '../../../shared/api/admin.js';
import { labs, users } from '../../../drizzle/schema.js';
import { requireAdmin, requireUser } from '../auth/middleware.js';
import type { AppDeps } from '../deps.js';
import { respond } from '../http/respond.js';

export function adminRouter({ db }: AppDeps): Router {
  const r = Router();
  r.use('/admin', requireUser, requireAdmin);

  r.get('/admin/labs', async (_req, res) => {
    const rows = await db
      .select({
        id: labs.id,
        name: labs.name,
        createdAt: labs.createdAt,
        // drizzle writes columns inside sql`` unqualified, which a correlated subquery would bind to its own table
        members: sql<number>`(select count(*)::int from "memberships" m where m."lab_id" = "labs"."id")`,
        runs: sql<number>`(select count(*)::int from "runs" r where r."lab_id" = "labs"."id")`,
      })
      .from(labs)
      .orderBy(asc(labs.name));
    respond(res, 200, adminLabsResponseSchema, { labs: rows.map((l) => ({ ...l, createdAt: l.createdAt.toISOString() })) });
  });

  r.get('/admin/users', async (_req, res) => {
    const rows = await db
      .select({
        id: users.id,
        email: users.email,
        name: users.name,
        isAdmin: users.isAdmin,
        createdAt: users.createdAt,
        labs: sql<string[]>`coalesce((select array_agg(l."name" order by l."name") from "memberships" m join "labs" l on l."id" = m."lab_id" where m."user_id" = "users"."id"), '{}')`,
      })
      .from(users)
      .orderBy(asc(users.email));
    respond(res, 200, adminUsersResponseSchema, { users: rows.map((u) => ({ ...u, createdAt: u.createdAt.toISOString() })) });
  });

  return r;
}
