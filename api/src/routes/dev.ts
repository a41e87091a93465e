import { Router } from 'express';
import { z } from 'zod';
import { outboxResponseSchema } from '../../../shared/api/dev.js';
import type { AppDeps } from '../deps.js';
import { HttpError } from '../http/http-error.js';
import { respond } from '../http/respond.js';

/** What the mail fake lists; `to` may come as one string or a list. */
const fakeListingSchema = z.object({
  messages: z.array(
    z.object({
      id: z.union([z.string(), z.number()]).transform(String),
      from: z.string().default(''),
      to: z.union([z.string(), z.array(z.string())]).transform((t) => (Array.isArray(t) ? t : [t])),
      subject: z.string().default(''),
      text: z.string().default(''),
      html: z.string().nullish().transform((h) => h ?? undefined),
      date: z.string(),
    }),
  ),
});

/** The listing address: MAIL_OUTBOX_URL as given if it names /messages, else with /messages appended. */
export function outboxListingUrl(base: string): string {
  const url = new URL(base);
  if (!url.pathname.endsWith('/messages')) url.pathname = `${url.pathname.replace(/\/$/, '')}/messages`;
  return url.toString();
}

/** Development-only helpers; not mounted at all in production. */
export function devRouter({ env }: AppDeps): Router {
  const r = Router();

  r.get('/dev/outbox', async (_req, res) => {
    if (!env.MAIL_OUTBOX_URL) throw new HttpError(503, 'MAIL_OUTBOX_URL is not set, so there is no outbox to show');
    const answer = await fetch(outboxListingUrl(env.MAIL_OUTBOX_URL), { signal: AbortSignal.timeout(5000) }).catch(() => null);
    if (!answer?.ok) throw new HttpError(502, 'the mail fake did not answer');
    const parsed = fakeListingSchema.safeParse(await answer.json().catch(() => null));
    if (!parsed.success) throw new HttpError(502, 'the mail fake answered something unexpected');
    respond(res, 200, outboxResponseSchema, { messages: parsed.data.messages });
  });

  return r;
}
