import { Router, type Request, type Response } from 'express';
import {
  figureArrayParamsSchema,
  figureThumbnailParamsSchema,
  figureLegendParamsSchema,
  figureViewBase,
  legendResponseSchema,
  figureViewParamsSchema,
  runArrayParamsSchema,
  runLegendParamsSchema,
  runViewBase,
  runViewParamsSchema,
  runThumbnailParamsSchema,
  type ArrayName,
} from '../../../shared/api/artifacts.js';
import type { AppDeps } from '../deps.js';
import { notFound } from '../http/http-error.js';
import { respond } from '../http/respond.js';
import { validate } from '../http/validate.js';
import { figureAccess, figureMissing, loadFigure } from '../services/figures.js';
import { figureThumbnailKey, runThumbnailKey } from '../services/thumbnails.js';
import { arrayKey, assertPlainUrl, CACHE, figureSubject, legendKey, runSubject, sendInfoJson, sendObject, shareIfPublic, viewKey, type ArtifactSubject } from '../services/artifacts.js';

/**
 * Deep-zoom tiles and downloads, streamed from the object store. The same handlers serve a run by id
 * (its lab, or anyone once published) and a published figure by slug (anyone).
 */
export function artifactsRouter({ db, blobs, env }: AppDeps): Router {
  const r = Router();

  async function view(req: Request, res: Response, subject: ArtifactSubject, p: { layer: string; palette: string; path: string[] }, base: string) {
    shareIfPublic(res, subject.visibility);
    const key = viewKey(subject.runId, p.layer as Parameters<typeof viewKey>[1], p.palette, p.path);
    if (p.path.length === 1 && p.path[0] === 'info.json') return sendInfoJson(res, blobs, key, base, CACHE.info[subject.visibility]);
    return sendObject(req, res, blobs, key, { cacheControl: CACHE.tile[subject.visibility] });
  }

  /** legend.json of a drawn view; a view that was not drawn (not asked for, or not yet) is a 404 no cache keeps. */
  async function legend(res: Response, subject: ArtifactSubject, p: { layer: string; palette: string }) {
    shareIfPublic(res, subject.visibility);
    const bytes = await blobs.get(legendKey(subject.runId, p.layer as Parameters<typeof legendKey>[1], p.palette));
    if (!bytes) {
      res.set('Cache-Control', 'no-store');
      throw notFound(`the ${p.layer} view in ${p.palette} has not been drawn for this run (yet)`);
    }
    res.set('Cache-Control', CACHE.info[subject.visibility]);
    respond(res, 200, legendResponseSchema, JSON.parse(bytes.toString('utf8')));
  }

  async function array(req: Request, res: Response, subject: ArtifactSubject, name: ArrayName, stem: string) {
    shareIfPublic(res, subject.visibility);
    return sendObject(req, res, blobs, arrayKey(subject.runId, name), { cacheControl: CACHE.array[subject.visibility], attachmentName: `${stem}-${name}` });
  }

  r.get('/runs/:id/views/:layer/:palette/iiif/*path', async (req, res) => {
    assertPlainUrl(req);
    const p = validate.params(req, runViewParamsSchema);
    const subject = await runSubject(db, res, p.id);
    await view(req, res, subject, p, runViewBase(env.PUBLIC_URL, p.id, p.layer, p.palette));
  });

  r.get('/figures/:slug/views/:layer/:palette/iiif/*path', async (req, res) => {
    assertPlainUrl(req);
    const p = validate.params(req, figureViewParamsSchema);
    const subject = await figureSubject(db, res, p.slug);
    await view(req, res, subject, p, figureViewBase(env.PUBLIC_URL, p.slug, p.layer, p.palette));
  });

  r.get('/runs/:id/legend/:layer/:palette', async (req, res) => {
    const p = validate.params(req, runLegendParamsSchema);
    await legend(res, await runSubject(db, res, p.id), p);
  });

  r.get('/figures/:slug/legend/:layer/:palette', async (req, res) => {
    const p = validate.params(req, figureLegendParamsSchema);
    await legend(res, await figureSubject(db, res, p.slug), p);
  });

  r.get('/runs/:id/arrays/:name', async (req, res) => {
    const p = validate.params(req, runArrayParamsSchema);
    const subject = await runSubject(db, res, p.id);
    await array(req, res, subject, p.name, `run-${p.id.slice(0, 8)}`);
  });

  r.get('/figures/:slug/arrays/:name', async (req, res) => {
    const p = validate.params(req, figureArrayParamsSchema);
    const subject = await figureSubject(db, res, p.slug);
    await array(req, res, subject, p.name, p.slug);
  });

  /** A small picture for lists: as private as the run or figure; a missing one is a 404 no cache keeps, so the list shows its placeholder. */
  async function thumbnail(req: Request, res: Response, key: string | null, visibility: ArtifactSubject['visibility'], cacheControl: string, what: string) {
    shareIfPublic(res, visibility);
    if (!key) {
      res.set('Cache-Control', 'no-store');
      throw notFound(`${what} has no picture (yet): it is drawn once the farm has rendered it`);
    }
    await sendObject(req, res, blobs, key, { cacheControl });
  }

  r.get('/runs/:id/thumbnail', async (req, res) => {
    const p = validate.params(req, runThumbnailParamsSchema);
    const subject = await runSubject(db, res, p.id);
    // a run's views never change once drawn
    await thumbnail(req, res, await runThumbnailKey(db, blobs, p.id), subject.visibility, CACHE.tile[subject.visibility], 'this run');
  });

  r.get('/figures/:slug/thumbnail', async (req, res) => {
    const p = validate.params(req, figureThumbnailParamsSchema);
    const row = await loadFigure(db, p.slug);
    if (!row) throw figureMissing();
    await figureAccess(db, res, row, 'read');
    const { key, visibility } = await figureThumbnailKey(db, blobs, row);
    await thumbnail(req, res, key, visibility, CACHE.figureThumbnail[visibility], 'this figure');
  });

  return r;
}
