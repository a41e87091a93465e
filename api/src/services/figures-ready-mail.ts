import { and, eq, isNull } from 'drizzle-orm';
import { figures, figureVersions, users } from '../../../drizzle/schema.js';
import { DOWNLOAD_URL_SECONDS } from '../../../shared/api/figures.js';
import type { Env } from '../../../shared/env.js';
import type { Db } from '../db/client.js';
import { figureReadyMail } from '../mail/figure-ready-mail.js';
import type { Mailer } from '../mail/mailer.js';
import type { BlobStore } from '../storage/blob-store.js';

export type ReadyMailResult = 'sent' | 'not-ready' | 'already-sent' | 'missing' | 'no-recipient';

/**
 * Mail whoever ordered a figure version that it is printed, with presigned links to its files.
 * Idempotent like the run outcome mail: the row is claimed before sending and released if the SMTP
 * server refuses, so a retried job or two workers send one mail.
 * @example await sendFigureReadyMail({ db, mailer, blobs, env }, versionId)
 */
export async function sendFigureReadyMail(
  deps: { db: Db; mailer: Mailer; blobs: BlobStore; env: Pick<Env, 'PUBLIC_URL'> },
  versionId: string,
): Promise<ReadyMailResult> {
  const [row] = await deps.db
    .select({ v: figureVersions, figure: figures, email: users.email })
    .from(figureVersions)
    .innerJoin(figures, eq(figures.id, figureVersions.figureId))
    .leftJoin(users, eq(users.id, figureVersions.orderedById))
    .where(eq(figureVersions.id, versionId));
  if (!row) return 'missing';
  if (row.v.status !== 'ready') return 'not-ready';
  if (row.v.mailedAt) return 'already-sent';
  if (!row.email) return 'no-recipient';
  const claimed = await deps.db
    .update(figureVersions)
    .set({ mailedAt: new Date() })
    .where(and(eq(figureVersions.id, versionId), isNull(figureVersions.mailedAt)))
    .returning({ id: figureVersions.id });
  if (claimed.length === 0) return 'already-sent';
  try {
    const expiresAt = new Date(Date.now() + DOWNLOAD_URL_SECONDS * 1000);
    const files = await Promise.all(row.v.files.map(async (f) => ({ ...f, url: await deps.blobs.signedUrl(f.key, DOWNLOAD_URL_SECONDS) })));
    const first = row.v.files[0];
    await deps.mailer.send(
      figureReadyMail(deps.env.PUBLIC_URL, row.email, {
        slug: row.figure.slug,
        title: row.figure.title,
        version: row.v.number,
        widthPx: first?.widthPx ?? 0,
        heightPx: first?.heightPx ?? 0,
        dpi: row.v.spec.dpi,
        files,
        expiresAt,
      }),
    );
  } catch (err) {
    await deps.db.update(figureVersions).set({ mailedAt: null }).where(eq(figureVersions.id, versionId));
    throw err;
  }
  return 'sent';
}
