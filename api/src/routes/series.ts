import { asc, eq, sql } from 'drizzle-orm';
import { Router } from 'express';
import { createSeriesRequestSchema, seriesParamsSchema, seriesResponseSchema } from '../../../shared/api/series.js';
import { chipsLabel } from '../../../shared/counts.js';
import { runs, series, users } from '../../../drizzle/schema.js';
import { authOf, checkLabAccess, requireUser, requireVerified } from '../auth/middleware.js';
import type { AppDeps } from '../deps.js';
import { notFound } from '../http/http-error.js';
import { respond } from '../http/respond.js';
import { validate } from '../http/validate.js';
import { createRuns } from '../services/runs.js';
import { runView } from '../services/views.js';

export function seriesRouter({ db, queue, log }: AppDeps): Router {
  const r = Router();

  async function load(id: string) {
    const [row] = await db.select({ series, author: { id: users.id, name: users.name } }).from(series).innerJoin(users, eq(users.id, series.authorId)).where(eq(series.id, id));
    return row ?? null;
  }

  async function answer(status: number, res: Parameters<typeof respond>[0], id: string) {
    const row = (await load(id))!;
    const members = await db
      .select({ run: runs, author: { id: users.id, name: users.name } })
      .from(runs)
      .innerJoin(users, eq(users.id, runs.authorId))
      .where(eq(runs.seriesId, id))
      .orderBy(sql`(${runs.spec}->>'chips')::numeric`, asc(runs.id));
    respond(res, status, seriesResponseSchema, {
      series: {
        id: row.series.id,
        labId: row.series.labId,
        title: row.series.title,
        author: row.author,
        createdAt: row.series.createdAt.toISOString(),
        runs: members.map((m) => runView(m.run, m.author)),
      },
    });
  }

  r.post('/series', requireUser, requireVerified, async (req, res) => {
    const body = validate.body(req, createSeriesRequestSchema);
    const user = authOf(res).user;
    await checkLabAccess(db, user, body.labId, 'member');
    const chips = [...body.chips].sort((a, b) => a - b);
    const { seriesId } = await createRuns(
      { db, queue, log },
      user,
      body.labId,
      chips.map((n) => ({ title: `${body.title} · ${chipsLabel(n)}`, spec: { ...body.spec, chips: n } })),
      { series: { title: body.title } },
    );
    await answer(201, res, seriesId!);
  });

  r.get('/series/:id', requireUser, async (req, res) => {
    const { id } = validate.params(req, seriesParamsSchema);
    const missing = notFound('series not found');
    const row = await load(id);
    if (!row) throw missing;
    await checkLabAccess(db, authOf(res).user, row.series.labId, 'read', missing);
    await answer(200, res, id);
  });

  return r;
}
