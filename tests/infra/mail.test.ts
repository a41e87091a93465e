import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import nodemailer from 'nodemailer';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startMailFake, type MailFake } from '../../infra/fakes/mail.js';
import type { OutboxMessage } from '../../infra/fakes/mail-outbox.js';

/**
 * The mail fake driven by nodemailer (an outside, general-purpose SMTP client): what nodemailer
 * sends must come back through the HTTP listing decoded, as the API's dev outbox and the tests read it.
 */
let fake: MailFake;
let dir: string;
let transport: ReturnType<typeof nodemailer.createTransport>;

const list = async (query = ''): Promise<OutboxMessage[]> =>
  ((await (await fetch(`${fake.url}/messages${query}`)).json()) as { messages: OutboxMessage[] }).messages;

beforeAll(async () => {
  dir = fs.mkdtempSync(path.join(os.tmpdir(), 'tw-mail-'));
  fake = await startMailFake({ smtpPort: 0, httpPort: 0, dir });
  transport = nodemailer.createTransport({ host: '127.0.0.1', port: fake.smtpPort, secure: false, ignoreTLS: true });
});

afterAll(async () => {
  transport?.close();
  await fake?.close();
  fs.rmSync(dir, { recursive: true, force: true });
});

describe('mail fake', () => {
  it('captures a text + HTML mail and lists it with from, envelope recipients, subject, text, html and date', async () => {
    const info = await transport.sendMail({
      from: 'Toppleworks <press@toppleworks.local>',
      to: 'ada.quill@example.test',
      bcc: 'archive@example.test',
      subject: 'Verify your e-mail',
      text: 'Open http://127.0.0.1:5180/verify-email?token=abc to verify.',
      html: '<p>Open <a href="http://127.0.0.1:5180/verify-email?token=abc">this link</a> to verify.</p>',
    });
    // nodemailer reports the envelope recipients the server accepted (nodemailer docs, sendMail info.accepted)
    expect(info.accepted).toEqual(['ada.quill@example.test', 'archive@example.test']);

    const [m] = await list();
    expect(m).toMatchObject({
      from: 'Toppleworks <press@toppleworks.local>',
      to: ['ada.quill@example.test', 'archive@example.test'],
      subject: 'Verify your e-mail',
      text: 'Open http://127.0.0.1:5180/verify-email?token=abc to verify.',
    });
    expect(m!.html).toContain('href="http://127.0.0.1:5180/verify-email?token=abc"');
    expect(m!.id).toMatch(/^[0-9a-f-]{36}$/);
    expect(Number.isNaN(Date.parse(m!.date))).toBe(false);
  });

  it('decodes non-ASCII subjects and bodies that nodemailer encodes (RFC 2047 words, quoted-printable)', async () => {
    await transport.sendMail({
      from: 'press@toppleworks.local',
      to: 'zoë.ångström@example.test',
      subject: 'Einladung – Labor für Sandhaufen ✓',
      text: 'Grüße aus dem Labor: 10⁶ Körner, 1 × 1 mm.',
    });
    const [m] = await list();
    expect(m!.subject).toBe('Einladung – Labor für Sandhaufen ✓');
    expect(m!.text.trim()).toBe('Grüße aus dem Labor: 10⁶ Körner, 1 × 1 mm.');
    expect(m!.html).toBeUndefined();
  });

  it('lists newest first and filters by recipient', async () => {
    for (const n of [1, 2, 3]) {
      await transport.sendMail({ from: 'press@toppleworks.local', to: `order${n}@example.test`, subject: `Order ${n}`, text: `n=${n}` });
    }
    const all = await list();
    expect(all.slice(0, 3).map((m) => m.subject)).toEqual(['Order 3', 'Order 2', 'Order 1']);
    const one = await list('?to=ORDER2@example.test');
    expect(one.map((m) => m.subject)).toEqual(['Order 2']);
    const byId = await fetch(`${fake.url}/messages/${one[0]!.id}`);
    expect(((await byId.json()) as { message: OutboxMessage }).message.subject).toBe('Order 2');
    expect((await fetch(`${fake.url}/messages/no-such-id`)).status).toBe(404);
  });

  it('keeps the outbox across a restart (JSON lines on disk), and DELETE empties both', async () => {
    const before = await list();
    expect(before.length).toBeGreaterThan(0);
    await fake.close();
    fake = await startMailFake({ smtpPort: 0, httpPort: 0, dir });
    transport = nodemailer.createTransport({ host: '127.0.0.1', port: fake.smtpPort, secure: false, ignoreTLS: true });
    expect(await list()).toEqual(before);

    expect((await fetch(`${fake.url}/messages`, { method: 'DELETE' })).status).toBe(204);
    expect(await list()).toEqual([]);
    expect(fs.readFileSync(path.join(dir, 'outbox.jsonl'), 'utf8')).toBe('');
  });

  it('skips a line cut short by a crash and keeps the rest', async () => {
    await transport.sendMail({ from: 'press@toppleworks.local', to: 'kept@example.test', subject: 'Kept', text: 'kept' });
    fs.appendFileSync(path.join(dir, 'outbox.jsonl'), '{"id":"half');
    await fake.close();
    fake = await startMailFake({ smtpPort: 0, httpPort: 0, dir });
    transport = nodemailer.createTransport({ host: '127.0.0.1', port: fake.smtpPort, secure: false, ignoreTLS: true });
    expect((await list()).map((m) => m.subject)).toEqual(['Kept']);
  });

  it('answers unknown HTTP routes with 404 and a message', async () => {
    const res = await fetch(`${fake.url}/nothing-here`);
    expect(res.status).toBe(404);
    expect(((await res.json()) as { error: string }).error).toMatch(/no route GET \/nothing-here/);
  });
});
