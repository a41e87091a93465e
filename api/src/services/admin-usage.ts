import { asc, eq } from 'drizzle-orm';
import { labs, ledgerEntries, ledgerLines, memberships, runs, users } from '../../../drizzle/schema.js';
import { QUOTA_RULES, type LabUsage, type MemberUsage, type Standing, type UsageMonth } from '../../../shared/api/admin.js';
import type { Db } from '../db/client.js';
import { accounts, monthOf } from '../billing/accounts.js';
import { entriesOf, labBalance } from '../billing/ledger.js';
import { reconcileLab } from '../billing/settle.js';
import { memberUsed, runUsages } from '../billing/usage.js';
import { allowanceOf } from '../billing/ledger.js';
import { toCsv } from './admin-csv.js';
import type { RunUsageMap } from '../storage/run-usage.js';

/** The last `n` calendar months up to `now`'s, oldest first ("2026-07" … "2026-12"). */
export function monthsUpTo(now: Date, n: number): string[] {
  const out: string[] = [];
  for (let k = n - 1; k >= 0; k--) out.push(monthOf(new Date(Date.UTC(now.getUTCFullYear(), now.getUTCMonth() - k, 1))));
  return out;
}

/** A member's standing against a personal monthly quota (pure). */
export function memberStandingOf(used: number, quota: number | null): Standing {
  if (quota === null) return 'ok';
  if (used >= quota) return 'over';
  return used >= QUOTA_RULES.closeShare * quota ? 'close' : 'ok';
}

/** A lab's standing against its free allowance (pure; the rule is QUOTA_RULES in shared/api/admin.ts). */
export function labStandingOf(b: { used: number; allowance: number; freeLeft: number; available: number }): { standing: Standing; note: string } {
  const n = (x: number) => x.toLocaleString('en-US');
  if (b.used > 0 && b.freeLeft === 0 && b.available === 0) {
    return { standing: 'over', note: `used ${n(b.used)} credits this month against an allowance of ${n(b.allowance)}, with no paid credits left: its next run will be refused` };
  }
  if (b.used >= QUOTA_RULES.closeShare * b.allowance && b.available < b.allowance) {
    return { standing: 'close', note: `used ${n(b.used)} of its ${n(b.allowance)}-credit allowance, with ${n(b.available)} paid credits left` };
  }
  return { standing: 'ok', note: `used ${n(b.used)} of its ${n(b.allowance)}-credit allowance; ${n(b.available)} paid credits available` };
}

const emptyMonth = (month: string): UsageMonth => ({ month, credits: 0, cpuSeconds: 0, runs: 0, storageBytes: 0, granted: 0, purchased: 0 });

