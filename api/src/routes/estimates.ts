import { Router } from 'express';
import { estimateRequestSchema, estimateResponseSchema } from '../../../shared/api/estimates.js';
import { requireUser } from '../auth/middleware.js';
import type { AppDeps } from '../deps.js';
import { badRequest } from '../http/http-error.js';
import { respond } from '../http/respond.js';
import { validate } from '../http/validate.js';
import { findBackground } from '../services/background-uploads.js';
import { estimateOrRefuse, memoryRefusal } from '../services/run-memory.js';

export function estimatesRouter({ db }: AppDeps): Router {
  const r = Router();

  /**
   * The run form's prediction (shared/estimate.ts), or why the farm cannot compute the run; a spec
   * that does not validate is a 400. An uploaded background is read from its record.
   */
  r.post('/estimates', requireUser, async (req, res) => {
    const { spec } = validate.body(req, estimateRequestSchema);
    const bg = spec.background;
    const upload = bg.kind === 'array' ? await findBackground(db, bg.sha256) : null;
    if (bg.kind === 'array' && !upload) throw badRequest(`spec.background: no uploaded background has sha256 ${bg.sha256}`);
    const estimate = estimateOrRefuse(spec, upload ? { shape: upload.shape, meanHeight: upload.meanHeight } : undefined);
    // a run too large for the machines is a valid question with a definite answer (the submit's own
    // refusal, in its words), not a bad request; no price is given, as it would only follow from the size
    const refusal = memoryRefusal(estimate);
    respond(res, 200, estimateResponseSchema, refusal ? { refused: { reason: refusal.reason, bytes: refusal.bytes, limitBytes: refusal.limitBytes } } : { estimate });
  });

  return r;
}
