import type { Request } from 'express';
import type { z } from 'zod';
import { friendlyMessage, type ApiIssue } from '../../../shared/api/errors.js';
import { HttpError } from './http-error.js';

type Where = 'body' | 'query' | 'params';

/** zod issues as `{ path, message }`, the path dotted and relative to the part of the request. */
export function toIssues(error: z.ZodError): ApiIssue[] {
  return error.issues.map((issue) => ({ path: issue.path.map(String).join('.'), message: issue.message }));
}

function parse<S extends z.ZodType>(where: Where, schema: S, value: unknown): z.output<S> {
  // zod's own defaults ("Too big: expected number to be <=100") in the words the forms use
  const result = schema.safeParse(value, { error: friendlyMessage });
  if (result.success) return result.data;
  const issues = toIssues(result.error);
  const summary = issues.map((i) => (i.path ? `${i.path}: ${i.message}` : i.message)).join('; ');
  throw new HttpError(400, `invalid request ${where}: ${summary}`, issues);
}

/**
 * Parse one part of the request with its shared schema; a failure becomes a 400 with every issue.
 * @example const { email } = validate.body(req, signInRequestSchema);
 */
export const validate = {
  // A missing JSON body arrives as undefined; report it as "expected object" rather than crash.
  body: <S extends z.ZodType>(req: Request, schema: S) => parse('body', schema, req.body ?? {}),
  query: <S extends z.ZodType>(req: Request, schema: S) => parse('query', schema, req.query),
  params: <S extends z.ZodType>(req: Request, schema: S) => parse('params', schema, req.params),
};
