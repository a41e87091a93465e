import type { ErrorRequestHandler, RequestHandler } from 'express';
import type { ApiError } from '../../../shared/api/errors.js';
import type { Logger } from '../logger.js';
import { HttpError } from './http-error.js';
import { unavailable, type DependencyPorts } from './unavailable.js';

/** body-parser marks its failures with a `type`; these are the client's fault. */
function bodyParserError(err: unknown): HttpError | null {
  if (typeof err !== 'object' || err === null || !('type' in err)) return null;
  switch ((err as { type: unknown }).type) {
    case 'entity.parse.failed':
      return new HttpError(400, 'malformed JSON in request body');
    case 'entity.too.large': {
      // each parser states its own limit (1 MB for JSON, more for file uploads)
      const limit = Number((err as { limit?: unknown }).limit);
      const mb = Number.isFinite(limit) && limit > 0 ? Math.round((limit / 2 ** 20) * 10) / 10 : 1;
      return new HttpError(413, `request body is too large (limit ${mb} MB)`);
    }
    case 'encoding.unsupported':
    case 'charset.unsupported':
      return new HttpError(415, 'unsupported request body encoding');
    case 'request.aborted':
      return new HttpError(400, 'request body was cut off');
    default:
      return null;
  }
}

/** The router marks a path parameter it cannot percent-decode ("%E0%A4%A") as a URIError with status 400. */
function undecodableParam(err: unknown): HttpError | null {
  if (!(err instanceof URIError) || (err as URIError & { status?: unknown }).status !== 400) return null;
  return new HttpError(400, 'malformed percent-encoding in the URL path');
}

/** The one place errors become answers: HttpErrors as they are, anything else logged and answered 500. */
export function errorMiddleware(log: Logger, ports: DependencyPorts = {}): ErrorRequestHandler {
  return (err, req, res, _next) => {
    const requestId = String(res.locals.requestId ?? '');
    const known = err instanceof HttpError || (err as Error)?.name === 'HttpError' ? (err as HttpError) : (bodyParserError(err) ?? undecodableParam(err) ?? unavailable(err, ports));
    if (res.headersSent) {
      log.error('error after headers were sent', { requestId, err });
      res.end();
      return;
    }
    if (known) {
      if (known.status === 503) {
        log.warn('dependency unavailable', { requestId, method: req.method, path: req.path, err });
        res.setHeader('Retry-After', '5');
      }
      const body: ApiError = { error: known.message, requestId };
      if (known.issues?.length) body.issues = known.issues;
      res.status(known.status).json(body);
      return;
    }
    log.error('unexpected error', { requestId, method: req.method, path: req.path, err });
    res.status(500).json({ error: 'internal error; quote the request id when reporting it', requestId } satisfies ApiError);
  };
}

/** Unknown /api paths answer 404 in the error format instead of falling through to the web app. */
export const apiNotFound: RequestHandler = (req, _res, next) => {
  next(new HttpError(404, `no such API route: ${req.method} ${req.baseUrl}${req.path}`));
};
