import { RETENTION_RULE } from '../../../shared/api/admin.js';
import { htmlMail } from './layout.js';
import type { MailMessage } from './mailer.js';

/** The notice a lab gets before the artifacts of its unpublished runs are deleted (RETENTION_RULE). */
export function retentionMail(publicUrl: string, to: string, labName: string, items: { title: string; removalAt: string }[]): MailMessage {
  const lines = [
    `Some unpublished runs of ${labName} reach the end of their ${RETENTION_RULE.keepDays}-day storage period soon.`,
    ...items.map((i) => `• ${i.title}: tiles and arrays are deleted on ${i.removalAt.slice(0, 10)}.`),
    'The runs themselves, their statistics and specifications stay, so any of them can be computed again. Publish a figure of a run to keep its artifacts for good.',
  ];
  const href = `${publicUrl}/runs`;
  return { to, subject: `Toppleworks: ${items.length} unpublished run${items.length === 1 ? '' : 's'} of ${labName} will be cleared`, text: `${lines.join('\n\n')}\n\n${href}\n`, html: htmlMail(lines, { href, label: 'Open the runs' }) };
}
