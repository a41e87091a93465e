import { and, count, desc, eq, isNotNull, isNull, sql, type SQL } from 'drizzle-orm';
import { Router } from 'express';
import {
  createFigureRequestSchema,
  figureFileParamsSchema,
  figureParamsSchema,
  figureResponseSchema,
  figureVersionResponseSchema,
  FIGURES_PAGE_SIZE,
  labFiguresParamsSchema,
  labFiguresResponseSchema,
  listFiguresQuerySchema,
  listFiguresResponseSchema,
  orderPrintRequestSchema,
  updateFigureRequestSchema,
  type Figure,
} from '../../../shared/api/figures.js';
import { JOB_NAMES, jobIdFor } from '../../../shared/jobs.js';
import { specWithCaption } from '../../../shared/print-spec.js';
import { dispatchNow, recordJobs } from '../queue/outbox.js';
import { figures, figureVersions, runs } from '../../../drizzle/schema.js';
import { authOf, checkLabAccess, requireUser, requireVerified } from '../auth/middleware.js';
import type { AppDeps } from '../deps.js';
import { uniqueAs } from '../db/errors.js';
import { badRequest, conflict, notFound } from '../http/http-error.js';
import { respond } from '../http/respond.js';
import { validate } from '../http/validate.js';
import { lockRunsForPublication } from '../services/admin-retention.js';
import { audit } from '../services/audit.js';
import {
  blockingWarnings,
  captionAfter,
  compositionRuns,
  figureAccess,
  figureDetail,
  figureMissing,
  freeSlug,
  isPublic,
  labFigureView,
  loadFigure,
  readerFigureView,
  selectFigures,
  slugFrom,
  specOf,
  versionView,
  type FigureRow,
} from '../services/figures.js';

/**
 * Figures: composing from a lab's finished runs, print orders (each a numbered version printed by
 * the farm), publishing with a permanent link that keeps answering after it is withdrawn, the
 * public index, and downloads through presigned, expiring addresses.
 */
