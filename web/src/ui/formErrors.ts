import type { z } from 'zod';
import { friendlyMessage } from '../../../shared/api/errors.js';
import { isApiError, type Issue } from '../api/ApiError.js';

/** Field path -> first message, e.g. { email: 'not an e-mail address' }. */
export type FieldErrors = Record<string, string>;

export function issuesToFieldErrors(issues: readonly Issue[]): FieldErrors {
  const out: FieldErrors = {};
  for (const i of issues) {
    const key = i.path || 'body';
    out[key] ??= i.message;
  }
  return out;
}

// the wording lives beside the API's error shape, so a form and a 400 answer say the same thing
export { friendlyMessage } from '../../../shared/api/errors.js';

/** Browser-side check with the same schema the API uses; issues come out in the API's own shape. */
export function validate<S extends z.ZodType>(
  schema: S,
  values: unknown,
): { ok: true; data: z.infer<S> } | { ok: false; errors: FieldErrors } {
  const r = schema.safeParse(values, { error: friendlyMessage });
  if (r.success) return { ok: true, data: r.data };
  return {
    ok: false,
    errors: issuesToFieldErrors(r.error.issues.map((i) => ({ path: i.path.map(String).join('.'), message: i.message }))),
  };
}

/** Field errors from a failed request (400 issues), so server-side checks land beside the right input. */
export function serverFieldErrors(e: unknown): FieldErrors {
  return isApiError(e) ? issuesToFieldErrors(e.issues) : {};
}
