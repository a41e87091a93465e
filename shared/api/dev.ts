import { z } from 'zod';

/** GET /api/dev/outbox (development and test only): mails captured by the local SMTP fake. */
export const outboxMessageSchema = z.object({
  id: z.string(),
  from: z.string(),
  to: z.array(z.string()),
  subject: z.string(),
  text: z.string(),
  html: z.string().optional(),
  date: z.string(),
});
export type OutboxMessage = z.infer<typeof outboxMessageSchema>;
export const outboxResponseSchema = z.object({ messages: z.array(outboxMessageSchema) });
export type OutboxResponse = z.infer<typeof outboxResponseSchema>;
