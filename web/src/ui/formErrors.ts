import type { z } from 'zod';
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

/**
 * Plain-language wording for zod's generic messages. Messages written into a schema take precedence
 * over this map (zod 4 error precedence), so only the defaults are reworded.
 */
export function friendlyMessage(issue: z.core.$ZodRawIssue): string | undefined {
  switch (issue.code) {
    case 'too_small':
      if (issue.origin === 'string') return `must be at least ${issue.minimum} characters`;
      if (issue.origin === 'array') return `needs at least ${issue.minimum} ${issue.minimum === 1 ? 'entry' : 'entries'}`;
      return `must be at least ${issue.minimum}`;
    case 'too_big':
      if (issue.origin === 'string') return `must be at most ${issue.maximum} characters`;
      if (issue.origin === 'array') return `allows at most ${issue.maximum} entries`;
      return `must be at most ${Number(issue.maximum).toLocaleString('en-US')}`;
    case 'invalid_type':
      if (issue.expected === 'number' || issue.expected === 'int') return 'enter a whole number';
      if (issue.input === undefined || issue.input === null || issue.input === '') return 'required';
      return undefined;
    default:
      return undefined;
  }
}

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
