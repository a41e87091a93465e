import type { OutboxMessage } from '../../shared/api/dev.js';

/** Wait for the SMTP fake to hold a mail to `to` whose subject matches; mails travel asynchronously. */
export async function waitForMail(outboxUrl: string, to: string, subject: RegExp, timeoutMs = 10_000): Promise<OutboxMessage> {
  const deadline = Date.now() + timeoutMs;
  for (;;) {
    const res = await fetch(`${outboxUrl}/messages?to=${encodeURIComponent(to)}`);
    if (res.ok) {
      const { messages } = (await res.json()) as { messages: OutboxMessage[] };
      const hit = messages.find((m) => subject.test(m.subject));
      if (hit) return hit;
    }
    if (Date.now() > deadline) throw new Error(`no mail to ${to} matching ${subject} within ${timeoutMs} ms`);
    await new Promise((r) => setTimeout(r, 200));
  }
}

/** The first link in a mail's text that goes to the given path of our web app. */
export function linkTo(message: OutboxMessage, pathname: string): string {
  const links = message.text.match(/https?:\/\/[^\s<>"')]+/g) ?? [];
  const hit = links.find((l) => new URL(l).pathname === pathname || new URL(l).pathname.startsWith(`${pathname}/`));
  if (!hit) throw new Error(`mail "${message.subject}" has no link to ${pathname}: ${links.join(' ')}`);
  return hit;
}
