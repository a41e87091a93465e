import { mailedLinkLifetime } from '../../../shared/api/auth.js';
import type { MailMessage } from './mailer.js';
import { htmlMail } from './layout.js';

export function resetMail(publicUrl: string, to: string, name: string, token: string): MailMessage {
  const href = `${publicUrl}/reset-password?token=${encodeURIComponent(token)}`;
  const lines = [
    `Hello ${name},`,
    'someone asked to choose a new password for your Toppleworks account.',
    `The link below works once and for ${mailedLinkLifetime('reset_password')}; choosing a new password signs out every open session.`,
    'If it was not you, ignore this mail: your password stays as it is.',
  ];
  return {
    to,
    subject: 'Choose a new Toppleworks password',
    text: `${lines.join('\n\n')}\n\n${href}\n`,
    html: htmlMail(lines, { href, label: 'Choose a new password' }),
  };
}
