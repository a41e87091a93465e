/** A .npy file that cannot be read: the message is user-facing and names what was wrong. */
export class NpyFormatError extends Error {
  override name = 'NpyFormatError';
}
