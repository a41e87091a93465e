import { isDeepStrictEqual } from 'node:util';
import { and, desc, eq, inArray, isNotNull, sql } from 'drizzle-orm';
import type { Response } from 'express';
import { figures, figureVersions, labs, runs, users, type FigureFileRecord } from '../../../drizzle/schema.js';
import type { FigureDetail, FigureFile, FigureRun, FigureVersion, LabFigure } from '../../../shared/api/figures.js';
import { figureSpecSchema, specWithCaption, type FigureSpec } from '../../../shared/print-spec.js';
import { layoutFigure, type LayoutWarning } from '../../../shared/print-layout.js';
import { checkLabAccess } from '../auth/middleware.js';
import type { Db } from '../db/client.js';
import { badRequest, forbidden, notFound, unauthorized, type HttpError } from '../http/http-error.js';
import type { AuthUser } from '../http/locals.js';
import { isZeroBackground } from '../../../shared/run-spec.js';
import { latticeLabel } from './views.js';

/**
 * Figures: rows → contract shapes, who may see or change a figure, and the checks a composition
 * must pass (its runs finished, in the figure's lab; printable as laid out). The lab of a figure is
 * the lab of its first panel's run (`figures.run_id`), and every panel's run must be in that lab.
 */

const iso = (d: Date | null) => (d ? d.toISOString() : null);

export const figureMissing = (): HttpError => notFound('figure not found');

const creator = sql<string>`(select ${users.name} from ${users} where ${users.id} = ${figures.createdById})`;
const latestVersion = sql<number | null>`(select max(${figureVersions.number}) from ${figureVersions} where ${figureVersions.figureId} = ${figures.id} and ${figureVersions.status} = 'ready')`;
const newestStatus = sql<FigureVersion['status'] | null>`(select ${figureVersions.status} from ${figureVersions} where ${figureVersions.figureId} = ${figures.id} order by ${figureVersions.number} desc limit 1)`;
const publishedVersion = sql<number | null>`(select max(${figureVersions.number}) from ${figureVersions} where ${figureVersions.figureId} = ${figures.id} and ${figureVersions.publishedAt} is not null)`;
// what the public index shows: the newest published version's words (null: rows written without them)
const newestPublished = sql`${figureVersions.figureId} = ${figures.id} and ${figureVersions.publishedAt} is not null order by ${figureVersions.number} desc limit 1`;
const publishedTitle = sql<string | null>`(select ${figureVersions.title} from ${figureVersions} where ${newestPublished})`;
const publishedCaption = sql<string | null>`(select coalesce(${figureVersions.caption}, ${figureVersions.spec}->'caption'->>'text', '') from ${figureVersions} where ${newestPublished})`;

/** Figures with their lead run, lab, the run's author and the figure's composer. */
export function selectFigures(db: Db) {
  return db
    .select({ figure: figures, run: runs, labName: labs.name, author: users.name, creator, latestVersion, newestStatus, publishedVersion, publishedTitle, publishedCaption })
    .from(figures)
    .innerJoin(runs, eq(runs.id, figures.runId))
    .innerJoin(labs, eq(labs.id, runs.labId))
    .innerJoin(users, eq(users.id, runs.authorId));
}
export type FigureRow = Awaited<ReturnType<ReturnType<typeof selectFigures>['execute']>>[number];

export function labFigureView({ figure, run, labName, author, creator, latestVersion, newestStatus, publishedVersion }: FigureRow): LabFigure {
  return {
    id: figure.id,
    slug: figure.slug,
    title: figure.title,
    caption: figure.caption,
    labId: run.labId,
    runId: run.id,
    lattice: latticeLabel(run.spec),
    background: run.spec.background.kind,
    backgroundSpec: run.spec.background,
    chips: run.spec.chips,
    publishedAt: iso(figure.publishedAt),
    withdrawnAt: iso(figure.withdrawnAt),
    latestVersion: latestVersion === null ? null : Number(latestVersion),
    newestStatus,
    publishedVersion: publishedVersion === null ? null : Number(publishedVersion),
    // the run's author first, then whoever composed the figure if that is someone else
    authors: [...new Set([author, creator])],
    labName,
  };
}

/**
 * The entry a reader sees: the published version's title and caption, not the lab's later edits
 * (a figure published before versions kept their words shows its own).
 */
export function readerFigureView(row: FigureRow): LabFigure {
  return { ...labFigureView(row), title: row.publishedTitle ?? row.figure.title, caption: row.publishedCaption ?? row.figure.caption };
}

/** Published and not withdrawn: anyone may read it. */
export const isPublic = (f: typeof figures.$inferSelect): boolean => f.publishedAt !== null && f.withdrawnAt === null;

/**
 * The composition that prints: the stored spec (a row made before compositions were stored: one
 * panel of its run, a journal column wide) with the figure's caption under the panels.
 */