/** Usage of one lab, its members and its balance history, from the ledger, the runs and the stored bytes. */
export async function labUsage(db: Db, labId: string, months: string[], bytes: RunUsageMap, now = new Date()): Promise<LabUsage> {
  await reconcileLab(db, labId);
  const [lab] = await db.select().from(labs).where(eq(labs.id, labId));
  const entries = await entriesOf(db, labId);
  const usages = runUsages(entries);
  const labRuns = await db.select({ id: runs.id, authorId: runs.authorId, createdAt: runs.createdAt, stats: runs.stats }).from(runs).where(eq(runs.labId, labId));
  const people = await db
    .select({ id: users.id, name: users.name, email: users.email, role: memberships.role, quota: memberships.monthlyQuota })
    .from(memberships)
    .innerJoin(users, eq(users.id, memberships.userId))
    .where(eq(memberships.labId, labId))
    .orderBy(asc(users.name));

  const table = () => new Map(months.map((m) => [m, emptyMonth(m)]));
  const labMonths = table();
  const memberMonths = new Map(people.map((p) => [p.id, table()]));
  const add = (memberId: string | null, month: string, f: (u: UsageMonth) => void) => {
    const l = labMonths.get(month);
    if (l) f(l);
    const m = memberId ? memberMonths.get(memberId)?.get(month) : undefined;
    if (m) f(m);
  };
  for (const u of usages) {
    const credits = u.state === 'open' ? u.reserved : u.state === 'settled' ? u.charged : 0;
    add(u.memberId, u.month, (x) => (x.credits += credits));
  }
  for (const r of labRuns) {
    const month = monthOf(r.createdAt);
    add(r.authorId, month, (x) => {
      x.runs += 1;
      x.cpuSeconds += r.stats?.seconds ?? 0;
      x.storageBytes += bytes.get(r.id)?.bytes ?? 0;
    });
  }
  // grants and purchases per month from the entries; the balance steps from the lines in the order
  // they were written (entries of one transaction share a timestamp, the lines' identity does not)
  for (const e of entries) {
    const month = labMonths.get(e.createdAt.slice(0, 7));
    const moved = e.lines.filter((l) => l.account === accounts.available(labId)).reduce((s, l) => s + l.amount, 0);
    if (month && (e.kind === 'grant' || e.kind === 'revocation')) month.granted += moved;
    if (month && e.kind === 'purchase') month.purchased += moved;
  }
  const lines = await db
    .select({ amount: ledgerLines.amount, at: ledgerEntries.createdAt, kind: ledgerEntries.kind })
    .from(ledgerLines)
    .innerJoin(ledgerEntries, eq(ledgerEntries.id, ledgerLines.entryId))
    .where(eq(ledgerLines.account, accounts.available(labId)))
    .orderBy(asc(ledgerLines.id));
  let running = 0;
  const balanceHistory: LabUsage['balanceHistory'] = lines.map((l) => ({ at: l.at.toISOString(), available: (running += l.amount), kind: l.kind }));

  const balance = await labBalance(db, labId, now);
  const { freeAllowance, isDefault } = await allowanceOf(db, labId);
  const month = monthOf(now);
  const usedThisMonth = labMonths.get(month)?.credits ?? 0;
  const { standing, note } = labStandingOf({ used: usedThisMonth, allowance: freeAllowance, freeLeft: balance.freeLeft, available: balance.available });
  const members: MemberUsage[] = people.map((p) => {
    const used = memberUsed(usages, p.id, month);
    return { memberId: p.id, name: p.name, email: p.email, role: p.role, monthlyQuota: p.quota, usedThisMonth: used, standing: memberStandingOf(used, p.quota), months: [...memberMonths.get(p.id)!.values()] };
  });
  return {
    labId,
    name: lab!.name,
    suspendedAt: lab!.suspendedAt?.toISOString() ?? null,
    suspendedReason: lab!.suspendedReason,
    freeAllowance,
    allowanceIsDefault: isDefault,
    available: balance.available,
    reserved: balance.reserved,
    freeLeft: balance.freeLeft,
    usedThisMonth,
    standing,
    standingNote: note,
    storageBytes: labRuns.reduce((s, r) => s + (bytes.get(r.id)?.bytes ?? 0), 0),
    months: [...labMonths.values()],
    members,
    balanceHistory,
  };
}

const STANDING_ORDER: Record<Standing, number> = { over: 0, close: 1, ok: 2 };

/** Every lab, those over quota first, then close, then by name. */
export async function allLabUsage(db: Db, months: string[], bytes: RunUsageMap, now = new Date()): Promise<LabUsage[]> {
  const ids = await db.select({ id: labs.id }).from(labs).orderBy(asc(labs.name));
  const out: LabUsage[] = [];
  for (const { id } of ids) out.push(await labUsage(db, id, months, bytes, now));
  return out.sort((a, b) => STANDING_ORDER[a.standing] - STANDING_ORDER[b.standing] || a.name.localeCompare(b.name));
}

/** One CSV row per lab and month, then per member and month (member columns empty on lab rows). */
export function usageCsv(labsUsage: LabUsage[]): string {
  const rows: (string | number | null)[][] = [];
  for (const l of labsUsage) {
    for (const m of l.months) rows.push([l.name, l.labId, null, null, m.month, m.credits, m.cpuSeconds, m.runs, m.storageBytes, m.granted, m.purchased, l.freeAllowance, null, l.standing]);
    for (const p of l.members) {
      for (const m of p.months) rows.push([l.name, l.labId, p.name, p.memberId, m.month, m.credits, m.cpuSeconds, m.runs, m.storageBytes, null, null, null, p.monthlyQuota, p.standing]);
    }
  }
  return toCsv(
    ['lab', 'lab_id', 'member', 'member_id', 'month', 'credits', 'cpu_seconds', 'runs', 'storage_bytes', 'granted_credits', 'purchased_credits', 'lab_free_allowance', 'member_monthly_quota', 'standing_now'],
    rows,
  );
}
