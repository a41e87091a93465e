import { describe, expect, it } from 'vitest';
import { RETENTION_RULE } from '../../shared/api/admin.js';
import { toCsv } from '../../api/src/services/admin-csv.js';
import { dueForNotice, expiryOf } from '../../api/src/services/admin-retention.js';
import { labStandingOf, memberStandingOf, monthsUpTo } from '../../api/src/services/admin-usage.js';

/** The console's pure rules: standings, months, retention dates and CSV quoting. */
describe('quota standings', () => {
  it('puts a member over quota at the quota, close from 80 % of it, and never with no personal limit', () => {
    expect(memberStandingOf(2000, 2000)).toBe('over');
    expect(memberStandingOf(1600, 2000)).toBe('close');
    expect(memberStandingOf(1599, 2000)).toBe('ok');
    expect(memberStandingOf(10 ** 9, null)).toBe('ok');
  });

  it('puts a lab over quota only once its allowance is used up with no paid credits left', () => {
    expect(labStandingOf({ used: 4, allowance: 2, freeLeft: 0, available: 0 }).standing).toBe('over');
    // the same use with paid credits to spare is only close (less than a month of allowance left) or fine
    expect(labStandingOf({ used: 4, allowance: 2, freeLeft: 0, available: 1 }).standing).toBe('close');
    expect(labStandingOf({ used: 4, allowance: 2, freeLeft: 0, available: 1500 }).standing).toBe('ok');
    expect(labStandingOf({ used: 0, allowance: 0, freeLeft: 0, available: 0 }).standing).toBe('ok');
    expect(labStandingOf({ used: 80, allowance: 100, freeLeft: 20, available: 0 }).standing).toBe('close');
    expect(labStandingOf({ used: 4, allowance: 2, freeLeft: 0, available: 0 }).note).toContain('next run will be refused');
  });
});

describe('months', () => {
  it('counts calendar months back across a year end, oldest first', () => {
    expect(monthsUpTo(new Date('2027-02-10T12:00:00Z'), 4)).toEqual(['2026-11', '2026-12', '2027-01', '2027-02']);
    expect(monthsUpTo(new Date('2026-12-31T23:59:59Z'), 1)).toEqual(['2026-12']);
  });
});

describe('retention', () => {
  it('keeps unpublished artifacts keepDays after the run ends and opens the notice period noticeDays before', () => {
    const ended = new Date('2026-01-01T00:00:00Z');
    const end = expiryOf(ended, false)!;
    expect((end.getTime() - ended.getTime()) / 86400_000).toBe(RETENTION_RULE.keepDays);
    expect(expiryOf(ended, true)).toBeNull();
    expect(expiryOf(null, false)).toBeNull();
    const noticeStart = new Date(end.getTime() - RETENTION_RULE.noticeDays * 86400_000);
    expect(dueForNotice(end, new Date(noticeStart.getTime() - 1))).toBe(false);
    expect(dueForNotice(end, noticeStart)).toBe(true);
    expect(dueForNotice(null, noticeStart)).toBe(false);
  });
});

describe('CSV', () => {
  it('follows RFC 4180: CRLF records, fields with commas, quotes or line breaks quoted, quotes doubled', () => {
    // RFC 4180 §2 rules 1, 2, 5, 6 and 7, on the kinds of values the trail holds
    expect(toCsv(['a', 'b'], [['plain', 'with, comma'], ['say "hi"', 'two\nlines'], [null, 3]])).toBe('a,b\r\nplain,"with, comma"\r\n"say ""hi""","two\nlines"\r\n,3\r\n');
  });
});
