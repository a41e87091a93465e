import type { LabRole } from '../../../shared/api/auth.js';
import type { MailMessage } from './mailer.js';
import { htmlMail } from './layout.js';

export function invitationMail(publicUrl: string, to: string, labName: string, invitedBy: string, role: LabRole, token: string): MailMessage {
  const href = `${publicUrl}/invitations/${encodeURIComponent(token)}`;
  const roleWords = role === 'manager' ? 'a lab manager' : 'an author';
  const lines = [
    'Hello,',
    `${invitedBy} invites you to join ${labName} on Toppleworks as ${roleWords}.`,
    'Members share the lab\'s compute credits, start exact sandpile runs and publish figures together.',
    'Open the link within 14 days and sign in (or create an account) with this e-mail address to accept.',
  ];
  return {
    to,
    subject: `Join ${labName} on Toppleworks`,
    text: `${lines.join('\n\n')}\n\n${href}\n`,
    html: htmlMail(lines, { href, label: `Join ${labName}` }),
  };
}
