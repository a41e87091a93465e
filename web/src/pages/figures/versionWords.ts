import type { FigureVersion } from '../../api/contract.js';

/** The one word for each state of a print version: the version list and the publish notice say it. */
export const VERSION_STATUS_WORDS: Record<FigureVersion['status'], string> = { queued: 'waiting for the farm', printing: 'printing', ready: 'ready', failed: 'failed' };

/**
 * When a print ended, named by how it ended, as the run page does for runs (labels.ts runEndedText):
 * a print the farm refused "failed" at that time; only a ready one was "done". Empty before it ends.
 */
export function versionEndedText(v: Pick<FigureVersion, 'status' | 'finishedAt'>, when: (iso: string) => string): string {
  if (!v.finishedAt) return '';
  return `${v.status === 'failed' ? VERSION_STATUS_WORDS.failed : 'done'} ${when(v.finishedAt)}`;
}
