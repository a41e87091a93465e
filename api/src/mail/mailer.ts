import nodemailer from 'nodemailer';

export type MailMessage = { to: string; subject: string; text: string; html: string };

/** Outgoing mail; the SMTP adapter is the only implementation, pointed at the local fake in dev and test. */
export interface Mailer {
  send(message: MailMessage): Promise<void>;
  close(): void;
}

export function createSmtpMailer(smtpUrl: string, from: string): Mailer {
  const transport = nodemailer.createTransport(smtpUrl);
  return {
    async send(message) {
      await transport.sendMail({ from, ...message });
    },
    close: () => transport.close(),
  };
}
