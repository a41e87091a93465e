import type { UsageRow } from '../../../shared/api/credits.js';

/**
 * Usage of a lab's runs, folded from its reservation and closing entries. Pure, so the quota check,
 * the usage table and the CSV export count the same way: a run counts in the month it was submitted,
 * for the member who submitted it, at its reservation while open and at its charge once settled.
 */

export type ReservationDetail = { credits: number; fromAllowance: number; fromBalance: number; month: string };
export type SettlementDetail = { charge: number; freeCharged: number; paidCharged: number };

export interface RunUsage {
  runId: string;
  memberId: string | null;
  month: string;
  reserved: number;
  state: 'open' | 'settled' | 'released';
  charged: number;
  freeCharged: number;
}

type EntryLike = { kind: string; runId: string | null; memberId: string | null; detail: unknown };

export function runUsages(entries: EntryLike[]): RunUsage[] {
  const runs = new Map<string, RunUsage>();
  for (const e of entries) {
    if (e.kind !== 'reservation' || !e.runId) continue;
    const d = e.detail as ReservationDetail;
    runs.set(e.runId, { runId: e.runId, memberId: e.memberId, month: d.month, reserved: d.credits, state: 'open', charged: 0, freeCharged: 0 });
  }
  for (const e of entries) {
    const run = e.runId ? runs.get(e.runId) : undefined;
    if (!run) continue;
    if (e.kind === 'settlement') {
      const d = e.detail as SettlementDetail;
      Object.assign(run, { state: 'settled', charged: d.charge, freeCharged: d.freeCharged });
    } else if (e.kind === 'release') run.state = 'released';
  }
  return [...runs.values()];
}

/** Credits a member's runs of `month` take: held while open, charged once settled, nothing once released. */
export function memberUsed(usages: RunUsage[], memberId: string, month: string): number {
  return usages
    .filter((u) => u.memberId === memberId && u.month === month)
    .reduce((s, u) => s + (u.state === 'open' ? u.reserved : u.state === 'settled' ? u.charged : 0), 0);
}

/** One row per month and member, newest month first, then by name. */
export function usageRows(usages: RunUsage[], names: Map<string, string>): UsageRow[] {
  const rows = new Map<string, UsageRow>();
  for (const u of usages) {
    const key = `${u.month}|${u.memberId ?? ''}`;
    const row = rows.get(key) ?? { month: u.month, memberId: u.memberId, memberName: (u.memberId && names.get(u.memberId)) || 'former member', charged: 0, free: 0, reserved: 0, runs: 0 };
    row.runs += 1;
    if (u.state === 'open') row.reserved += u.reserved;
    if (u.state === 'settled') {
      row.charged += u.charged;
      row.free += u.freeCharged;
    }
    rows.set(key, row);
  }
  return [...rows.values()].sort((a, b) => (a.month === b.month ? a.memberName.localeCompare(b.memberName) : a.month < b.month ? 1 : -1));
}

/** RFC 4180 CSV (CRLF line ends, quotes doubled) of the usage rows. */
export function usageCsv(rows: UsageRow[]): string {
  const cell = (v: string | number | null) => {
    const s = v === null ? '' : String(v);
    return /[",\r\n]/.test(s) ? `"${s.replaceAll('"', '""')}"` : s;
  };
  const header = ['month', 'member_id', 'member', 'runs', 'charged_credits', 'of_which_free', 'reserved_credits'];
  const body = rows.map((r) => [r.month, r.memberId, r.memberName, r.runs, r.charged, r.free, r.reserved].map(cell).join(','));
  return [header.join(','), ...body].join('\r\n') + '\r\n';
}
