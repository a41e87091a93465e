import { and, eq } from 'drizzle-orm';
import { backgroundUploads, memberships, runs } from '../../../drizzle/schema.js';
import { creditsPagePath, type CreditCheck } from '../../../shared/api/credits.js';
import type { RunSpec } from '../../../shared/run-spec.js';
import { EstimateError } from '../../../shared/estimate.js';
import { HttpError, badRequest } from '../http/http-error.js';
import { accounts, monthOf } from './accounts.js';
import { ensureAllowance, entriesOf, labBalance, lockLab, post, type Executor, type Tx } from './ledger.js';
import { fundingOf, reservationFor } from './pricing.js';
import { reconcileLab } from './settle.js';
import { memberUsed, runUsages } from './usage.js';

const monthStart = (now: Date) => new Date(Date.UTC(now.getUTCFullYear(), now.getUTCMonth(), 1));

/** What a member has used this month, their quota (null = no personal limit) and their role in the lab. */
export async function memberStanding(ex: Executor, labId: string, memberId: string, now = new Date()) {
  const [m] = await ex.select({ quota: memberships.monthlyQuota, role: memberships.role }).from(memberships).where(and(eq(memberships.labId, labId), eq(memberships.userId, memberId)));
  const entries = await entriesOf(ex, labId, { kinds: ['reservation', 'settlement', 'release'], since: new Date(monthStart(now).getTime() - 40 * 86400_000) });
  return { monthlyQuota: m?.quota ?? null, usedThisMonth: memberUsed(runUsages(entries), memberId, monthOf(now)), isMember: !!m, isManager: m?.role === 'manager' };
}

/**
 * Would `credits` more be accepted for this member now? The same answer feeds the run form (before
 * submitting) and the 402 of a submission, so the two never disagree.
 */
export async function checkCredits(ex: Executor, labId: string, memberId: string, credits: number, now = new Date()): Promise<CreditCheck> {
  const balance = await labBalance(ex, labId, now);
  const standing = await memberStanding(ex, labId, memberId, now);
  const { fromAllowance, fromBalance } = fundingOf(credits, balance.freeLeft);
  const missingCredits = Math.max(0, fromBalance - balance.available);
  const quotaLeft = standing.monthlyQuota === null ? null : Math.max(0, standing.monthlyQuota - standing.usedThisMonth);
  const overQuota = quotaLeft === null ? 0 : Math.max(0, credits - quotaLeft);
  const buyPath = creditsPagePath(labId);
  const n = (x: number) => x.toLocaleString('en-US');
  // "1 credit", "2 credits": the message is read by people on the form as well as by scripts
  const cr = (x: number) => `${n(x)} ${x === 1 ? 'credit' : 'credits'}`;
  const parts: string[] = [];
  if (missingCredits > 0) {
    // the address of the credits page is `buyPath` (the form links it as "Buy credits"), not part of the sentence
    parts.push(
      `this job needs ${cr(credits)}: ${n(fromAllowance)} from this month's free allowance and ${n(fromBalance)} paid, ` +
        `but the lab has ${n(balance.available)} available, so ${cr(missingCredits)} ${missingCredits === 1 ? 'is' : 'are'} missing; ` +
        // a manager is the one who buys: telling them to find a manager sends them looking for someone else
        `${standing.isManager ? 'you can' : 'a lab manager can'} buy more on the lab's credits page`,
    );
  }
  if (overQuota > 0) {
    parts.push(
      `this job needs ${cr(credits)} but only ${cr(quotaLeft!)} of your monthly quota of ${n(standing.monthlyQuota!)} ${quotaLeft === 1 ? 'is' : 'are'} left ` +
        `(${n(overQuota)} over); ${standing.isManager ? "you can raise it under Members on the lab page" : 'ask a lab manager to raise it'}`,
    );
  }
  const allowed = parts.length === 0;
  const message = allowed
    ? fromBalance === 0
      ? `covered by this month's free allowance (${cr(balance.freeLeft)} left)`
      : `${cr(fromAllowance)} from the free allowance and ${n(fromBalance)} from the lab's ${n(balance.available)} available`
    : parts.join('; ');
  return { allowed, credits, fromAllowance, fromBalance, missingCredits, quotaLeft, overQuota, message, buyPath };
}

/** The 402 of a refused submission: the message says what is missing and where to buy. */
export function paymentRequired(check: CreditCheck): HttpError {
  const issues = [];
  if (check.missingCredits > 0) issues.push({ path: 'credits', message: `${check.missingCredits} credits missing; buy at ${check.buyPath}` });
  if (check.overQuota > 0) issues.push({ path: 'quota', message: `${check.overQuota} credits over your monthly quota` });
  return new HttpError(402, check.message, issues);
}

type RunRow = typeof runs.$inferSelect;

async function priceRun(tx: Tx, spec: RunSpec): Promise<number> {
  const bg = spec.background;
  let upload;
  if (bg.kind === 'array') {
    const [row] = await tx.select().from(backgroundUploads).where(eq(backgroundUploads.sha256, bg.sha256));
    if (row) upload = { shape: row.shape, meanHeight: row.meanHeight };
  }
  try {
    return reservationFor(spec, upload);
  } catch (err) {
    if (err instanceof EstimateError) throw badRequest(`spec: ${err.message}`);
    throw err;
  }
}

/**
 * Reserve the estimated credits of newly inserted runs, inside the transaction that inserts them:
 * if the lab lacks credits or the member their quota, it throws the 402 and the runs roll back.
 * The lab row lock makes concurrent submissions queue here, so the available balance never goes
 * below zero (the database re-checks that at commit).
 */
export async function reserveForRuns(tx: Tx, labId: string, memberId: string, rows: RunRow[], now = new Date()): Promise<void> {
  if (rows.length === 0) return;
  const prices = [];
  for (const row of rows) prices.push(await priceRun(tx, row.spec));
  await lockLab(tx, labId);
  // runs that ended since anyone last looked give their credits back before this job is priced against them
  await reconcileLab(tx, labId);
  const total = prices.reduce((a, b) => a + b, 0);
  const check = await checkCredits(tx, labId, memberId, total, now);
  if (!check.allowed) throw paymentRequired(check);
  const month = monthOf(now);
  await ensureAllowance(tx, labId, month);
  let freeLeft = (await labBalance(tx, labId, now)).freeLeft;
  for (const [k, row] of rows.entries()) {
    const credits = prices[k]!;
    const funding = fundingOf(credits, freeLeft);
    freeLeft -= funding.fromAllowance;
    await post(
      tx,
      { labId, kind: 'reservation', idempotencyKey: `reservation:${row.id}`, runId: row.id, memberId, actorId: memberId, detail: { credits, ...funding, month } },
      [
        { account: accounts.free(labId, month), amount: -funding.fromAllowance },
        { account: accounts.available(labId), amount: -funding.fromBalance },
        { account: accounts.reserved(labId), amount: credits },
      ],
    );
  }
}
