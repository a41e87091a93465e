import { and, eq, inArray, sql } from 'drizzle-orm';
import { labs, ledgerEntries, ledgerLines } from '../../../drizzle/schema.js';
import { FREE_MONTHLY_ALLOWANCE, type CreditBalance, type LedgerEntry } from '../../../shared/api/credits.js';
import type { Db } from '../db/client.js';
import { notFound } from '../http/http-error.js';
import { accounts, monthOf } from './accounts.js';

/** A database handle or an open transaction: ledger reads work on both, writes belong in a transaction. */
export type Tx = Parameters<Parameters<Db['transaction']>[0]>[0];
export type Executor = Db | Tx;

export type EntryKind = (typeof ledgerEntries.$inferInsert)['kind'];
export type Line = { account: string; amount: number };
export type NewEntry = {
  labId: string;
  kind: EntryKind;
  idempotencyKey: string;
  runId?: string | null;
  memberId?: string | null;
  purchaseId?: string | null;
  actorId?: string | null;
  reason?: string | null;
  detail?: Record<string, unknown>;
};

/**
 * Book one balanced entry. Returns null, booking nothing, when an entry with the same idempotency
 * key exists: a replayed webhook or a second settlement of one run changes no balance.
 * The database checks at commit that the lines sum to zero and no lab account is overdrawn.
 */
export async function post(tx: Tx, entry: NewEntry, lines: Line[]): Promise<{ id: string } | null> {
  const moving = lines.filter((l) => l.amount !== 0);
  const total = moving.reduce((s, l) => s + l.amount, 0);
  if (moving.length < 2 || total !== 0) throw new Error(`unbalanced ledger entry ${entry.idempotencyKey}: ${JSON.stringify(moving)}`);
  const [row] = await tx
    .insert(ledgerEntries)
    .values({ ...entry, detail: entry.detail ?? null })
    .onConflictDoNothing({ target: ledgerEntries.idempotencyKey })
    .returning({ id: ledgerEntries.id });
  if (!row) return null;
  await tx.insert(ledgerLines).values(moving.map((l) => ({ entryId: row.id, account: l.account, amount: l.amount })));
  return row;
}

/**
 * Serialise every balance-lowering change of one lab: reservations and revocations take this row
 * lock first, so two submissions racing for the last credits see each other's reservation.
 * NO KEY UPDATE rather than UPDATE: inserting a run takes KEY SHARE on its lab (the foreign key),
 * which FOR UPDATE would conflict with and turn two racing submissions into a deadlock.
 */
export async function lockLab(tx: Tx, labId: string): Promise<void> {
  const rows = await tx.select({ id: labs.id }).from(labs).where(eq(labs.id, labId)).for('no key update');
  if (rows.length === 0) throw notFound('lab not found');
}

/** Sums over the lines of the given accounts; accounts without lines are 0. */
export async function balancesOf(ex: Executor, names: string[]): Promise<Map<string, number>> {
  const rows = await ex
    .select({ account: ledgerLines.account, total: sql<string>`sum(${ledgerLines.amount})` })
    .from(ledgerLines)
    .where(inArray(ledgerLines.account, names))
    .groupBy(ledgerLines.account);
  const out = new Map(names.map((n) => [n, 0]));
  for (const r of rows) out.set(r.account, Number(r.total));
  return out;
}

/** Whether this month's free allowance has been issued (it is, lazily, at the lab's first reservation of the month). */
const allowanceKey = (labId: string, month: string) => `allowance:${labId}:${month}`;

/** A lab's monthly free allowance: a site admin's setting for it (labs.free_allowance), else the site-wide default. */
export async function allowanceOf(ex: Executor, labId: string): Promise<{ freeAllowance: number; isDefault: boolean }> {
  const [row] = await ex.select({ a: labs.freeAllowance }).from(labs).where(eq(labs.id, labId));
  if (!row) throw notFound('lab not found');
  return row.a === null ? { freeAllowance: FREE_MONTHLY_ALLOWANCE, isDefault: true } : { freeAllowance: row.a, isDefault: false };
}

export async function ensureAllowance(tx: Tx, labId: string, month: string): Promise<void> {
  const amount = (await allowanceOf(tx, labId)).freeAllowance;
  if (amount <= 0) return;
  await post(tx, { labId, kind: 'allowance', idempotencyKey: allowanceKey(labId, month), reason: `free allowance for ${month}` }, [
    { account: accounts.free(labId, month), amount },
    { account: accounts.allowance, amount: -amount },
  ]);
}

/** A lab's balance, derived from its lines; an allowance not yet issued this month counts as whole. */
export async function labBalance(ex: Executor, labId: string, now = new Date()): Promise<CreditBalance> {
  const month = monthOf(now);
  const names = [accounts.available(labId), accounts.reserved(labId), accounts.free(labId, month)];
  const b = await balancesOf(ex, names);
  const [issued] = await ex.select({ id: ledgerEntries.id }).from(ledgerEntries).where(eq(ledgerEntries.idempotencyKey, allowanceKey(labId, month)));
  const { freeAllowance, isDefault } = await allowanceOf(ex, labId);
  // an admin's mid-month change books its own allowance entries, so once anything is on the account, it is the truth
  const freeLeft = issued || b.get(names[2]!)! !== 0 ? b.get(names[2]!)! : freeAllowance;
  return { available: b.get(names[0]!)!, reserved: b.get(names[1]!)!, month, freeAllowance, allowanceIsDefault: isDefault, freeLeft: Math.max(0, freeLeft) };
}

/** Entries of a lab with their lines, newest first; `kinds` narrows them. */
export async function entriesOf(ex: Executor, labId: string, opts: { kinds?: EntryKind[]; since?: Date; limit?: number } = {}): Promise<(LedgerEntry & { detail: unknown })[]> {
  const where = and(
    eq(ledgerEntries.labId, labId),
    opts.kinds ? inArray(ledgerEntries.kind, opts.kinds) : undefined,
    opts.since ? sql`${ledgerEntries.createdAt} >= ${opts.since.toISOString()}` : undefined,
  );
  const base = ex.select().from(ledgerEntries).where(where).orderBy(sql`${ledgerEntries.createdAt} desc`, sql`${ledgerEntries.id}`);
  const entries = opts.limit ? await base.limit(opts.limit) : await base;
  if (entries.length === 0) return [];
  const lines = await ex.select().from(ledgerLines).where(inArray(ledgerLines.entryId, entries.map((e) => e.id))).orderBy(ledgerLines.id);
  const byEntry = new Map<string, Line[]>();
  for (const l of lines) byEntry.set(l.entryId, [...(byEntry.get(l.entryId) ?? []), { account: l.account, amount: l.amount }]);
  return entries.map((e) => ({
    id: e.id,
    kind: e.kind,
    createdAt: e.createdAt.toISOString(),
    runId: e.runId,
    memberId: e.memberId,
    reason: e.reason,
    detail: e.detail,
    lines: byEntry.get(e.id) ?? [],
  }));
}
