/**
 * The engine's three expected failures. Each sets `name`, because errors that cross a worker thread
 * or a process boundary lose their prototype: callers match by `isEngineError(err, 'ExplosionError')`.
 */

/** The specification itself is wrong (bad n, malformed graph, corrupt upload). Never worth retrying. */
export class EngineInputError extends Error {
  override name = 'EngineInputError' as const;
}

/** Refused up front: a theorem (cited in the message) says this run never stabilizes. */
export class ExplosionError extends Error {
  override name = 'ExplosionError' as const;
}

/** The pile outgrew the site budget; it may be explosive or just too big for this budget. */
export class NotStabilizedError extends Error {
  override name = 'NotStabilizedError' as const;
  constructor(readonly maxSites: number) {
    super(`did not stabilize within the bound of ${maxSites} sites`);
  }
}

export type EngineErrorName = 'EngineInputError' | 'ExplosionError' | 'NotStabilizedError';

export function isEngineError(err: unknown, name?: EngineErrorName): err is Error {
  if (!(err instanceof Error) && (typeof err !== 'object' || err === null)) return false;
  const n = (err as { name?: unknown }).name;
  if (name) return n === name;
  return n === 'EngineInputError' || n === 'ExplosionError' || n === 'NotStabilizedError';
}
