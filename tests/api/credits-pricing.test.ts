import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { monthOf } from '../../api/src/billing/accounts.js';
import { chargeFor, fundingOf, settlementSplit, storedArrayBytes } from '../../api/src/billing/pricing.js';
import { memberUsed, runUsages, usageCsv, usageRows } from '../../api/src/billing/usage.js';
import { creditsFor } from '../../shared/estimate.js';

/** The pure cores of the credits: the cost model's arithmetic and the folding of ledger entries into usage. */
describe('pricing', () => {
  it('never charges more than the reservation, and charges by the estimator\'s formula below it', () => {
    fc.assert(
      fc.property(fc.double({ min: 0, max: 1e6, noNaN: true }), fc.nat(2 ** 40), fc.integer({ min: 1, max: 1e6 }), (seconds, bytesStored, reserved) => {
        const charge = chargeFor({ seconds, bytesStored }, reserved);
        expect(charge).toBe(Math.min(reserved, creditsFor(seconds, bytesStored)));
        expect(charge).toBeGreaterThanOrEqual(1);
        expect(charge).toBeLessThanOrEqual(reserved);
      }),
    );
  });

  it('funds a job from the free allowance first, and a settlement returns exactly what was not charged', () => {
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 1e6 }), fc.integer({ min: -5, max: 1e6 }), fc.integer({ min: 0, max: 1e6 }), (credits, freeLeft, rawCharge) => {
        const held = fundingOf(credits, freeLeft);
        expect(held.fromAllowance + held.fromBalance).toBe(credits);
        expect(held.fromAllowance).toBe(Math.max(0, Math.min(credits, freeLeft)));
        const charge = Math.min(credits, rawCharge);
        const s = settlementSplit(charge, held);
        expect(s.freeCharged + s.paidCharged).toBe(charge);
        expect(s.freeBack + s.paidBack).toBe(credits - charge);
        for (const v of Object.values(s)) expect(v).toBeGreaterThanOrEqual(0);
        // free credits are used before paid ones
        if (s.paidCharged > 0) expect(s.freeBack).toBe(0);
      }),
    );
  });

  it('sizes stored arrays as .npy: uint8 heights when they fit, int64 odometer (NumPy dtype sizes, common practice)', () => {
    expect(storedArrayBytes([3, 3], 3)).toBe(256 + 9 * (1 + 8));
    expect(storedArrayBytes([10, 10], 300)).toBe(256 + 100 * (4 + 8));
  });

  it('counts months in UTC (ISO 8601 offsets)', () => {
    expect(monthOf(new Date('2026-12-31T23:30:00-02:00'))).toBe('2027-01');
    expect(monthOf(new Date('2027-01-01T00:30:00+02:00'))).toBe('2026-12');
  });
});

describe('usage', () => {
  const res = (runId: string, memberId: string, month: string, credits: number, fromAllowance: number) => ({
    kind: 'reservation', runId, memberId, detail: { credits, fromAllowance, fromBalance: credits - fromAllowance, month },
  });
  const entries = [
    res('r1', 'm1', '2026-11', 30, 30),
    { kind: 'settlement', runId: 'r1', memberId: 'm1', detail: { charge: 12, freeCharged: 12, paidCharged: 0 } },
    res('r2', 'm1', '2026-12', 50, 10),
    res('r3', 'm2', '2026-12', 20, 0),
    { kind: 'release', runId: 'r3', memberId: 'm2', detail: { reason: 'failed' } },
    res('r4', 'm2', '2026-12', 7, 0),
    { kind: 'settlement', runId: 'r4', memberId: 'm2', detail: { charge: 5, freeCharged: 0, paidCharged: 5 } },
  ];

  it('counts a run at its reservation while open, its charge once settled, nothing once released', () => {
    const u = runUsages(entries);
    expect(memberUsed(u, 'm1', '2026-12')).toBe(50);
    expect(memberUsed(u, 'm1', '2026-11')).toBe(12);
    expect(memberUsed(u, 'm2', '2026-12')).toBe(5);
  });

  it('tabulates per month and member, newest month first, and writes RFC 4180 CSV', () => {
    const rows = usageRows(runUsages(entries), new Map([['m1', 'Ada "the Grain" Voss'], ['m2', 'Bo Lindqvist, PhD']]));
    expect(rows.map((r) => [r.month, r.memberName, r.runs, r.charged, r.free, r.reserved])).toEqual([
      ['2026-12', 'Ada "the Grain" Voss', 1, 0, 0, 50],
      ['2026-12', 'Bo Lindqvist, PhD', 2, 5, 0, 0],
      ['2026-11', 'Ada "the Grain" Voss', 1, 12, 12, 0],
    ]);
    const csv = usageCsv(rows);
    // RFC 4180 §2: CRLF line breaks; fields with commas or quotes are quoted, inner quotes doubled
    expect(csv.split('\r\n')[1]).toBe('2026-12,m1,"Ada ""the Grain"" Voss",1,0,0,50');
    expect(csv.split('\r\n')[2]).toBe('2026-12,m2,"Bo Lindqvist, PhD",2,5,0,0');
    expect(csv.endsWith('\r\n')).toBe(true);
  });
});
