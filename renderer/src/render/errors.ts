/**
 * Bad input to the renderer (arrays of the wrong length, heights outside the palette range, an unsafe
 * key). Matched by name as well as instanceof, because worker errors may cross a process boundary.
 */
export class RenderInputError extends Error {
  override name = 'RenderInputError';
}

export function isRenderInputError(err: unknown): err is RenderInputError {
  return err instanceof RenderInputError || (err instanceof Error && err.name === 'RenderInputError');
}