export function figuresRouter({ db, queue, blobs, log }: AppDeps): Router {
  const r = Router();

  const publicView = (row: FigureRow): Figure => {
    const { labId: _l, withdrawnAt: _w, latestVersion: _v, newestStatus: _s, publishedVersion: _p, ...entry } = readerFigureView(row);
    return entry;
  };

  async function editable(slug: string, res: Parameters<typeof authOf>[0]): Promise<FigureRow> {
    const row = await loadFigure(db, slug);
    if (!row) throw figureMissing();
    await figureAccess(db, res, row, 'member');
    return row;
  }

  const published = and(isNotNull(figures.publishedAt), isNull(figures.withdrawnAt));

  r.get('/figures', async (req, res) => {
    const q = validate.query(req, listFiguresQuerySchema);
    // conditions on one panel's run (alias pr): a figure of four backgrounds side by side, or of
    // n = 10^5 … 10^8, is found by any of its panels, not only by its first
    const panel: SQL[] = [];
    if (q.lattice === 'periodic') panel.push(sql`pr.spec->'lattice' ? 'periodic'`);
    else if (q.lattice) panel.push(sql`(pr.spec->'lattice'->>'preset' = ${q.lattice} or pr.spec->'lattice'->>'name' = ${q.lattice})`);
    if (q.background) panel.push(sql`pr.spec->'background'->>'kind' = ${q.background}`);
    if (q.nMin !== undefined) panel.push(sql`(pr.spec->>'chips')::numeric >= ${q.nMin}`);
    if (q.nMax !== undefined) panel.push(sql`(pr.spec->>'chips')::numeric <= ${q.nMax}`);
    const filters: (SQL | undefined)[] = [published];
    if (panel.length > 0) {
      filters.push(sql`exists (select 1 from ${runs} as pr where (pr.id = ${figures.runId}
        or pr.id::text in (select p->>'runId' from jsonb_array_elements(coalesce(${figures.spec}->'panels', '[]'::jsonb)) as p))
        and ${sql.join(panel, sql` and `)})`);
    }
    const where = and(...filters);
    const [rows, [total]] = await Promise.all([
      selectFigures(db).where(where).orderBy(desc(figures.publishedAt), desc(figures.id)).limit(FIGURES_PAGE_SIZE).offset((q.page - 1) * FIGURES_PAGE_SIZE),
      db.select({ n: count() }).from(figures).innerJoin(runs, eq(runs.id, figures.runId)).where(where),
    ]);
    respond(res, 200, listFiguresResponseSchema, { figures: rows.map(publicView), total: total!.n });
  });

  /** Every figure of a lab, drafts and withdrawn ones included. */
  r.get('/labs/:labId/figures', requireUser, async (req, res) => {
    const { labId } = validate.params(req, labFiguresParamsSchema);
    await checkLabAccess(db, authOf(res).user, labId, 'read');
    const rows = await selectFigures(db).where(eq(runs.labId, labId)).orderBy(desc(figures.updatedAt), desc(figures.id));
    respond(res, 200, labFiguresResponseSchema, { figures: rows.map(labFigureView) });
  });

  r.get('/figures/:slug', async (req, res) => {
    const { slug } = validate.params(req, figureParamsSchema);
    const row = await loadFigure(db, slug);
    if (!row) throw figureMissing();
    const { figure } = row;
    if (figure.withdrawnAt && figure.publishedAt) {
      // the permanent link keeps answering: readers learn it was withdrawn, its lab still manages it
      const user = res.locals.auth?.user;
      const access = user ? await checkLabAccess(db, user, row.run.labId, 'read').catch(() => null) : null;
      if (!access) {
        return respond(res, 200, figureResponseSchema, { withdrawn: true, slug: figure.slug, title: readerFigureView(row).title, withdrawnAt: figure.withdrawnAt.toISOString() });
      }
      return respond(res, 200, figureResponseSchema, { withdrawn: false, figure: await figureDetail(db, row, access.role !== null, true) });
    }
    const { canEdit, insider } = await figureAccess(db, res, row, 'read');
    respond(res, 200, figureResponseSchema, { withdrawn: false, figure: await figureDetail(db, row, canEdit, insider) });
  });

  r.post('/figures', requireUser, requireVerified, async (req, res) => {
    const body = validate.body(req, createFigureRequestSchema);
    const user = authOf(res).user;
    await checkLabAccess(db, user, body.labId, 'member');
    await compositionRuns(db, body.labId, body.spec);
    // one caption: shown on the reader page and printed under the panels
    const caption = captionAfter(body.caption, body.spec, '');
    const row = await db
      .transaction(async (tx) => {
        const slug = body.slug ?? (await freeSlug(tx, slugFrom(body.title)));
        const [f] = await tx
          .insert(figures)
          .values({ slug, title: body.title, caption, runId: body.spec.panels[0]!.runId, createdById: user.id, spec: specWithCaption(body.spec, caption) })
          .returning();
        await audit(tx, { actorId: user.id, labId: body.labId, action: 'figure.create', subjectType: 'figure', subjectId: f!.id, detail: { slug } });
        return f!;
      })
      .catch(uniqueAs(conflict('that permanent link is taken; choose another slug')));
    const loaded = (await loadFigure(db, row.slug))!;
    respond(res, 201, figureResponseSchema, { withdrawn: false, figure: await figureDetail(db, loaded, true) });
  });

  r.put('/figures/:slug', requireUser, requireVerified, async (req, res) => {
    const { slug } = validate.params(req, figureParamsSchema);
    const body = validate.body(req, updateFigureRequestSchema);
    const row = await editable(slug, res);
    const user = authOf(res).user;
    if (body.spec) {
      await compositionRuns(db, row.run.labId, body.spec);
      // the lead run decides the lab and the reader's deep zoom; it may change, the lab may not. Once
      // published, every version's link zooms into it, so it stays.
      if (body.spec.panels[0]!.runId !== row.figure.runId && row.figure.publishedAt) {
        throw conflict('a figure that has been published keeps its first panel\'s run, which its permanent link zooms into; compose a new figure for another run');
      }
    }
    const caption = captionAfter(body.caption, body.spec, row.figure.caption);
    const spec = body.spec ?? row.figure.spec;
    await db.transaction(async (tx) => {
      await tx
        .update(figures)
        .set({
          title: body.title ?? row.figure.title,
          caption,
          spec: spec ? specWithCaption(spec, caption) : null,
          runId: body.spec ? body.spec.panels[0]!.runId : row.figure.runId,
          updatedAt: new Date(),
        })
        .where(eq(figures.id, row.figure.id));
      await audit(tx, { actorId: user.id, labId: row.run.labId, action: 'figure.edit', subjectType: 'figure', subjectId: row.figure.id, detail: { fields: Object.keys(body) } });
    });
    respond(res, 200, figureResponseSchema, { withdrawn: false, figure: await figureDetail(db, (await loadFigure(db, slug))!, true) });
  });

  /** Order a print of the current composition: a new numbered version, printed by the farm. */
  r.post('/figures/:slug/versions', requireUser, requireVerified, async (req, res) => {
    const { slug } = validate.params(req, figureParamsSchema);
    const body = validate.body(req, orderPrintRequestSchema);
    const row = await editable(slug, res);
    const user = authOf(res).user;
    const spec = specOf(row.figure);
    const used = await compositionRuns(db, row.run.labId, spec);
    const blocking = blockingWarnings(spec, used);
    if (blocking.length > 0) throw badRequest(`this figure cannot be printed as composed: ${blocking.map((w) => w.message).join('; ')}`);
    const formats = [...new Set(body.formats)];
    const version = await db
      .transaction(async (tx) => {
        // the figure row is the lock that numbers versions one after another
        await tx.execute(sql`select 1 from ${figures} where ${figures.id} = ${row.figure.id} for update`);
        const [{ next }] = (await tx
          .select({ next: sql<number>`coalesce(max(${figureVersions.number}), 0) + 1` })
          .from(figureVersions)
          .where(eq(figureVersions.figureId, row.figure.id))) as [{ next: number }];
        // the title and caption go with the print, so publishing it later shows readers exactly what it printed
        const [v] = await tx
          .insert(figureVersions)
          .values({ figureId: row.figure.id, number: Number(next), spec, title: row.figure.title, caption: row.figure.caption, formats, orderedById: user.id })
          .returning();
        await audit(tx, { actorId: user.id, labId: row.run.labId, action: 'figure.order', subjectType: 'figure', subjectId: row.figure.id, detail: { version: v!.number, formats } });
        // the print job is recorded with the version (queue/outbox.ts), so Redis being away loses no order
        await recordJobs(tx, queue, [{ name: JOB_NAMES.printFigure, data: { versionId: v!.id } }]);
        return v!;
      });
    // sent after the commit, so the worker always finds the row; while Redis is away the outbox keeps it
    await dispatchNow({ db, queue, log }, [jobIdFor({ name: JOB_NAMES.printFigure, data: { versionId: version.id } })]);
    respond(res, 202, figureVersionResponseSchema, { version: versionView(slug, { ...version, orderedBy: user.name }, row.figure.title) });
  });

  /**
   * Publish the newest ready version: readers then see exactly its title, caption and print. Edits
   * made since stay a draft of the lab until they are printed and published as a newer version.
   */
  r.post('/figures/:slug/publish', requireUser, requireVerified, async (req, res) => {
    const { slug } = validate.params(req, figureParamsSchema);
    const row = await editable(slug, res);
    const user = authOf(res).user;
    await db.transaction(async (tx) => {
      // the figure row is the lock: two publishes (or a publish and an unpublish) take turns
      const [figure] = await tx.select().from(figures).where(eq(figures.id, row.figure.id)).for('update');
      const [newest] = await tx
        .select()
        .from(figureVersions)
        .where(and(eq(figureVersions.figureId, row.figure.id), eq(figureVersions.status, 'ready')))
        .orderBy(desc(figureVersions.number))
        .limit(1);
      if (!newest) throw conflict('order a print and wait until it is ready before publishing: readers download the printed files');
      if (isPublic(figure!) && newest.publishedAt) {
        throw conflict(`version ${newest.number} is already published; to publish changes, print again and publish the new version once it is ready`);
      }
      await lockRunsForPublication(tx, row.figure.id);
      const now = new Date();
      if (!newest.publishedAt) await tx.update(figureVersions).set({ publishedAt: now }).where(eq(figureVersions.id, newest.id));
      // the first publication date stays: citations give its year
      await tx.update(figures).set({ publishedAt: figure!.publishedAt ?? now, withdrawnAt: null, updatedAt: now }).where(eq(figures.id, row.figure.id));
      await audit(tx, { actorId: user.id, labId: row.run.labId, action: 'figure.publish', subjectType: 'figure', subjectId: row.figure.id, detail: { version: newest.number } });
    });
    respond(res, 200, figureResponseSchema, { withdrawn: false, figure: await figureDetail(db, (await loadFigure(db, slug))!, true) });
  });

  /** Withdraw a published figure: the link answers "withdrawn", the lab keeps everything. */
  r.post('/figures/:slug/unpublish', requireUser, requireVerified, async (req, res) => {
    const { slug } = validate.params(req, figureParamsSchema);
    const row = await editable(slug, res);
    if (!isPublic(row.figure)) throw conflict('the figure is not published');
    const user = authOf(res).user;
    await db.transaction(async (tx) => {
      await tx.update(figures).set({ withdrawnAt: new Date(), updatedAt: new Date() }).where(eq(figures.id, row.figure.id));
      await audit(tx, { actorId: user.id, labId: row.run.labId, action: 'figure.unpublish', subjectType: 'figure', subjectId: row.figure.id });
    });
    respond(res, 200, figureResponseSchema, { withdrawn: false, figure: await figureDetail(db, (await loadFigure(db, slug))!, true) });
  });

  /** A printed file: a redirect to a presigned address of the object store that expires. */
  r.get('/figures/:slug/versions/:number/files/:format', async (req, res) => {
    const { slug, number, format } = validate.params(req, figureFileParamsSchema);
    const row = await loadFigure(db, slug);
    if (!row) throw figureMissing();
    const { insider } = await figureAccess(db, res, row, 'read');
    const [v] = await db.select().from(figureVersions).where(and(eq(figureVersions.figureId, row.figure.id), eq(figureVersions.number, number)));
    // readers download published versions only; the lab (and site admins) also prints not yet published
    const visible = v?.status === 'ready' && (insider || v.publishedAt !== null);
    const file = visible ? v.files.find((f) => f.format === format) : undefined;
    if (!file) throw notFound(`version ${number} has no ${format.toUpperCase()} file`);
    res.set('Cache-Control', 'no-store');
    // an hour is plenty for a click; the mail carries week-long links
    res.redirect(302, await blobs.signedUrl(file.key, 3600));
  });

  return r;
}
