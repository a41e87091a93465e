import { describe, expect, test } from 'vitest';
import { statsNote } from './runStats.js';

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
