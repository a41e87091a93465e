/**
 * A print order that cannot be made as asked (bad spec, a run missing, a blocking layout warning).
 * Matched by name as well as instanceof, because worker errors may cross a process boundary.
 */
export class PrintInputError extends Error {
  override name = 'PrintInputError';
}

export function isPrintInputError(err: unknown): err is PrintInputError {
  return err instanceof PrintInputError || (err instanceof Error && err.name === 'PrintInputError');
}
