import { describe, expect, it } from 'vitest';
import { mode4, reduce2x2, tiePriority } from '../../renderer/src/render/index.js';

// Hand-made cases for the documented rule (renderer/src/render/reduce.ts): the most frequent index of
// each 2×2 block; ties go to the index rarer in the whole layer, then to the higher index.

describe('2×2 mode reduction', () => {
  // layer-wide counts: index 1 common, 2 less, 3 rare, 4 never seen
  const priority = tiePriority([0, 1000, 100, 10, 0]);

  it('ranks rarer indices higher, equal counts by the higher index', () => {
    expect(priority[3]).toBeGreaterThan(priority[2]);
    expect(priority[2]).toBeGreaterThan(priority[1]);
    // 4 and the unused indices have count 0: the higher index wins
    expect(priority[255]).toBeGreaterThan(priority[4]);
    expect(priority[4]).toBeGreaterThan(priority[3]);
  });

  it('takes the majority', () => {
    expect(mode4(1, 1, 1, 3, priority)).toBe(1);
    expect(mode4(3, 2, 2, 2, priority)).toBe(2);
    expect(mode4(2, 1, 2, 3, priority)).toBe(2);
  });

  it('sends two-two ties and all-different blocks to the rarer index', () => {
    expect(mode4(1, 1, 3, 3, priority)).toBe(3);
    expect(mode4(3, 1, 1, 3, priority)).toBe(3);
    expect(mode4(1, 2, 3, 4, priority)).toBe(4);
    expect(mode4(1, 2, 1, 2, priority)).toBe(2);
  });

  it('keeps a one-cell line of a rare value visible one level out', () => {
    // 4×4 of common 1s with a vertical line of 3s in column 1
    const src = Uint8Array.from([1, 3, 1, 1, 1, 3, 1, 1, 1, 3, 1, 1, 1, 3, 1, 1]);
    const r = reduce2x2(src, 4, 4, priority);
    expect([r.width, r.height]).toEqual([2, 2]);
    expect([...r.data]).toEqual([3, 1, 3, 1]);
  });

  it('handles odd widths and heights: edge blocks vote with the pixels they have', () => {
    const src = Uint8Array.from([
      1, 1, 2,
      1, 3, 2,
      2, 2, 3,
    ]);
    const r = reduce2x2(src, 3, 3, priority);
    expect([r.width, r.height]).toEqual([2, 2]);
    // block (0,0) = 1,1,1,3 → 1; (1,0) = 2,2 → 2; (0,1) = 2,2 → 2; (1,1) = 3 alone
    expect([...r.data]).toEqual([1, 2, 2, 3]);
    const edge = reduce2x2(Uint8Array.from([1, 2, 3]), 3, 1, priority);
    // a 1×2 tie goes to the rarer 2; the lone 3 stays
    expect([...edge.data]).toEqual([2, 3]);
  });

  it('a uniform region stays uniform all the way up', () => {
    let img: { data: Uint8Array; width: number; height: number } = { data: new Uint8Array(64 * 64).fill(2), width: 64, height: 64 };
    while (img.width > 1) img = reduce2x2(img.data, img.width, img.height, priority);
    expect([...img.data]).toEqual([2]);
  });
});
