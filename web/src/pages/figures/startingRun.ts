import type { Run } from '../../api/contract.js';
import { runStatusWord } from '../../labels.js';

/**
 * Which run a new figure starts from. `/figures/new?run=<id>` names one: it is used when it is a
 * finished run of the active lab, and otherwise refused in words, never quietly swapped for the
 * newest run (the composer then lets the person pick one). Without `?run` the newest finished run
 * is the start. Pure, so each case is tested without a browser.
 */
export type StartingRun =
  | { kind: 'start'; run: Run }
  /** the asked run is not among the lab's newest finished runs: its own answer is awaited */
  | { kind: 'looking' }
  | { kind: 'refused'; title: string; text: string };

/** What the composer says when the lab has nothing to compose from. */
export const NO_FINISHED_RUNS = { title: 'No finished runs yet', text: 'Figures are composed from finished runs; submit a run and come back when it is done.' } as const;

/**
 * @param asked the `run` search parameter, or null
 * @param finished the active lab's finished runs the composer lists, newest first
 * @param lookup the answer to GET /api/runs/:id for the asked run when it is not in `finished`:
 *   pending, refused (any 4xx: no such run, or one this person may not see), or the run
 */
export function startingRun(
  asked: string | null,
  finished: readonly Run[],
  labId: string,
  lookup: { pending: boolean; run: Run | null },
): StartingRun {
  if (asked === null || asked === '') return finished[0] ? { kind: 'start', run: finished[0] } : { kind: 'refused', ...NO_FINISHED_RUNS };
  const listed = finished.find((r) => r.id === asked);
  if (listed) return { kind: 'start', run: listed };
  if (lookup.pending) return { kind: 'looking' };
  const run = lookup.run;
  if (!run) {
    return {
      kind: 'refused',
      title: 'That run cannot be found',
      text: 'The address names a run that does not exist, or one you may not use. Pick one of your lab’s finished runs to start the figure from.',
    };
  }
  if (run.labId !== labId) {
    return {
      kind: 'refused',
      title: 'That run is not this lab’s to use',
      text: `“${run.title}” belongs to another lab; a figure is composed from its own lab’s runs. Switch to that lab to use it, or pick one of this lab’s finished runs.`,
    };
  }
  if (run.status !== 'finished' || !run.stats) {
    const ended = run.status === 'failed' || run.status === 'cancelled';
    const state = run.status === 'failed' ? runStatusWord('failed') : ended ? `was ${runStatusWord(run.status)}` : `is still ${runStatusWord(run.status)}`;
    return {
      kind: 'refused',
      title: ended ? 'That run has no result to print' : 'That run has no result to print yet',
      text: `“${run.title}” ${state}; figures are composed from finished runs. Pick one of them.`,
    };
  }
  // finished and the lab's own, only older than the runs listed
  return { kind: 'start', run };
}
