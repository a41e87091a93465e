import { randomUUID } from 'node:crypto';
import { and, eq, like } from 'drizzle-orm';
import { labs, ledgerEntries, ledgerLines } from '../../../drizzle/schema.js';
import type { AllowanceRequest } from '../../../shared/api/admin.js';
import { accounts, monthOf } from '../billing/accounts.js';
import { allowanceOf, balancesOf, ensureAllowance, lockLab, post, type Executor } from '../billing/ledger.js';
import { audit } from './audit.js';

/**
 * Issue this month's allowance of a lab whose allowance an admin set, at that amount, under the key
 * the ledger's own issuance uses (so that one then books nothing). Labs on the default are left to
 * the ledger. Called before a submission is priced.
 */
export async function issueLabAllowance(db: Executor, labId: string, now = new Date()): Promise<void> {
  const { freeAllowance, isDefault } = await allowanceOf(db, labId);
  if (isDefault) return;
  const month = monthOf(now);
  const key = `allowance:${labId}:${month}`;
  const [issued] = await db.select({ id: ledgerEntries.id }).from(ledgerEntries).where(eq(ledgerEntries.idempotencyKey, key));
  if (issued || freeAllowance === 0) {
    // an allowance of 0 is booked as the default cut back to nothing, the only balanced way to say "issued"
    if (!issued) await setAllowance(db, labId, null, { freeAllowance: 0, reason: `allowance of 0 for ${month}` }, now);
    return;
  }
  await db.transaction(async (tx) => {
    await post(tx, { labId, kind: 'allowance', idempotencyKey: key, reason: `free allowance for ${month} (set by an admin)` }, [
      { account: accounts.free(labId, month), amount: freeAllowance },
      { account: accounts.allowance, amount: -freeAllowance },
    ]);
  });
}

/**
 * Set a lab's free allowance and make this month's ledger follow at once: the month's allowance is
 * issued (as the ledger would at the first run) and then topped up or cut back to the new amount by
 * one more balanced entry. A cut never takes back free credits already spent or held.
 */
export async function setAllowance(db: Executor, labId: string, actorId: string | null, req: AllowanceRequest, now = new Date()) {
  return db.transaction(async (tx) => {
    await lockLab(tx, labId);
    const before = await allowanceOf(tx, labId);
    await tx.update(labs).set({ freeAllowance: req.freeAllowance }).where(eq(labs.id, labId));
    const month = monthOf(now);
    await ensureAllowance(tx, labId, month);
    const free = accounts.free(labId, month);
    const [issued] = await tx
      .select({ total: ledgerLines.amount })
      .from(ledgerLines)
      .innerJoin(ledgerEntries, eq(ledgerEntries.id, ledgerLines.entryId))
      .where(and(eq(ledgerLines.account, free), eq(ledgerEntries.kind, 'allowance'), like(ledgerEntries.idempotencyKey, `allowance:${labId}:${month}%`)))
      .then((rows) => [rows.reduce((s, r) => s + r.total, 0)]);
    const left = (await balancesOf(tx, [free])).get(free)!;
    const delta = Math.max(req.freeAllowance - issued!, -left);
    if (delta !== 0) {
      await post(tx, { labId, kind: 'allowance', idempotencyKey: `allowance:${labId}:${month}:set:${randomUUID()}`, actorId, reason: req.reason, detail: { month, freeAllowance: req.freeAllowance } }, [
        { account: free, amount: delta },
        { account: accounts.allowance, amount: -delta },
      ]);
    }
    await audit(tx, {
      actorId,
      labId,
      action: 'lab.allowance',
      subjectType: 'lab',
      subjectId: labId,
      reason: req.reason,
      detail: { from: before.freeAllowance, to: req.freeAllowance, month, booked: delta },
    });
    return { freeAllowance: req.freeAllowance, booked: delta };
  });
}
