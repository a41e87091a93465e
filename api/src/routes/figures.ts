import { and, count, desc, eq, isNotNull, isNull, sql, type SQL } from 'drizzle-orm';
import { Router } from 'express';
import { figureParamsSchema, figureResponseSchema, FIGURES_PAGE_SIZE, listFiguresQuerySchema, listFiguresResponseSchema, type Figure } from '../../../shared/api/figures.js';
import { figures, labs, runs, users } from '../../../drizzle/schema.js';
import { checkLabAccess } from '../auth/middleware.js';
import type { AppDeps } from '../deps.js';
import { notFound } from '../http/http-error.js';
import { respond } from '../http/respond.js';
import { validate } from '../http/validate.js';
import { latticeLabel } from '../services/views.js';

export function figuresRouter({ db }: AppDeps): Router {
  const r = Router();

  const creator = sql<string>`(select ${users.name} from ${users} where ${users.id} = ${figures.createdById})`;
  const select = () =>
    db
      .select({ figure: figures, run: runs, labName: labs.name, author: users.name, creator })
      .from(figures)
      .innerJoin(runs, eq(runs.id, figures.runId))
      .innerJoin(labs, eq(labs.id, runs.labId))
      .innerJoin(users, eq(users.id, runs.authorId));
  type Row = Awaited<ReturnType<ReturnType<typeof select>['execute']>>[number];

  const view = ({ figure, run, labName, author, creator }: Row): Figure => ({
    id: figure.id,
    slug: figure.slug,
    title: figure.title,
    caption: figure.caption,
    runId: run.id,
    lattice: latticeLabel(run.spec),
    background: run.spec.background.kind,
    chips: run.spec.chips,
    publishedAt: figure.publishedAt?.toISOString() ?? null,
    // the run's author first, then whoever composed the figure if that is someone else
    authors: [...new Set([author, creator])],
    labName,
  });

  const published = and(isNotNull(figures.publishedAt), isNull(figures.withdrawnAt));

  r.get('/figures', async (req, res) => {
    const q = validate.query(req, listFiguresQuerySchema);
    const filters: (SQL | undefined)[] = [published];
    if (q.lattice) filters.push(sql`(${runs.spec}->'lattice'->>'preset' = ${q.lattice} or ${runs.spec}->'lattice'->>'name' = ${q.lattice})`);
    if (q.background) filters.push(sql`${runs.spec}->'background'->>'kind' = ${q.background}`);
    const where = and(...filters);
    const [rows, [total]] = await Promise.all([
      select().where(where).orderBy(desc(figures.publishedAt), desc(figures.id)).limit(FIGURES_PAGE_SIZE).offset((q.page - 1) * FIGURES_PAGE_SIZE),
      db.select({ n: count() }).from(figures).innerJoin(runs, eq(runs.id, figures.runId)).where(where),
    ]);
    respond(res, 200, listFiguresResponseSchema, { figures: rows.map(view), total: total!.n });
  });

  r.get('/figures/:slug', async (req, res) => {
    const { slug } = validate.params(req, figureParamsSchema);
    const missing = notFound('figure not found');
    const [row] = await select().where(eq(figures.slug, slug));
    if (!row) throw missing;
    const isPublic = row.figure.publishedAt !== null && row.figure.withdrawnAt === null;
    if (!isPublic) {
      // drafts and withdrawn figures: only the lab (and admins) may look
      const user = res.locals.auth?.user;
      if (!user) throw missing;
      await checkLabAccess(db, user, row.run.labId, 'read', missing);
    }
    respond(res, 200, figureResponseSchema, { figure: view(row) });
  });

  return r;
}
