import { mailedLinkLifetime } from '../../../shared/api/auth.js';
import type { MailMessage } from './mailer.js';
import { htmlMail } from './layout.js';

export function verificationMail(publicUrl: string, to: string, name: string, token: string): MailMessage {
  const href = `${publicUrl}/verify-email?token=${encodeURIComponent(token)}`;
  const lines = [
    `Hello ${name},`,
    'please confirm that this address is yours so you can start runs and set up labs on Toppleworks.',
    `The link works once and for ${mailedLinkLifetime('verify_email')}. If you did not sign up, ignore this mail and nothing happens.`,
  ];
  return {
    to,
    subject: 'Confirm your e-mail for Toppleworks',
    text: `${lines.join('\n\n')}\n\n${href}\n`,
    html: htmlMail(lines, { href, label: 'Confirm my e-mail' }),
  };
}
