import type { z } from 'zod';

/** The first validation issue as "path: message", one line, for CLI errors. */
export function firstIssue(error: z.ZodError): string {
  const issue = error.issues[0];
  if (!issue) return 'invalid';
  const path = issue.path.length ? issue.path.join('.') : '(top level)';
  return `${path}: ${issue.message}`.replace(/\s*\n\s*/g, ' ');
}
