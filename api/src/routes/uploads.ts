import express, { Router } from 'express';
import { backgroundUploadParamsSchema, backgroundUploadResponseSchema, UPLOAD_CONTENT_TYPES, UPLOAD_MAX_BYTES, uploadBackgroundQuerySchema } from '../../../shared/api/uploads.js';
import { authOf, checkLabAccess, requireUser, requireVerified } from '../auth/middleware.js';
import type { AppDeps } from '../deps.js';
import { badRequest, HttpError, notFound } from '../http/http-error.js';
import { respond } from '../http/respond.js';
import { validate } from '../http/validate.js';
import { audit } from '../services/audit.js';
import { decodeBackground, findBackground, saveBackground, uploadView } from '../services/background-uploads.js';
import { activeLabOf } from '../services/me.js';

/** Routes whose body is a file, not JSON (app.ts lets them past its JSON-only rule). */
export const RAW_BODY_PATHS = ['/uploads/background'];

const rawBody = express.raw({ type: [...UPLOAD_CONTENT_TYPES], limit: UPLOAD_MAX_BYTES });

export function uploadsRouter({ db, blobs }: AppDeps): Router {
  const r = Router();

  // the lab check comes before the body is read, so strangers cannot make us buffer 64 MB
  r.post('/uploads/background', requireUser, requireVerified, async (req, res, next) => {
    const q = validate.query(req, uploadBackgroundQuerySchema);
    const user = authOf(res).user;
    const labId = q.labId ?? (await activeLabOf(db, user));
    if (!labId) throw badRequest('no labId given and you belong to no lab yet');
    res.locals.lab = await checkLabAccess(db, user, labId, 'member');
    next();
  }, rawBody, async (req, res) => {
    if (!Buffer.isBuffer(req.body)) {
      throw new HttpError(415, `send the file itself as the request body, with Content-Type ${UPLOAD_CONTENT_TYPES.join(' or ')}`);
    }
    if (req.body.length === 0) throw badRequest('the request body is empty; send the .npy or PNG file');
    const user = authOf(res).user;
    const decoded = await decodeBackground(new Uint8Array(req.body.buffer, req.body.byteOffset, req.body.byteLength));
    const upload = await saveBackground(db, blobs, decoded, user.id);
    if (upload.created) {
      await audit(db, { actorId: user.id, labId: res.locals.lab!.labId, action: 'upload.background', subjectType: 'upload', subjectId: upload.sha256, detail: { shape: upload.shape, source: upload.source } });
    }
    respond(res, upload.created ? 201 : 200, backgroundUploadResponseSchema, { upload });
  });

  /** What the form shows for a background chosen earlier (by its hash in a duplicated spec). */
  r.get('/uploads/background/:sha256', requireUser, async (req, res) => {
    const { sha256 } = validate.params(req, backgroundUploadParamsSchema);
    const row = await findBackground(db, sha256);
    if (!row) throw notFound('no uploaded background has this sha256');
    respond(res, 200, backgroundUploadResponseSchema, {
      upload: uploadView(
        { sha256: row.sha256, shape: row.shape, min: row.minHeight, max: row.maxHeight, mean: row.meanHeight, source: row.source, levels: row.levels ?? undefined, heightCounts: row.heightCounts, countAbove: row.countAbove },
        false,
      ),
    });
  });

  return r;
}
