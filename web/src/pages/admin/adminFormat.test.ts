import { describe, expect, it } from 'vitest';
import { auditDetailText, countOf, creditTicks, workersSummary } from './adminFormat.js';

describe('creditTicks', () => {
  it('gives whole, distinct ticks for small ranges (a paid balance of 0 to 2 once read 2, 2, 1, 1, 0)', () => {
    expect(creditTicks([2, 0, 2])).toEqual({ ticks: [0, 1, 2], domain: [0, 2] });
    expect(creditTicks([1])).toEqual({ ticks: [0, 1], domain: [0, 1] });
    expect(creditTicks([0, 0])).toEqual({ ticks: [0, 1], domain: [0, 1] });
    expect(creditTicks([3])).toEqual({ ticks: [0, 1, 2, 3], domain: [0, 3] });
  });

  it('steps by 1, 2 or 5 times a power of ten and reaches the highest value', () => {
    expect(creditTicks([7]).ticks).toEqual([0, 2, 4, 6, 8]);
    expect(creditTicks([10]).ticks).toEqual([0, 5, 10]);
    expect(creditTicks([37]).ticks).toEqual([0, 10, 20, 30, 40]);
    expect(creditTicks([6000]).ticks).toEqual([0, 2000, 4000, 6000]);
    for (const max of [1, 2, 3, 9, 11, 99, 101, 12345]) {
      const { ticks, domain } = creditTicks([max]);
      expect(ticks.every(Number.isInteger)).toBe(true);
      expect(new Set(ticks).size).toBe(ticks.length);
      expect(ticks.length).toBeLessThanOrEqual(5);
      expect(domain[1]).toBeGreaterThanOrEqual(max);
    }
  });

  it('reaches below 0 when a value does', () => {
    expect(creditTicks([-3, 4]).ticks).toEqual([-4, -2, 0, 2, 4]);
  });
});

describe('workersSummary', () => {
  it('says what the two counts are, in the singular where there is one', () => {
    // one worker process serving all five queues holds one registered connection per queue
    expect(workersSummary(1, 5, 5)).toBe('1 worker reporting in; 5 connections taking jobs from the 5 queues (one per queue a worker serves).');
    expect(workersSummary(2, 10, 5)).toBe('2 workers reporting in; 10 connections taking jobs from the 5 queues (one per queue a worker serves).');
    expect(workersSummary(1, 1, 1)).toBe('1 worker reporting in; 1 connection taking jobs from the 1 queue (one per queue a worker serves).');
  });

  it('says "no" rather than 0 and starts with a capital', () => {
    expect(workersSummary(0, 0, 5)).toBe('No worker reporting in; no connection taking jobs from the 5 queues (one per queue a worker serves).');
    expect(countOf(1_500, 'credit')).toBe('1,500 credits');
  });
});

describe('auditDetailText', () => {
  it('shows a purchase amount as money instead of minor units beside a currency code', () => {
    // the detail the purchase webhook writes (api/src/billing/purchases.ts); 2000 cents = €20.00
    expect(auditDetailText({ amount: 2000, credits: 1000, session: 'cs_test_1', currency: 'eur' })).toBe('amount: €20.00, credits: 1,000, session: cs_test_1');
    expect(auditDetailText({ amount: 1500, currency: 'jpy' })).toBe('amount: ¥1,500');
  });

  it('groups counts, joins lists and names an empty value', () => {
    expect(auditDetailText({ chips: 200000 })).toBe('chips: 200,000');
    expect(auditDetailText({ formats: ['png', 'tiff', 'pdf'], version: 1 })).toBe('formats: png, tiff, pdf, version: 1');
    expect(auditDetailText({ from: null, monthlyQuota: 1500 })).toBe('from: none, monthlyQuota: 1,500');
    expect(auditDetailText({ month: '2026-12', ratio: 0.5, nested: { a: 1 } })).toBe('month: 2026-12, ratio: 0.5, nested: {"a":1}');
    expect(auditDetailText(null)).toBe('');
  });

  it('leaves an amount without a currency as a number', () => {
    expect(auditDetailText({ amount: 2000 })).toBe('amount: 2,000');
  });
});
