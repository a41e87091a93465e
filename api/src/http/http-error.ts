import type { ApiIssue } from '../../../shared/api/errors.js';

/** An expected failure with the status and message the client sees; the error middleware answers it. */
export class HttpError extends Error {
  override name = 'HttpError';
  constructor(
    readonly status: number,
    message: string,
    readonly issues?: ApiIssue[],
  ) {
    super(message);
  }
}

export const badRequest = (message: string, issues?: ApiIssue[]) => new HttpError(400, message, issues);
export const unauthorized = (message = 'sign in first') => new HttpError(401, message);
export const forbidden = (message = 'you are not allowed to do this') => new HttpError(403, message);
export const notFound = (what = 'not found') => new HttpError(404, what);
export const conflict = (message: string) => new HttpError(409, message);
