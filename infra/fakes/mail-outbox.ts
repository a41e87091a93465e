import fs from 'node:fs';
import path from 'node:path';

/** One captured mail, as listed by the mail fake's HTTP API (and read by the API's /api/dev/outbox). */
export interface OutboxMessage {
  id: string;
  /** the From header as written, e.g. `Toppleworks <press@toppleworks.local>` */
  from: string;
  /** envelope recipients: every address the message was delivered to, Bcc included */
  to: string[];
  subject: string;
  text: string;
  /** absent when the message has no HTML part */
  html?: string;
  /** ISO 8601 time the fake received it */
  date: string;
}

/**
 * The captured mails: kept in memory and appended to a JSON-lines file, so a restart of the fake
 * keeps the outbox. One line per message makes a write atomic enough: a crash can only cut the last
 * line, which load() skips.
 */
export class Outbox {
  private messages: OutboxMessage[] = [];

  constructor(private readonly file?: string) {
    if (file) this.load(file);
  }

  private load(file: string): void {
    fs.mkdirSync(path.dirname(file), { recursive: true });
    if (!fs.existsSync(file)) return;
    for (const line of fs.readFileSync(file, 'utf8').split('\n')) {
      if (!line.trim()) continue;
      try {
        this.messages.push(JSON.parse(line) as OutboxMessage);
      } catch {
        // a line cut short by a crash; the rest of the outbox is still good
      }
    }
  }

  add(message: OutboxMessage): void {
    this.messages.push(message);
    if (this.file) fs.appendFileSync(this.file, JSON.stringify(message) + '\n');
  }

  /** Newest first; `to` keeps only messages delivered to that address (case-insensitive). */
  list(filter: { to?: string } = {}): OutboxMessage[] {
    const to = filter.to?.toLowerCase();
    const kept = to ? this.messages.filter((m) => m.to.some((a) => a.toLowerCase() === to)) : this.messages;
    return [...kept].reverse();
  }

  get(id: string): OutboxMessage | undefined {
    return this.messages.find((m) => m.id === id);
  }

  clear(): void {
    this.messages = [];
    if (this.file) fs.writeFileSync(this.file, '');
  }

  get size(): number {
    return this.messages.length;
  }
}
