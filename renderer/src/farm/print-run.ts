import { createReadStream } from 'node:fs';
import { mkdtemp, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { PutObjectCommand, type S3Client } from '@aws-sdk/client-s3';
import { UnrecoverableError, type Job } from 'bullmq';
import { and, eq, inArray } from 'drizzle-orm';
import type { Db } from '../../../api/src/db/client.js';
import type { BlobStore } from '../../../api/src/storage/blob-store.js';
import { figures, figureVersions, runs, type FigureFileRecord } from '../../../drizzle/schema.js';
import { printFigureDataSchema } from '../../../shared/jobs.js';
import { resolveProblem } from '../engine/index.js';
import { THUMBNAIL_MAX_SIDE } from '../../../shared/api/artifacts.js';
import { isPrintInputError, PRINT_CONTENT_TYPES, renderPrint, type PrintFormat, type PrintRun } from '../print/index.js';
import { backgroundFromLattice, type RenderInput } from '../render/index.js';
import { printKey, printThumbnailKey } from './artifacts.js';
import { readStoredArrays, readStoredUpload } from './stored-arrays.js';

export interface PrintDeps {
  db: Db;
  store: BlobStore;
  /** the object store's own client: print files are streamed up from disk, never held in memory */
  s3: S3Client;
  bucket: string;
  /** tell whoever ordered the version that it is ready (mail); must not throw */
  notifyReady(versionId: string): Promise<void>;
  /** where the files are written before upload (default: the system's temporary folder) */
  workDir?: string;
}


const EXTENSIONS: Record<PrintFormat, string> = { png: 'png', tiff: 'tif', pdf: 'pdf' };

/** The run's initial heights, for the difference layer: the same background the engine started from. */
async function backgroundOf(store: BlobStore, spec: (typeof runs.$inferSelect)['spec'], input: RenderInput) {
  const uploads = await readStoredUpload(store, spec.background);
  const problem = resolveProblem(spec, uploads);
  return backgroundFromLattice((x, y, z) => problem.background.heightAt(x, y, z), input);
}

/**
 * Prints one figure version: reads the runs' arrays, calls the print engine for each ordered
 * format, uploads the files, then marks the version ready and mails whoever ordered it. A spec the
 * engine refuses fails at once with its reason; other faults are retried, and the last attempt
 * records the failure.
 */
export async function printRun(job: Job, deps: PrintDeps): Promise<'ready' | 'skipped'> {
  const { versionId } = printFigureDataSchema.parse(job.data);
  const [row] = await deps.db
    .select({ v: figureVersions, figure: figures })
    .from(figureVersions)
    .innerJoin(figures, eq(figures.id, figureVersions.figureId))
    .where(eq(figureVersions.id, versionId));
  if (!row || row.v.status === 'ready' || row.v.status === 'failed') return 'skipped';
  const { v, figure } = row;
  const stage = (text: string) => deps.db.update(figureVersions).set({ stage: text }).where(eq(figureVersions.id, versionId));
  await deps.db
    .update(figureVersions)
    .set({ status: 'printing', stage: 'reading the runs', startedAt: new Date() })
    .where(and(eq(figureVersions.id, versionId), inArray(figureVersions.status, ['queued', 'printing'])));

  const dir = await mkdtemp(join(deps.workDir ?? tmpdir(), 'tw-print-'));
  try {
    const ids = [...new Set(v.spec.panels.map((p) => p.runId))];
    const runRows = await deps.db.select().from(runs).where(inArray(runs.id, ids));
    const printRuns: PrintRun[] = [];
    for (const r of runRows) {
      const input = await readStoredArrays(deps.store, r.id);
      const needsBackground = v.spec.panels.some((p) => p.runId === r.id && p.layer === 'difference');
      printRuns.push({ runId: r.id, input, chips: r.spec.chips, background: needsBackground ? await backgroundOf(deps.store, r.spec, input) : undefined });
    }
    const base = `${figure.slug}-v${v.number}`;
    const paths: Partial<Record<PrintFormat, string>> = {};
    for (const f of v.formats) paths[f] = join(dir, `${base}.${EXTENSIONS[f]}`);
    await stage(`printing ${v.formats.map((f) => f.toUpperCase()).join(', ')}`);
    // lists show the page small: the print engine shrinks it from the PNG or TIFF, or for a PDF-only
    // order from a scratch PNG of the same page (print/thumbnail.ts)
    const result = await renderPrint(v.spec, printRuns, paths, { title: figure.title, creationDate: v.createdAt, thumbnail: THUMBNAIL_MAX_SIDE }).catch((err: unknown) => {
      throw isPrintInputError(err) ? new UnrecoverableError((err as Error).message) : err;
    });

    await stage('storing the files');
    const files: FigureFileRecord[] = [];
    for (const file of result.files) {
      const name = `${base}.${EXTENSIONS[file.format]}`;
      const key = printKey(figure.id, v.number, name);
      await deps.s3.send(
        new PutObjectCommand({ Bucket: deps.bucket, Key: key, Body: createReadStream(file.path), ContentLength: file.bytes, ContentType: PRINT_CONTENT_TYPES[file.format], ContentDisposition: `attachment; filename="${name}"` }),
      );
      files.push({ format: file.format, key, name, bytes: file.bytes, sha256: file.sha256, widthPx: file.widthPx, heightPx: file.heightPx });
    }
    // stored before the version is marked ready, so a ready version always has its page thumbnail
    if (result.thumbnail) await deps.store.put(printThumbnailKey(figure.id, v.number), result.thumbnail.jpeg, 'image/jpeg');
    const [done] = await deps.db
      .update(figureVersions)
      .set({ status: 'ready', stage: null, files, error: null, finishedAt: new Date() })
      .where(and(eq(figureVersions.id, versionId), eq(figureVersions.status, 'printing')))
      .returning({ id: figureVersions.id });
    if (done) await deps.notifyReady(versionId);
    return 'ready';
  } catch (err) {
    const last = err instanceof UnrecoverableError || (err as Error).name === 'UnrecoverableError' || job.attemptsMade + 1 >= (job.opts.attempts ?? 1);
    if (last) {
      await deps.db
        .update(figureVersions)
        .set({ status: 'failed', stage: null, error: (err as Error).message, finishedAt: new Date() })
        .where(eq(figureVersions.id, versionId));
    }
    throw err;
  } finally {
    await rm(dir, { recursive: true, force: true });
  }
}
