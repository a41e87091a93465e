import { z } from 'zod';
import { CAPTION_MAX_CHARS, figureSpecSchema, printableFigureSpecSchema } from '../print-spec.js';
import { backgroundSchema } from '../run-spec.js';
import { certificateSchema } from '../run-stats.js';
import { idSchema, isoDateSchema, pageSchema } from './errors.js';

/** Permanent-link slugs: lower-case words joined by hyphens. */
export const slugSchema = z.string().regex(/^[a-z0-9]+(?:-[a-z0-9]+)*$/, 'not a figure slug').max(120);

/** The print formats an order can ask for (renderer/src/print writes each). */
export const FIGURE_FORMATS = ['png', 'tiff', 'pdf'] as const;
export const figureFormatSchema = z.enum(FIGURE_FORMATS);
export type FigureFormat = z.infer<typeof figureFormatSchema>;

export const FIGURE_VERSION_STATUSES = ['queued', 'printing', 'ready', 'failed'] as const;
export const figureVersionStatusSchema = z.enum(FIGURE_VERSION_STATUSES);
export type FigureVersionStatus = z.infer<typeof figureVersionStatusSchema>;

/** How long a presigned download address stays valid (mails and download redirects). */
export const DOWNLOAD_URL_SECONDS = 7 * 24 * 3600;

export const figureSchema = z.object({
  id: idSchema,
  slug: z.string(),
  title: z.string(),
  caption: z.string(),
  /** the first panel's run: the one the reader page deep-zooms into */
  runId: idSchema,
  /** the lattice preset name, or the periodic graph's name ("periodic" when unnamed) */
  lattice: z.string(),
  /** the background kind from the run spec: constant, checkerboard, motif, random, annuli, array */
  background: z.string(),
  /** the same background with the parameters that define it (a reader needs the height, not just "constant") */
  backgroundSpec: backgroundSchema,
  chips: z.number().int().min(0),
  /** null while unpublished (only lab members see those) */
  publishedAt: isoDateSchema.nullable(),
  authors: z.array(z.string()),
  labName: z.string(),
});
export type Figure = z.infer<typeof figureSchema>;

/** What the lab's own lists and pages add to the public entry. */
export const labFigureSchema = figureSchema.extend({
  /** the lab the figure belongs to (its first panel's run's lab) */
  labId: idSchema,
  /** set while unpublished after having been published; the link answers "withdrawn" */
  withdrawnAt: isoDateSchema.nullable(),
  /** number of the newest ready version, null before the first print is ready */
  latestVersion: z.number().int().min(1).nullable(),
  /** status of the newest version of any status, null before the first order */
  newestStatus: figureVersionStatusSchema.nullable(),
  /** number of the version readers see at the permanent link (the newest published one), null before publishing */
  publishedVersion: z.number().int().min(1).nullable(),
});
export type LabFigure = z.infer<typeof labFigureSchema>;

/** One printed file of a version. `href` answers with a redirect to a presigned, expiring address. */
export const figureFileSchema = z.object({
  format: figureFormatSchema,
  name: z.string(),
  bytes: z.number().int().min(0),
  /** hex SHA-256 of the file's bytes */
  sha256: z.string().regex(/^[0-9a-f]{64}$/),
  widthPx: z.number().int().min(1),
  heightPx: z.number().int().min(1),
  href: z.string(),
});
export type FigureFile = z.infer<typeof figureFileSchema>;

export const figureVersionSchema = z.object({
  number: z.number().int().min(1),
  status: figureVersionStatusSchema,
  /** what the worker is doing now ("writing the PDF") */
  stage: z.string().nullable(),
  spec: figureSpecSchema,
  /** the figure's title and caption when this version was ordered: a published version shows these, whatever is edited later */
  title: z.string(),
  caption: z.string(),
  /** when this version was published (readers see the newest published one), null if never */
  publishedAt: isoDateSchema.nullable(),
  formats: z.array(figureFormatSchema),
  files: z.array(figureFileSchema),
  error: z.string().nullable(),
  orderedBy: z.string().nullable(),
  createdAt: isoDateSchema,
  finishedAt: isoDateSchema.nullable(),
});
export type FigureVersion = z.infer<typeof figureVersionSchema>;

/** A run a figure's panels use, with what the composer and the layout need. */
export const figureRunSchema = z.object({
  id: idSchema,
  title: z.string(),
  lattice: z.string(),
  background: z.string(),
  chips: z.number().int().min(0),
  shape: z.array(z.number().int().min(1)),
  origin: z.array(z.number().int()),
  /** the engine's exactness certificate, shown to readers with each panel; null when computed before certificates existed */
  certificate: certificateSchema.nullable(),
});
export type FigureRun = z.infer<typeof figureRunSchema>;

