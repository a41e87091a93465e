/**
 * Exact number display: thousands grouped, large counts also as a power of ten, units always named.
 * Pure functions, so the same rules hold in tables, headings and tests.
 */

import { formatDuration } from '../../shared/duration.js';

// the count and duration rules live in shared/ so API-made titles follow them too; re-exported for the pages
export { chipsLabel, formatCountText, groupThousands, powerOfTen, superscriptDigits, withUnit, type PowerOfTen } from '../../shared/counts.js';
export { formatDuration } from '../../shared/duration.js';


/**
 * A measured time, such as the engine's: like formatDuration, but a run of a fraction of a second
 * reads "0.4 s" or "35 ms" rather than "0 s".
 */
export function formatElapsed(seconds: number): string {
  if (!Number.isFinite(seconds) || seconds < 0) return 'unknown';
  if (seconds < 0.001) return 'under 1 ms';
  const ms = Math.round(seconds * 1000);
  if (ms < 1000) return `${ms} ms`;
  // one decimal while whole seconds would hide most of the time ("1 s" for 1.4 s)
  if (seconds < 9.95) return `${seconds.toFixed(1)} s`;
  return formatDuration(seconds);
}

/** Progress 0..1 as a whole percent, never showing 100 % before the job is really done. */
export function formatPercent(fraction: number): string {
  const clamped = Math.min(1, Math.max(0, fraction));
  const pct = Math.floor(clamped * 100);
  return `${pct} %`;
}

const dateFormat = new Intl.DateTimeFormat('en-GB', { year: 'numeric', month: 'short', day: 'numeric' });
const dateTimeFormat = new Intl.DateTimeFormat('en-GB', {
  year: 'numeric', month: 'short', day: 'numeric', hour: '2-digit', minute: '2-digit',
});

/** ISO timestamp -> "1 Dec 2026"; anything unparsable is shown as a dash rather than "Invalid Date". */
export function formatDate(iso: string | null | undefined): string {
  if (!iso) return '—';
  const d = new Date(iso);
  return Number.isNaN(d.getTime()) ? '—' : dateFormat.format(d);
}

export function formatDateTime(iso: string | null | undefined): string {
  if (!iso) return '—';
  const d = new Date(iso);
  return Number.isNaN(d.getTime()) ? '—' : dateTimeFormat.format(d);
}

/**
 * Time left from progress so far, assuming the current rate holds; null until there is enough
 * progress to say anything honest.
 */
export function estimateSecondsLeft(progress: number, elapsedSeconds: number): number | null {
  if (!(progress > 0.01) || progress >= 1 || !(elapsedSeconds > 0)) return null;
  return (elapsedSeconds * (1 - progress)) / progress;
}
