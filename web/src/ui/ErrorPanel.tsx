import type { ReactNode } from 'react';
import { isApiError, messageForPeople } from '../api/ApiError.js';

/** Shows what went wrong in the API's own words, with the request id for support. */
export function ErrorPanel({ error, title, children }: { error: unknown; title?: ReactNode; children?: ReactNode }) {
  const message = error instanceof Error ? error.message : String(error);
  const status = isApiError(error) ? error.status : undefined;
  const requestId = isApiError(error) ? error.requestId : undefined;
  return (
    <div role="alert" className="rounded-lg border border-stamp/30 bg-stamp-tint/60 px-5 py-4 text-sm">
      <p className="font-semibold text-stamp">{title ?? headingFor(status)}</p>
      <p className="mt-1 text-ink">{message}</p>
      {requestId ? <p className="mt-2 font-mono text-xs text-ink-soft">request {requestId}</p> : null}
      {children ? <div className="mt-3">{children}</div> : null}
    </div>
  );
}

function headingFor(status: number | undefined): string {
  if (status === 403) return 'Not allowed';
  if (status === 404) return 'Nothing here';
  if (status === 0) return 'No connection';
  if (status !== undefined && status >= 500) return 'The server had a problem';
  return 'That did not work';
}

/** A short inline message under a form, e.g. "wrong e-mail or password". */
export function FormError({ error }: { error: unknown }) {
  if (!error) return null;
  const message = messageForPeople(error);
  return (
    <p role="alert" className="rounded-md border border-stamp/30 bg-stamp-tint/60 px-3 py-2 text-sm text-stamp">
      {message}
    </p>
  );
}
