import type { RunStatus } from './api/contract.js';

/**
 * The line under the Statistics heading of a run page. The statistics arrive when the engine is
 * done, before the views are drawn, so "filled in when the run finishes" would sit over a full table.
 */
export function statsNote(status: RunStatus, hasStats: boolean): string | undefined {
  if (status === 'finished') return undefined;
  if (hasStats) return status === 'rendering' ? 'Computed and certified; the wall-clock time follows once the views are drawn.' : undefined;
  if (status === 'failed' || status === 'cancelled') return `None: the run was ${status === 'failed' ? 'stopped by an error' : 'cancelled'} before its final state was known.`;
  return 'Filled in when the engine has computed the final state.';
}
