import type { RunStatus } from './api/contract.js';

/**
 * The run statistics arrive as opaque JSON (the contract keeps them open while the worker's schema
 * grows). These helpers pick known figures by name and describe the rest with a named unit.
 */
type Stats = Record<string, unknown>;

function asStats(stats: unknown): Stats | null {
  return stats && typeof stats === 'object' && !Array.isArray(stats) ? (stats as Stats) : null;
}

function asCount(v: unknown): number | bigint | null {
  if (typeof v === 'number' && Number.isFinite(v)) return v;
  if (typeof v === 'bigint') return v;
  // Counts past 2^53 may travel as decimal strings to stay exact.
  if (typeof v === 'string' && /^-?\d+$/.test(v)) return BigInt(v);
  return null;
}

/** First present key wins, so both `topplings` and `totalTopplings` spellings are understood. */
export function readStat(stats: unknown, names: readonly string[]): number | bigint | null {
  const s = asStats(stats);
  if (!s) return null;
  for (const n of names) {
    const v = asCount(s[n]);
    if (v !== null) return v;
  }
  return null;
}

export const TOPPLED_SITES = ['toppledSites', 'toppled', 'sitesToppled'] as const;
export const TOPPLINGS = ['topplings', 'totalTopplings', 'toppleCount'] as const;

interface KnownStat {
  label: string;
  unit?: string;
}

/** Labels and units of statistics we know by name; anything else is shown with its own key. */
const KNOWN: Record<string, KnownStat> = {
  chips: { label: 'Grains', unit: 'grains' },
  totalChips: { label: 'Grains on the lattice', unit: 'grains' },
  mass: { label: 'Grains on the lattice', unit: 'grains' },
  toppledSites: { label: 'Sites that toppled', unit: 'sites' },
  topplings: { label: 'Topplings', unit: 'topplings' },
  totalTopplings: { label: 'Topplings', unit: 'topplings' },
  originTopplings: { label: 'Topplings at the origin', unit: 'topplings' },
  maxOdometer: { label: 'Largest odometer', unit: 'topplings' },
  occupiedSites: { label: 'Occupied sites', unit: 'sites' },
  radius: { label: 'Radius', unit: 'lattice spacings' },
  maxRadius: { label: 'Largest radius', unit: 'lattice spacings' },
  sweeps: { label: 'Sweeps', unit: 'sweeps' },
  seconds: { label: 'Compute time', unit: 's' },
  elapsedSeconds: { label: 'Compute time', unit: 's' },
  width: { label: 'Width', unit: 'sites' },
  height: { label: 'Height', unit: 'sites' },
};

export interface StatRow {
  key: string;
  label: string;
  value: number | bigint | string;
  unit?: string;
}

function humanise(key: string): string {
  const words = key.replace(/([a-z0-9])([A-Z])/g, '$1 $2').replace(/[_-]+/g, ' ').toLowerCase();
  return words.charAt(0).toUpperCase() + words.slice(1);
}

/** Flatten one level of nesting (e.g. `heightCounts: {0: …, 1: …}`) into labelled rows. */
export function statRows(stats: unknown): StatRow[] {
  const s = asStats(stats);
  if (!s) return [];
  const rows: StatRow[] = [];
  for (const [key, raw] of Object.entries(s)) {
    const known = KNOWN[key];
    const count = asCount(raw);
    if (count !== null) {
      rows.push({ key, label: known?.label ?? humanise(key), value: count, unit: known?.unit });
    } else if (typeof raw === 'string' || typeof raw === 'boolean') {
      rows.push({ key, label: known?.label ?? humanise(key), value: String(raw) });
    } else if (Array.isArray(raw) && raw.every((x) => asCount(x) !== null)) {
      rows.push({ key, label: known?.label ?? humanise(key), value: raw.map((x) => String(x)).join(', ') });
    } else if (asStats(raw)) {
      for (const [sub, v] of Object.entries(raw as Stats)) {
        const c = asCount(v);
        if (c !== null) rows.push({ key: `${key}.${sub}`, label: `${humanise(key)} · ${sub}`, value: c });
      }
    }
  }
  return rows;
}

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
