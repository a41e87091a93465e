import { and, desc, eq, isNotNull } from 'drizzle-orm';
import { z } from 'zod';
import { figureVersions, runs } from '../../../drizzle/schema.js';
import { printThumbnailKey } from '../../../renderer/src/farm/artifacts.js';
import { iiifPrefix, viewPrefix } from '../../../renderer/src/render/keys.js';
import { THUMBNAIL_MAX_SIDE } from '../../../shared/api/artifacts.js';
import { panelSpecSchema, type PanelSpec } from '../../../shared/print-spec.js';
import { layerHasMaskedCells, renderViews, type RenderView } from '../../../shared/run-spec.js';
import type { Db } from '../db/client.js';
import type { BlobStore } from '../storage/blob-store.js';
import { isPublic, specOf, type FigureRow } from './figures.js';

/**
 * Small pictures for lists, taken from what the farm already stores: a run's picture is the smallest
 * whole image of its first drawn view's pyramid (the coarsest level, at most one tile); a figure's is
 * the page thumbnail the print job stored with the version (every order has one; an older print may
 * not), else its first panel's view.
 */

/** The whole-image sizes a pyramid's info.json lists (renderer/src/render/plan.ts `infoJson`). */
const storedSizesSchema = z.object({ sizes: z.array(z.object({ width: z.number().int().min(1), height: z.number().int().min(1) })).default([]) });

/**
 * The key of the largest whole image of a drawn view that fits THUMBNAIL_MAX_SIDE, or null when the
 * view is not drawn (yet: info.json is written last) or keeps nothing that small.
 */
async function smallImageOfView(blobs: BlobStore, runId: string, view: RenderView): Promise<string | null> {
  const iiif = iiifPrefix(viewPrefix(runId, view.layer, view.palette, view.untoppled === 'transparent'));
  const info = await blobs.get(`${iiif}/info.json`);
  if (!info) return null;
  const parsed = storedSizesSchema.safeParse(JSON.parse(info.toString('utf8')));
  if (!parsed.success) return null;
  const fitting = parsed.data.sizes.filter((s) => Math.max(s.width, s.height) <= THUMBNAIL_MAX_SIDE).sort((a, b) => b.width - a.width);
  const best = fitting[0];
  // every advertised size is stored under full/w,h (a level-0 service may advertise nothing else)
  return best ? `${iiif}/full/${best.width},${best.height}/0/default.png` : null;
}

/** The run's first drawn view (what the viewer opens on and the series strip shows), or null before it is drawn. */
export async function runThumbnailKey(db: Db, blobs: BlobStore, runId: string): Promise<string | null> {
  const [row] = await db.select({ spec: runs.spec }).from(runs).where(eq(runs.id, runId));
  const first = row ? renderViews(row.spec)[0] : undefined;
  return first ? smallImageOfView(blobs, runId, first) : null;
}

/** A panel's own view when its run drew that layer and palette, else the run's first view. */
async function panelImage(db: Db, blobs: BlobStore, panel: PanelSpec): Promise<string | null> {
  const own: RenderView = { layer: panel.layer, palette: panel.palette, untoppled: layerHasMaskedCells(panel.layer) ? panel.untoppled : 'neutral' };
  return (await smallImageOfView(blobs, panel.runId, own)) ?? runThumbnailKey(db, blobs, panel.runId);
}

/**
 * A figure's picture and who may cache it. A published figure shows everyone (its lab included) the
 * page of its newest published version, so one cached answer fits every caller; a draft or withdrawn
 * one shows its lab the newest ready print. Before a print with a page thumbnail exists: the first panel.
 */
export async function figureThumbnailKey(db: Db, blobs: BlobStore, row: FigureRow): Promise<{ key: string | null; visibility: 'public' | 'private' }> {
  const shown = isPublic(row.figure);
  const visibility = shown ? 'public' : 'private';
  const [version] = await db
    .select({ number: figureVersions.number, spec: figureVersions.spec })
    .from(figureVersions)
    .where(and(eq(figureVersions.figureId, row.figure.id), eq(figureVersions.status, 'ready'), shown ? isNotNull(figureVersions.publishedAt) : undefined))
    .orderBy(desc(figureVersions.number))
    .limit(1);
  if (version) {
    const page = printThumbnailKey(row.figure.id, version.number);
    if (await blobs.exists(page)) return { key: page, visibility };
  }
  // stored compositions may predate a panel field: parsing fills the defaults the printer used
  const first = panelSpecSchema.safeParse((version?.spec ?? specOf(row.figure)).panels[0]);
  return { key: first.success ? await panelImage(db, blobs, first.data) : null, visibility };
}
