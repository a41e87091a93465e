/** One path-qualified problem with a request, as the API and the browser-side zod checks both report them. */
export interface Issue {
  path: string;
  message: string;
}

/** A failed API call: the HTTP status plus the API's own `{ error, issues, requestId }` body. */
export class ApiError extends Error {
  override name = 'ApiError';
  constructor(
    readonly status: number,
    message: string,
    readonly issues: Issue[] = [],
    readonly requestId?: string,
  ) {
    super(message);
  }
}

export function isApiError(e: unknown): e is ApiError {
  return e instanceof ApiError || (e instanceof Error && e.name === 'ApiError');
}

export function isStatus(e: unknown, status: number): boolean {
  return isApiError(e) && e.status === status;
}