export function specOf(f: typeof figures.$inferSelect): FigureSpec {
  const spec = f.spec ?? figureSpecSchema.parse({ panels: [{ runId: f.runId }], size: { kind: 'column', column: 'single' } });
  return specWithCaption(spec, f.caption);
}

/**
 * The caption a write leaves on a figure: the one sent, else (a client that only filled the spec)
 * the spec's printed caption, else the one it had.
 */
export function captionAfter(sent: string | undefined, spec: FigureSpec | undefined, before: string): string {
  if (sent !== undefined && (sent.trim() || !spec?.caption)) return sent;
  return spec?.caption?.text ?? before;
}

export const fileHref = (slug: string, number: number, format: string) => `/api/figures/${slug}/versions/${number}/files/${format}`;

export function fileView(slug: string, number: number, f: FigureFileRecord): FigureFile {
  return { format: f.format, name: f.name, bytes: f.bytes, sha256: f.sha256, widthPx: f.widthPx, heightPx: f.heightPx, href: fileHref(slug, number, f.format) };
}

type VersionRow = typeof figureVersions.$inferSelect;

/** A version's own words; rows written without them fall back to the figure's title and the printed caption. */
export const versionTitle = (v: VersionRow, figureTitle: string): string => v.title ?? figureTitle;
export const versionCaption = (v: VersionRow): string => v.caption ?? v.spec.caption?.text ?? '';

export function versionView(slug: string, v: VersionRow & { orderedBy: string | null }, figureTitle: string): FigureVersion {
  return {
    number: v.number,
    status: v.status,
    stage: v.stage,
    spec: v.spec,
    title: versionTitle(v, figureTitle),
    caption: versionCaption(v),
    publishedAt: iso(v.publishedAt),
    formats: v.formats,
    files: v.files.map((f) => fileView(slug, v.number, f)),
    error: v.error,
    orderedBy: v.orderedBy,
    createdAt: v.createdAt.toISOString(),
    finishedAt: iso(v.finishedAt),
  };
}

export async function loadFigure(db: Db, slug: string): Promise<FigureRow | null> {
  const [row] = await selectFigures(db).where(eq(figures.slug, slug));
  return row ?? null;
}

/**
 * The caller's standing on a figure: public figures are readable by anyone; drafts and withdrawn
 * ones only by their lab (and site admins), everyone else gets the same 404.
 * @returns whether the caller may change it (a member of its lab), and whether they see the lab's
 * side of it (members and site admins: the draft and every version) rather than what was published
 */
export async function figureAccess(db: Db, res: Response, row: FigureRow, mode: 'read' | 'member'): Promise<{ canEdit: boolean; insider: boolean }> {
  const user = res.locals.auth?.user;
  const shown = isPublic(row.figure);
  if (!user) {
    if (mode === 'read' && shown) return { canEdit: false, insider: false };
    throw mode === 'member' ? unauthorized() : figureMissing();
  }
  // a published figure is no secret: strangers may read it, and are told plainly they cannot change it
  const missing = shown ? forbidden('only members of the figure\'s lab can do this') : figureMissing();
  if (mode === 'read') {
    if (shown) {
      const access = await checkLabAccess(db, user, row.run.labId, 'read', missing).catch(() => null);
      return { canEdit: access?.role != null, insider: access !== null };
    }
    const access = await checkLabAccess(db, user, row.run.labId, 'read', missing);
    return { canEdit: access.role !== null, insider: true };
  }
  await checkLabAccess(db, user, row.run.labId, 'member', missing);
  return { canEdit: true, insider: true };
}

/** The finished runs a composition uses, each checked to belong to `labId`. */
export async function compositionRuns(db: Db, labId: string, spec: FigureSpec): Promise<FigureRun[]> {
  const ids = [...new Set(spec.panels.map((p) => p.runId))];
  const bad = ids.find((id) => !/^[0-9a-f-]{36}$/i.test(id));
  if (bad) throw badRequest(`spec.panels: "${bad}" is not a run id`);
  const rows = await db.select().from(runs).where(inArray(runs.id, ids));
  const byId = new Map(rows.map((r) => [r.id, r]));
  spec.panels.forEach((p, i) => {
    const r = byId.get(p.runId);
    // on a background of 0 everywhere the difference is the heights again: no such view to print
    if (r && r.labId === labId && p.layer === 'difference' && isZeroBackground(r.spec.background)) {
      throw badRequest(`spec.panels.${i}.layer: run "${r.title}" has a background of 0 everywhere, so it has no difference layer (it would repeat the final heights); choose final heights or another layer`);
    }
  });
  return ids.map((id) => {
    const r = byId.get(id);
    if (!r || r.labId !== labId) throw badRequest(`spec.panels: run ${id} is not a run of this lab`);
    if (r.status !== 'finished' || !r.stats) throw badRequest(`spec.panels: run "${r.title}" is ${r.status}; figures are composed from finished runs`);
    if (r.artifactsExpiredAt) throw badRequest(`spec.panels: run "${r.title}" expired and its arrays and tiles were removed; re-run it and use the new run`);
    return { id: r.id, title: r.title, lattice: latticeLabel(r.spec), background: r.spec.background.kind, chips: r.spec.chips, shape: r.stats.shape, origin: r.stats.origin, certificate: r.stats.certificate ?? null };
  });
}

