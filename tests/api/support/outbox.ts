import { outboxListingUrl } from '../../../api/src/routes/dev.js';
import { outboxResponseSchema, type OutboxMessage } from '../../../shared/api/dev.js';
import type { Env } from '../../../shared/env.js';

/** Mails captured by the SMTP fake, read from its HTTP listing (MAIL_OUTBOX_URL). */
export async function listOutbox(env: Env): Promise<OutboxMessage[]> {
  if (!env.MAIL_OUTBOX_URL) throw new Error('MAIL_OUTBOX_URL is not set: the API tests need the mail fake');
  const res = await fetch(outboxListingUrl(env.MAIL_OUTBOX_URL));
  return outboxResponseSchema.parse(await res.json()).messages;
}

/** Wait for the newest mail to `to` whose subject matches; SMTP delivery is quick but not synchronous. */
export async function waitForMail(env: Env, to: string, subject: RegExp, timeoutMs = 5000): Promise<OutboxMessage> {
  const until = Date.now() + timeoutMs;
  for (;;) {
    const hit = (await listOutbox(env)).filter((m) => m.to.includes(to) && subject.test(m.subject)).at(-1);
    if (hit) return hit;
    if (Date.now() > until) throw new Error(`no mail to ${to} matching ${subject} within ${timeoutMs} ms`);
    await new Promise((r) => setTimeout(r, 100));
  }
}

export async function mailsTo(env: Env, to: string): Promise<OutboxMessage[]> {
  return (await listOutbox(env)).filter((m) => m.to.includes(to));
}

/** The token in a mailed link such as `${PUBLIC_URL}/verify-email?token=...` or `/invitations/<token>`. */
export function linkToken(text: string, pattern: RegExp): string {
  const m = pattern.exec(text);
  if (!m?.[1]) throw new Error(`no link matching ${pattern} in mail:\n${text}`);
  return decodeURIComponent(m[1]);
}