/**
 * One figure. Members of its lab get the draft (title, caption and spec as last saved: what the next
 * order prints) and every version; everyone else gets the published version's title, caption and
 * spec and the published versions only, so a cited figure never changes under its readers.
 */
export const figureDetailSchema = labFigureSchema.extend({
  /** the composition the next order prints (defaults filled in); for readers, the published one */
  spec: figureSpecSchema,
  /** newest first; readers see published versions only */
  versions: z.array(figureVersionSchema),
  runs: z.array(figureRunSchema),
  /** whether the caller may edit, order and publish */
  canEdit: z.boolean(),
  /** published, and the draft's title, caption or composition differ from what readers see */
  unpublishedChanges: z.boolean(),
  /** the newest version (not failed) printed from the draft as it is, null when the draft has changes no order has printed */
  draftVersion: z.number().int().min(1).nullable(),
});
export type FigureDetail = z.infer<typeof figureDetailSchema>;

export const FIGURES_PAGE_SIZE = 24;
const chipsQuery = z.coerce.number<number | string>().int().min(0).max(Number.MAX_SAFE_INTEGER).optional();
/** The public index's filters; a figure matches when one of its panels' runs meets all of them. */
export const listFiguresQuerySchema = z
  .strictObject({
    lattice: z.string().min(1).max(64).optional(),
    background: z.string().min(1).max(32).optional(),
    /** n of that run, inclusive bounds */
    nMin: chipsQuery,
    nMax: chipsQuery,
    page: pageSchema,
  })
  .refine((q) => q.nMin === undefined || q.nMax === undefined || q.nMin <= q.nMax, { message: 'nMin must not exceed nMax', path: ['nMin'] });
export type ListFiguresQuery = z.infer<typeof listFiguresQuerySchema>;
export type ListFiguresQueryInput = z.input<typeof listFiguresQuerySchema>;

export const listFiguresResponseSchema = z.object({ figures: z.array(figureSchema), total: z.number().int().min(0) });
export type ListFiguresResponse = z.infer<typeof listFiguresResponseSchema>;

export const labFiguresParamsSchema = z.strictObject({ labId: idSchema });
export const labFiguresResponseSchema = z.object({ figures: z.array(labFigureSchema) });
export type LabFiguresResponse = z.infer<typeof labFiguresResponseSchema>;

export const figureParamsSchema = z.strictObject({ slug: slugSchema });
/**
 * GET /api/figures/:slug: the figure, or, for a reader following the permanent link of a figure its
 * lab unpublished, only that it was withdrawn (200, so the link keeps answering).
 */
export const figureWithdrawnSchema = z.object({ withdrawn: z.literal(true), slug: z.string(), title: z.string(), withdrawnAt: isoDateSchema });
export type FigureWithdrawn = z.infer<typeof figureWithdrawnSchema>;
export const figureResponseSchema = z.union([z.object({ withdrawn: z.literal(false), figure: figureDetailSchema }), figureWithdrawnSchema]);
export type FigureResponse = z.infer<typeof figureResponseSchema>;

/** Compose a figure from finished runs of one lab. */
export const createFigureRequestSchema = z.strictObject({
  labId: idSchema,
  title: z.string().trim().min(1, 'give the figure a title').max(200),
  /** printed under the panels (the spec's caption follows it) and shown on the reader page */
  caption: z.string().max(CAPTION_MAX_CHARS).default(''),
  /** the permanent link's last part; derived from the title when omitted */
  slug: slugSchema.optional(),
  spec: printableFigureSpecSchema,
});
export type CreateFigureRequest = z.input<typeof createFigureRequestSchema>;

export const updateFigureRequestSchema = z
  .strictObject({
    title: z.string().trim().min(1, 'give the figure a title').max(200).optional(),
    caption: z.string().max(CAPTION_MAX_CHARS).optional(),
    spec: printableFigureSpecSchema.optional(),
  })
  .refine((b) => b.title !== undefined || b.caption !== undefined || b.spec !== undefined, { message: 'send a title, caption or spec to change' });
export type UpdateFigureRequest = z.input<typeof updateFigureRequestSchema>;

export const orderPrintRequestSchema = z.strictObject({
  formats: z.array(figureFormatSchema).min(1).max(3).default(['png', 'tiff', 'pdf']),
});
export type OrderPrintRequest = z.input<typeof orderPrintRequestSchema>;
export const figureVersionResponseSchema = z.object({ version: figureVersionSchema });

export const figureFileParamsSchema = z.strictObject({
  slug: slugSchema,
  number: z.coerce.number<number | string>().int().min(1).max(1_000_000),
  format: figureFormatSchema,
});
