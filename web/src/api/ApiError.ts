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

/**
 * What a page opened by its address reads as "nothing here": the API hides other labs' things behind
 * a 404 and refuses a malformed id or slug with a 400, and to a person both mean a wrong link.
 */
export const isAddressMissing = (e: unknown): boolean => isStatus(e, 404) || isStatus(e, 400);

/**
 * The message for people: the API puts the field first ("spec: this run needs …") for scripts, and a
 * form already says where it is, so that prefix is left off.
 */
export function messageForPeople(e: unknown): string {
  const message = e instanceof Error ? e.message : String(e);
  const path = isApiError(e) ? e.issues[0]?.path : undefined;
  return path && message.startsWith(`${path}: `) ? message.slice(path.length + 2) : message;
}
