import { pipeline } from 'node:stream/promises';
import { and, eq, isNotNull, isNull } from 'drizzle-orm';
import type { Request, Response } from 'express';
import { figures, runs } from '../../../drizzle/schema.js';
import { arrayKeys } from '../../../renderer/src/farm/artifacts.js';
import { iiifPrefix, legendKeyOf, viewPrefix } from '../../../renderer/src/render/keys.js';
import type { ArrayName } from '../../../shared/api/artifacts.js';
import type { Layer, PaletteId } from '../../../shared/palettes.js';
import { checkLabAccess } from '../auth/middleware.js';
import type { Db } from '../db/client.js';
import { badRequest, HttpError, notFound } from '../http/http-error.js';
import type { BlobStore } from '../storage/blob-store.js';

/**
 * Serving a run's stored artifacts (tiles, info.json, arrays) from the object store: who may see
 * them, which key a request names, and how the bytes go out. Published runs are public and cached
 * by anyone; unpublished ones are visible to their lab (and site admins) and cached privately.
 */

export type Visibility = 'public' | 'private';
export type ArtifactSubject = { runId: string; visibility: Visibility };

const published = and(isNotNull(figures.publishedAt), isNull(figures.withdrawnAt));

/** Its lab asked for the artifacts of a run the retention rule removed: gone for good, said plainly. */
const expired = (at: Date) => new HttpError(410, `expired — artifacts removed: the arrays and tiles of this unpublished run were deleted on ${at.toISOString().slice(0, 10)} at the end of its retention period; re-run it to compute them again`);

/** The run and whether the caller may see it; anonymous callers and strangers get the same 404. */
export async function runSubject(db: Db, res: Response, runId: string): Promise<ArtifactSubject> {
  const missing = notFound('run not found');
  const [[row], [shown]] = await Promise.all([
    db.select({ labId: runs.labId, expiredAt: runs.artifactsExpiredAt }).from(runs).where(eq(runs.id, runId)),
    db.select({ id: figures.id }).from(figures).where(and(eq(figures.runId, runId), published)).limit(1),
  ]);
  if (!row) throw missing;
  if (shown) return { runId, visibility: 'public' };
  const user = res.locals.auth?.user;
  if (!user) throw missing;
  await checkLabAccess(db, user, row.labId, 'read', missing);
  if (row.expiredAt) throw expired(row.expiredAt);
  return { runId, visibility: 'private' };
}

/** A figure's run: public while the figure is published, otherwise its lab's, like GET /api/figures/:slug. */
export async function figureSubject(db: Db, res: Response, slug: string): Promise<ArtifactSubject> {
  const missing = notFound('figure not found');
  const [row] = await db
    .select({ runId: figures.runId, labId: runs.labId, publishedAt: figures.publishedAt, withdrawnAt: figures.withdrawnAt })
    .from(figures)
    .innerJoin(runs, eq(runs.id, figures.runId))
    .where(eq(figures.slug, slug));
  if (!row) throw missing;
  if (row.publishedAt && !row.withdrawnAt) return { runId: row.runId, visibility: 'public' };
  const user = res.locals.auth?.user;
  if (!user) throw missing;
  await checkLabAccess(db, user, row.labId, 'read', missing);
  return { runId: row.runId, visibility: 'private' };
}

/**
 * Encoded separators or dots would let a decoded segment differ from what the router matched;
 * refuse them outright rather than reason about double decoding.
 */
export function assertPlainUrl(req: Request): void {
  const raw = req.originalUrl.split('?')[0]!;
  if (/%2f|%5c|%2e|%00|\\/i.test(raw)) throw badRequest('the address may not contain encoded "/", "\\", "." or NUL characters');
}

/** runs/<runId>/<layer>/<palette>[~clear] from a validated palette segment. */
function viewPrefixOf(runId: string, layer: Layer, palette: string): string {
  const transparent = palette.endsWith('~clear');
  return viewPrefix(runId, layer, palette.replace(/~clear$/, '') as PaletteId, transparent);
}

/** The object key of one IIIF request: always under runs/<runId>/<layer>/<palette>/iiif/. */
export function viewKey(runId: string, layer: Layer, palette: string, path: readonly string[]): string {
  return `${iiifPrefix(viewPrefixOf(runId, layer, palette))}/${path.join('/')}`;
}

/** The object key of a view's legend.json. */
export const legendKey = (runId: string, layer: Layer, palette: string): string => legendKeyOf(viewPrefixOf(runId, layer, palette));

