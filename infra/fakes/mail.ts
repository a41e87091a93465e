import { randomUUID } from 'node:crypto';
import http from 'node:http';
import path from 'node:path';
import type { AddressInfo } from 'node:net';
import express from 'express';
import { SMTPServer } from 'smtp-server';
import { simpleParser } from 'mailparser';
import { Outbox, type OutboxMessage } from './mail-outbox.js';
import { closeOnSignals, exitWith, isMain, portFlag, readFlags } from './cli.js';

/**
 * The mail fake: a real SMTP server (smtp-server) that accepts every message, parses it with
 * mailparser and keeps it in an Outbox, plus an HTTP listing for tests and the dev outbox page:
 *   GET /messages[?to=addr] -> { messages: [...] } newest first;  GET /messages/:id;  DELETE /messages
 */
export interface MailFakeOptions {
  host?: string;
  /** 0 picks a free port */
  smtpPort?: number;
  httpPort?: number;
  /** folder for outbox.jsonl; without it the outbox lives in memory only */
  dir?: string;
}

export interface MailFake {
  smtpPort: number;
  httpPort: number;
  /** http://host:httpPort, the value for MAIL_OUTBOX_URL */
  url: string;
  outbox: Outbox;
  close(): Promise<void>;
}

/** `Name <address>` (or the bare address), unquoted, as a person writes it. */
function fromLine(a: { name?: string; address?: string } | undefined): string | undefined {
  if (!a?.address) return undefined;
  return a.name ? `${a.name} <${a.address}>` : a.address;
}

const MAX_MESSAGE_BYTES = 25 * 1024 * 1024;

export async function startMailFake(opts: MailFakeOptions = {}): Promise<MailFake> {
  const host = opts.host ?? '127.0.0.1';
  const outbox = new Outbox(opts.dir ? path.join(opts.dir, 'outbox.jsonl') : undefined);

  const smtp = new SMTPServer({
    authOptional: true,
    disabledCommands: ['STARTTLS'],
    logger: false,
    size: MAX_MESSAGE_BYTES,
    onData(stream, session, callback) {
      simpleParser(stream).then(
        (mail) => {
          const message: OutboxMessage = {
            id: randomUUID(),
            from: fromLine(mail.from?.value[0]) ?? (session.envelope.mailFrom ? session.envelope.mailFrom.address : ''),
            to: session.envelope.rcptTo.map((r) => r.address),
            subject: mail.subject ?? '',
            text: mail.text ?? '',
            date: new Date().toISOString(),
          };
          if (typeof mail.html === 'string') message.html = mail.html;
          outbox.add(message);
          callback();
        },
        (err: Error) => callback(err),
      );
    },
  });
  // smtp-server emits 'error' for client-side socket trouble; it must not end the fake.
  smtp.on('error', (err) => process.stderr.write(`mail fake: ${err.message}\n`));

  const app = express();
  app.get('/messages', (req, res) => {
    const to = typeof req.query.to === 'string' ? req.query.to : undefined;
    res.json({ messages: outbox.list({ to }) });
  });
  app.get('/messages/:id', (req, res) => {
    const message = outbox.get(req.params.id);
    if (!message) res.status(404).json({ error: `no message with id ${req.params.id}` });
    else res.json({ message });
  });
  app.delete('/messages', (_req, res) => {
    outbox.clear();
    res.status(204).end();
  });
  app.get('/health', (_req, res) => {
    res.json({ ok: true, messages: outbox.size });
  });
  app.use((req, res) => {
    res.status(404).json({ error: `no route ${req.method} ${req.path}` });
  });

  const httpServer = http.createServer(app);
  await new Promise<void>((resolve, reject) => {
    smtp.server.once('error', reject);
    smtp.listen(opts.smtpPort ?? 0, host, () => resolve());
  });
  try {
    await new Promise<void>((resolve, reject) => {
      httpServer.once('error', reject);
      httpServer.listen(opts.httpPort ?? 0, host, () => resolve());
    });
  } catch (err) {
    await new Promise<void>((r) => smtp.close(() => r()));
    throw err;
  }
  const smtpPort = (smtp.server.address() as AddressInfo).port;
  const httpPort = (httpServer.address() as AddressInfo).port;

  return {
    smtpPort,
    httpPort,
    url: `http://${host}:${httpPort}`,
    outbox,
    async close() {
      httpServer.closeAllConnections();
      await Promise.all([
        new Promise<void>((r) => httpServer.close(() => r())),
        new Promise<void>((r) => smtp.close(() => r())),
      ]);
    },
  };
}

if (isMain(import.meta.url)) {
  const flags = readFlags(['host', 'port', 'http-port', 'dir']);
  try {
    const fake = await startMailFake({
      host: flags.host,
      smtpPort: portFlag(flags, 'port', 14525),
      httpPort: portFlag(flags, 'http-port', 14526),
      dir: flags.dir,
    });
    console.log(`mail fake: SMTP on ${fake.smtpPort}, outbox at ${fake.url}/messages (${fake.outbox.size} kept)`);
    closeOnSignals(() => fake.close());
  } catch (err) {
    exitWith(1, `mail fake: cannot start: ${(err as Error).message}`);
  }
}
