import { groupThousands } from './counts.js';

const DAY = 86_400;
/** a Julian year: the unit only has to read right, not to match a calendar */
const YEAR = 365.25 * DAY;

/**
 * Whole seconds as "45 s", "3 min 20 s", "2 h 05 min", "3 days 4 h" or, past a year, "1.5 years" and
 * "3,190,605 years", so a huge estimate stays short and readable.
 */
export function formatDuration(totalSeconds: number): string {
  if (!Number.isFinite(totalSeconds) || totalSeconds < 0) return 'unknown';
  const s = Math.round(totalSeconds);
  if (s >= YEAR) {
    const years = s / YEAR;
    // one decimal while it still says something, whole grouped years beyond
    const text = years < 10 ? String(Math.floor(years * 10) / 10) : groupThousands(Math.floor(years));
    return `${text} ${text === '1' ? 'year' : 'years'}`;
  }
  if (s >= DAY) {
    const d = Math.floor(s / DAY);
    const h = Math.floor((s % DAY) / 3600);
    return `${d} ${d === 1 ? 'day' : 'days'} ${h} h`;
  }
  const h = Math.floor(s / 3600);
  const m = Math.floor((s % 3600) / 60);
  const sec = s % 60;
  if (h > 0) return `${h} h ${String(m).padStart(2, '0')} min`;
  if (m > 0) return `${m} min ${String(sec).padStart(2, '0')} s`;
  return `${sec} s`;
}
