import type { MailMessage } from './mailer.js';
import { htmlMail } from './layout.js';
import { formatDuration } from '../../../shared/duration.js';

/**
 * `seconds`: from submission to the end, what the author waited; `farmSeconds`: the part a worker
 * spent on it, which the run page reports (null when the run never started). `lattice`: its name as the
 * pages say it (shared/lattice-names.ts).
 */
export type RunOutcome = { id: string; title: string; status: 'finished' | 'failed'; chips: number; lattice: string; error: string | null; seconds: number; farmSeconds: number | null };

export function runOutcomeMail(publicUrl: string, to: string, run: RunOutcome): MailMessage {
  const href = `${publicUrl.replace(/\/+$/, '')}/runs/${run.id}`;
  const what = `${run.lattice}, n = ${run.chips.toLocaleString('en-US')} grains`;
  // the wait and the farm time differ by the time in the queue: say both, so the mail and the run page agree
  const farm = run.farmSeconds === null ? '' : ` (${formatDuration(run.farmSeconds)} of farm time)`;
  const lines =
    run.status === 'finished'
      ? ['Hello,', `Your run "${run.title}" (${what}) is ready, ${formatDuration(run.seconds)} after you submitted it${farm}.`, 'Its arrays, statistics and deep-zoom views are on the run page.']
      : ['Hello,', `Your run "${run.title}" (${what}) stopped ${formatDuration(run.seconds)} after you submitted it${farm}, without a result.`, `The farm said: ${run.error ?? 'no reason given'}`];
  return {
    to,
    subject: run.status === 'finished' ? `Run ready: ${run.title}` : `Run failed: ${run.title}`,
    text: `${lines.join('\n\n')}\n\n${href}\n`,
    html: htmlMail(lines, { href, label: 'Open the run' }),
  };
}