/** The layout's blocking warnings for a composition, in the engine's words (empty: printable). */
export function blockingWarnings(spec: FigureSpec, figureRuns: readonly FigureRun[]): LayoutWarning[] {
  const layout = layoutFigure(spec, figureRuns.map((r) => ({ runId: r.id, shape: r.shape, origin: r.origin, chips: r.chips })));
  return layout.warnings.filter((w) => w.blocking);
}

/** "One hundred grains, Z²" → "one-hundred-grains-z"; never empty. */
export function slugFrom(title: string): string {
  const s = title
    .normalize('NFKD')
    .replace(/[\u0300-\u036f]/g, '')
    .toLowerCase()
    .replace(/[^a-z0-9]+/g, '-')
    .replace(/^-+|-+$/g, '')
    .slice(0, 80)
    .replace(/-+$/, '');
  return s || 'figure';
}

/** A free slug: the wanted one, else with -2, -3, … appended (an asked-for slug that is taken is an error instead). */
export async function freeSlug(db: Pick<Db, 'select'>, wanted: string): Promise<string> {
  const taken = new Set(
    (await db.select({ slug: figures.slug }).from(figures).where(sql`${figures.slug} = ${wanted} or ${figures.slug} like ${`${wanted}-%`}`)).map((r) => r.slug),
  );
  if (!taken.has(wanted)) return wanted;
  for (let i = 2; ; i++) if (!taken.has(`${wanted}-${i}`)) return `${wanted}-${i}`;
}

/** JSON as stored: jsonb drops undefined keys and orders keys its own way, so compare values only. */
const plain = (x: unknown): unknown => JSON.parse(JSON.stringify(x ?? null));

/** Whether a version holds the draft's title, caption and composition as they are now. */
export function versionIsDraft(v: VersionRow, f: typeof figures.$inferSelect): boolean {
  return versionTitle(v, f.title) === f.title && versionCaption(v) === f.caption && isDeepStrictEqual(plain(v.spec), plain(specOf(f)));
}

/**
 * The full figure for its page. Its lab (`insider`: members, who may edit, and site admins) gets
 * the draft and every version; everyone else gets what was published: the newest published
 * version's title, caption and composition, and the published versions only.
 */
export async function figureDetail(db: Db, row: FigureRow, canEdit: boolean, insider = canEdit): Promise<FigureDetail> {
  const versions = await db
    .select({ v: figureVersions, orderedBy: users.name })
    .from(figureVersions)
    .leftJoin(users, eq(users.id, figureVersions.orderedById))
    .where(and(eq(figureVersions.figureId, row.figure.id), insider ? undefined : isNotNull(figureVersions.publishedAt)))
    .orderBy(desc(figureVersions.number));
  const shown = versions.find((x) => x.v.publishedAt !== null)?.v ?? null;
  // a figure published before versions were frozen has no published version: its own row is all there is
  const spec = !insider && shown ? shown.spec : specOf(row.figure);
  const words = !insider && shown ? { title: versionTitle(shown, row.figure.title), caption: versionCaption(shown) } : {};
  const draft = insider ? versions.find((x) => x.v.status !== 'failed' && versionIsDraft(x.v, row.figure)) : undefined;
  const runIds = [...new Set([row.run.id, ...spec.panels.map((p) => p.runId), ...versions.flatMap((x) => x.v.spec.panels.map((p) => p.runId))])];
  const runRows = await db.select().from(runs).where(inArray(runs.id, runIds));
  const figureRuns: FigureRun[] = runRows.map((r) => ({
    id: r.id,
    title: r.title,
    lattice: latticeLabel(r.spec),
    background: r.spec.background.kind,
    chips: r.spec.chips,
    shape: r.stats?.shape ?? [1],
    origin: r.stats?.origin ?? [0],
    certificate: r.stats?.certificate ?? null,
  }));
  return {
    ...labFigureView(row),
    ...words,
    spec,
    versions: versions.map((x) => versionView(row.figure.slug, { ...x.v, orderedBy: x.orderedBy }, row.figure.title)),
    runs: figureRuns,
    canEdit,
    unpublishedChanges: insider && shown !== null && !versionIsDraft(shown, row.figure),
    draftVersion: draft ? draft.v.number : null,
  };
}

export type { AuthUser };