export const arrayKey = (runId: string, name: ArrayName): string => {
  const keys = arrayKeys(runId);
  return name === 'heights.npy' ? keys.heights : name === 'odometer.npy' ? keys.odometer : keys.sidecar;
};

/** Our own type for each stored file name: never trust a stored type to be safe to render. */
export function contentTypeOf(key: string): string {
  if (key.endsWith('.png')) return 'image/png';
  if (key.endsWith('.jpg')) return 'image/jpeg';
  if (key.endsWith('.json')) return 'application/json';
  return 'application/octet-stream';
}

export const CACHE = {
  /** a rendered tile never changes once written */
  tile: { public: 'public, max-age=31536000, immutable', private: 'private, max-age=86400' },
  /** info.json carries our public address, which configuration may change */
  info: { public: 'public, max-age=3600', private: 'private, no-cache' },
  array: { public: 'public, max-age=86400', private: 'private, no-cache' },
  /** a figure's picture follows its newest print, so it is revalidated (cheaply: entity tags) */
  figureThumbnail: { public: 'public, max-age=3600', private: 'private, no-cache' },
} as const;

export type SendOptions = { cacheControl: string; attachmentName?: string };

/**
 * Published views may be embedded by other sites' viewers: allow cross-origin reads (helmet's default
 * Cross-Origin-Resource-Policy is same-origin). Unpublished ones keep the defaults.
 */
export function shareIfPublic(res: Response, visibility: Visibility): void {
  if (visibility !== 'public') return;
  res.set('Cross-Origin-Resource-Policy', 'cross-origin');
  res.set('Access-Control-Allow-Origin', '*');
}

/**
 * Stream one stored object as the answer, with length, type, entity tag and conditional GET.
 * A missing object is a 404 that no cache keeps (the tile may be drawn a minute later).
 */
export async function sendObject(req: Request, res: Response, blobs: BlobStore, key: string, opts: SendOptions): Promise<void> {
  // one byte range (the deep-zoom readout reads single cells of large .npy arrays); anything else gets the whole object
  const range = /^bytes=(\d+-\d*|-\d+)$/.test(req.headers.range ?? '') && req.method === 'GET' ? req.headers.range : undefined;
  let obj;
  try {
    obj = await blobs.open(key, range);
  } catch (err) {
    if ((err as Error).name === 'InvalidRange') throw new HttpError(416, `the range ${range} lies outside the file`);
    throw err;
  }
  if (!obj) {
    res.set('Cache-Control', 'no-store');
    throw notFound(opts.attachmentName ? `${opts.attachmentName} is not available (yet)` : 'no such tile or file in this view');
  }
  res.set('Cache-Control', opts.cacheControl);
  if (obj.etag) res.set('ETag', obj.etag);
  if (obj.lastModified) res.set('Last-Modified', obj.lastModified.toUTCString());
  // attachment() would pick a type from the name; ours comes after it and wins
  if (opts.attachmentName) res.attachment(opts.attachmentName);
  res.type(contentTypeOf(key));
  if (req.fresh) {
    obj.body.destroy();
    res.status(304).end();
    return;
  }
  res.set('Accept-Ranges', 'bytes');
  if (obj.contentRange) res.status(206).set('Content-Range', obj.contentRange);
  res.set('Content-Length', String(obj.size));
  if (req.method === 'HEAD') {
    obj.body.destroy();
    res.end();
    return;
  }
  try {
    await pipeline(obj.body, res);
  } catch (err) {
    // a reader who closes the tab mid-download is not an error of ours
    if ((err as NodeJS.ErrnoException).code === 'ERR_STREAM_PREMATURE_CLOSE' || req.destroyed) return;
    throw err;
  }
}

/** info.json with its `id` set to the address this API serves the view at, so deep-zoom viewers can open it. */
export async function sendInfoJson(res: Response, blobs: BlobStore, key: string, publicId: string, cacheControl: string): Promise<void> {
  const bytes = await blobs.get(key);
  if (!bytes) {
    res.set('Cache-Control', 'no-store');
    throw notFound('this view has not been drawn (yet)');
  }
  const info = JSON.parse(bytes.toString('utf8')) as Record<string, unknown>;
  delete info['@id'];
  info.id = publicId;
  res.set('Cache-Control', cacheControl);
  // IIIF Image API 3.0 (section 5, image information): application/json unless JSON-LD is asked for
  res.type('application/json');
  res.send(JSON.stringify(info));
}
