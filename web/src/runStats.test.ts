import { describe, expect, test } from 'vitest';
import { readStat, statRows, statsNote, TOPPLINGS } from './runStats.js';

describe('reading the worker’s statistics', () => {
  test('counts sent as decimal strings stay exact past 2^53', () => {
    // 2^53 + 1 = 9007199254740993 is the first integer a double cannot hold (IEEE 754, common practice)
    expect(readStat({ totalTopplings: '9007199254740993' }, TOPPLINGS)).toBe(9007199254740993n);
    expect(Number('9007199254740993')).toBe(9007199254740992);
  });

  test('missing or malformed statistics read as absent, not zero', () => {
    expect(readStat(null, TOPPLINGS)).toBeNull();
    expect(readStat({ totalTopplings: 'many' }, TOPPLINGS)).toBeNull();
    expect(readStat([1, 2], TOPPLINGS)).toBeNull();
  });

  test('unknown fields are still listed, with a readable label', () => {
    const rows = statRows({ widestRing: 12, heightCounts: { 0: 3, 1: 4 } });
    expect(rows.map((r) => r.label)).toEqual(['Widest ring', 'Height counts · 0', 'Height counts · 1']);
  });
});

describe('the note over a run page\'s statistics', () => {
  test('never says the table will be filled in when it already is', () => {
    expect(statsNote('rendering', true)).not.toMatch(/filled in/i);
    expect(statsNote('rendering', true)).toMatch(/views are drawn/);
    expect(statsNote('finished', true)).toBeUndefined();
  });

  test('says what to wait for while computing, and that a stopped run has none', () => {
    expect(statsNote('queued', false)).toMatch(/filled in/i);
    expect(statsNote('computing', false)).toMatch(/filled in/i);
    expect(statsNote('failed', false)).toMatch(/^None/);
    expect(statsNote('cancelled', false)).toMatch(/cancelled/);
  });
});
