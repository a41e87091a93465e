import { and, eq, sql } from 'drizzle-orm';
import { ledgerEntries, runs } from '../../../drizzle/schema.js';
import { accounts } from './accounts.js';
import { post, type Executor } from './ledger.js';
import { chargeFor, settlementSplit, storedArrayBytes, type ActualUsage } from './pricing.js';
import type { ReservationDetail } from './usage.js';

export type CloseOutcome = 'settled' | 'released' | 'already closed' | 'no reservation';

async function reservationOf(db: Executor, runId: string) {
  const [e] = await db.select().from(ledgerEntries).where(eq(ledgerEntries.idempotencyKey, `reservation:${runId}`));
  return e ? { labId: e.labId, memberId: e.memberId, detail: e.detail as ReservationDetail } : null;
}

/**
 * Charge a finished run for what it used and hand back the rest of its reservation. Idempotent:
 * a run is closed once (settled or released), whoever calls first.
 * @example await settleRun(db, runId, { seconds: stats.seconds, bytesStored })
 */
export async function settleRun(db: Executor, runId: string, actual: ActualUsage): Promise<CloseOutcome> {
  const res = await reservationOf(db, runId);
  if (!res) return 'no reservation';
  const { labId, detail } = res;
  const charge = chargeFor(actual, detail.credits);
  const split = settlementSplit(charge, detail);
  return db.transaction(async (tx) => {
    const booked = await post(
      tx,
      { labId, kind: 'settlement', idempotencyKey: `close:${runId}`, runId, memberId: res.memberId, detail: { charge, ...split, actual, reserved: detail.credits } },
      [
        { account: accounts.reserved(labId), amount: -detail.credits },
        { account: accounts.spent, amount: charge },
        { account: accounts.free(labId, detail.month), amount: split.freeBack },
        { account: accounts.available(labId), amount: split.paidBack },
      ],
    );
    return booked ? 'settled' : 'already closed';
  });
}

/**
 * Give a failed or cancelled run's whole reservation back: nothing is charged for a run that did
 * not finish (the farm cannot tell a fault of the author from one of its own). Idempotent.
 */
export async function releaseRun(db: Executor, runId: string, reason: string): Promise<CloseOutcome> {
  const res = await reservationOf(db, runId);
  if (!res) return 'no reservation';
  const { labId, detail } = res;
  return db.transaction(async (tx) => {
    const booked = await post(
      tx,
      { labId, kind: 'release', idempotencyKey: `close:${runId}`, runId, memberId: res.memberId, reason, detail: { reason } },
      [
        { account: accounts.reserved(labId), amount: -detail.credits },
        { account: accounts.free(labId, detail.month), amount: detail.fromAllowance },
        { account: accounts.available(labId), amount: detail.fromBalance },
      ],
    );
    return booked ? 'released' : 'already closed';
  });
}

/** Usage of a finished run as the worker recorded it: measured seconds, and its arrays' size in the store. */
export function actualUsageOf(stats: NonNullable<(typeof runs.$inferSelect)['stats']>): ActualUsage {
  return { seconds: stats.seconds, bytesStored: storedArrayBytes(stats.shape, Math.max(0, stats.heightCounts.length - 1)) };
}

/**
 * Close every open reservation of a lab whose run has reached a final state. The API runs this
 * before it reads or reserves a lab's credits, so balances are right even where nobody called
 * settleRun/releaseRun at the moment the run ended (a cancel in the API, a crashed worker).
 */
export async function reconcileLab(db: Executor, labId: string): Promise<number> {
  let closed = 0;
  for (const r of await openReservations(db, labId)) {
    if (!r.runId) continue;
    let outcome: CloseOutcome | null = null;
    if (r.status === 'finished' && r.stats) outcome = await settleRun(db, r.runId, actualUsageOf(r.stats));
    else if (r.status === 'failed') outcome = await releaseRun(db, r.runId, 'the run failed');
    else if (r.status === 'cancelled') outcome = await releaseRun(db, r.runId, 'the run was cancelled');
    if (outcome === 'settled' || outcome === 'released') closed++;
  }
  return closed;
}

/** Runs of a lab whose reservation is still open (no settlement or release yet). */
export async function openReservations(ex: Executor, labId: string) {
  return ex
    .select({ runId: ledgerEntries.runId, status: runs.status, stats: runs.stats, spec: runs.spec })
    .from(ledgerEntries)
    .innerJoin(runs, eq(runs.id, ledgerEntries.runId))
    .where(
      and(
        eq(ledgerEntries.labId, labId),
        eq(ledgerEntries.kind, 'reservation'),
        sql`not exists (select 1 from ledger_entries c where c.idempotency_key = 'close:' || ${ledgerEntries.runId}::text)`,
      ),
    );
}
