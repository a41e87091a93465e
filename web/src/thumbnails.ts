import { figureThumbnailPath, runThumbnailPath } from '../../shared/api/artifacts.js';
import type { RunStatus } from '../../shared/api/runs.js';
import { runStatusWord } from './labels.js';

/**
 * What a list shows in a run's or figure's picture box: the address of its small picture, or none,
 * and the words the box says instead (also when the picture turns out not to be stored). Pure, so
 * every state is tested without a browser.
 */
export interface Picture {
  src: string | null;
  note: string;
}

/** Said when a finished run or a figure has no picture stored (drawn before pictures existed, or lost). */
export const NO_PICTURE = 'no picture stored';

const RUN_NOTES: Record<Exclude<RunStatus, 'finished'>, string> = {
  queued: 'waiting for the farm',
  computing: runStatusWord('computing'),
  rendering: runStatusWord('rendering'),
  failed: `${runStatusWord('failed')}: nothing to show`,
  cancelled: runStatusWord('cancelled'),
};

export function runPicture(run: { id: string; status: RunStatus; artifactsExpiredAt: string | null }): Picture {
  if (run.status !== 'finished') return { src: null, note: RUN_NOTES[run.status] };
  if (run.artifactsExpiredAt) return { src: null, note: 'artifacts removed' };
  return { src: runThumbnailPath(run.id), note: NO_PICTURE };
}

/** A figure always has a run that finished, so there is a picture to ask for: its page, or its first panel. */
export const figurePicture = (figure: { slug: string }): Picture => ({ src: figureThumbnailPath(figure.slug), note: NO_PICTURE });
