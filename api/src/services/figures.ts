import { and, desc, eq, inArray, sql } from 'drizzle-orm';
import type { Response } from 'express';
import { figures, figureVersions, labs, runs, users, type FigureFileRecord } from '../../../drizzle/schema.js';
import type { FigureDetail, FigureFile, FigureRun, FigureVersion, LabFigure } from '../../../shared/api/figures.js';
import { figureSpecSchema, layoutFigure, specWithCaption, type FigureSpec, type LayoutWarning } from '../../../shared/print.js';
import { checkLabAccess } from '../auth/middleware.js';
import type { Db } from '../db/client.js';
import { badRequest, forbidden, notFound, unauthorized, type HttpError } from '../http/http-error.js';
import type { AuthUser } from '../http/locals.js';
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

/** Figures with their lead run, lab, the run's author and the figure's composer. */
export function selectFigures(db: Db) {
  return db
    .select({ figure: figures, run: runs, labName: labs.name, author: users.name, creator, latestVersion, newestStatus })
    .from(figures)
    .innerJoin(runs, eq(runs.id, figures.runId))
    .innerJoin(labs, eq(labs.id, runs.labId))
    .innerJoin(users, eq(users.id, runs.authorId));
}
export type FigureRow = Awaited<ReturnType<ReturnType<typeof selectFigures>['execute']>>[number];

export function labFigureView({ figure, run, labName, author, creator, latestVersion, newestStatus }: FigureRow): LabFigure {
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
    // the run's author first, then whoever composed the figure if that is someone else
    authors: [...new Set([author, creator])],
    labName,
  };
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

export function versionView(slug: string, v: typeof figureVersions.$inferSelect & { orderedBy: string | null }): FigureVersion {
  return {
    number: v.number,
    status: v.status,
    stage: v.stage,
    spec: v.spec,
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
 * @returns whether the caller may change it (a member of its lab)
 */
export async function figureAccess(db: Db, res: Response, row: FigureRow, mode: 'read' | 'member'): Promise<{ canEdit: boolean }> {
  const user = res.locals.auth?.user;
  const shown = isPublic(row.figure);
  if (!user) {
    if (mode === 'read' && shown) return { canEdit: false };
    throw mode === 'member' ? unauthorized() : figureMissing();
  }
  // a published figure is no secret: strangers may read it, and are told plainly they cannot change it
  const missing = shown ? forbidden('only members of the figure\'s lab can do this') : figureMissing();
  if (mode === 'read') {
    if (shown) {
      const access = await checkLabAccess(db, user, row.run.labId, 'read', missing).catch(() => null);
      return { canEdit: access?.role != null };
    }
    const access = await checkLabAccess(db, user, row.run.labId, 'read', missing);
    return { canEdit: access.role !== null };
  }
  await checkLabAccess(db, user, row.run.labId, 'member', missing);
  return { canEdit: true };
}

/** The finished runs a composition uses, each checked to belong to `labId`. */
export async function compositionRuns(db: Db, labId: string, spec: FigureSpec): Promise<FigureRun[]> {
  const ids = [...new Set(spec.panels.map((p) => p.runId))];
  const bad = ids.find((id) => !/^[0-9a-f-]{36}$/i.test(id));
  if (bad) throw badRequest(`spec.panels: "${bad}" is not a run id`);
  const rows = await db.select().from(runs).where(inArray(runs.id, ids));
  const byId = new Map(rows.map((r) => [r.id, r]));
  return ids.map((id) => {
    const r = byId.get(id);
    if (!r || r.labId !== labId) throw badRequest(`spec.panels: run ${id} is not a run of this lab`);
    if (r.status !== 'finished' || !r.stats) throw badRequest(`spec.panels: run "${r.title}" is ${r.status}; figures are composed from finished runs`);
    if (r.artifactsExpiredAt) throw badRequest(`spec.panels: run "${r.title}" expired and its arrays and tiles were removed; re-run it and use the new run`);
    return { id: r.id, title: r.title, lattice: latticeLabel(r.spec), background: r.spec.background.kind, chips: r.spec.chips, shape: r.stats.shape, origin: r.stats.origin };
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

/** The full figure for its page; readers of a public figure see only its ready versions. */
export async function figureDetail(db: Db, row: FigureRow, canEdit: boolean): Promise<FigureDetail> {
  const spec = specOf(row.figure);
  const versions = await db
    .select({ v: figureVersions, orderedBy: users.name })
    .from(figureVersions)
    .leftJoin(users, eq(users.id, figureVersions.orderedById))
    .where(and(eq(figureVersions.figureId, row.figure.id), canEdit ? undefined : eq(figureVersions.status, 'ready')))
    .orderBy(desc(figureVersions.number));
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
  }));
  return {
    ...labFigureView(row),
    spec,
    versions: versions.map((x) => versionView(row.figure.slug, { ...x.v, orderedBy: x.orderedBy })),
    runs: figureRuns,
    canEdit,
  };
}

export type { AuthUser };
