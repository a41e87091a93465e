import type { HttpError } from '../http/http-error.js';

/** PostgreSQL's SQLSTATE for unique_violation. */
const UNIQUE_VIOLATION = '23505';

function sqlState(err: unknown): string | undefined {
  const e = err as { code?: unknown; cause?: { code?: unknown } };
  const code = e?.code ?? e?.cause?.code;
  return typeof code === 'string' ? code : undefined;
}

/**
 * For `.catch(...)` on an insert: a unique violation (a race the pre-check lost) becomes the given
 * HttpError, anything else is rethrown.
 * @example await db.insert(labs).values(v).catch(uniqueAs(conflict('name taken')))
 */
export function uniqueAs(error: HttpError) {
  return (err: unknown): never => {
    throw sqlState(err) === UNIQUE_VIOLATION ? error : err;
  };
}
