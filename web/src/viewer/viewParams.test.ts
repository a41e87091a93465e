import { describe, expect, test } from 'vitest';
import { formatView, parseView } from './viewParams.js';

describe('the place in the address', () => {
  test('a close-up and the whole pile survive the round trip to the precision the view can show', () => {
    for (const v of [{ cx: 0.0123, cy: -0.4567, across: 31.99 }, { cx: -1234.56, cy: 987.6, across: 45_678 }]) {
      const back = parseView(formatView(v))!;
      expect(Math.abs(back.cx - v.cx)).toBeLessThanOrEqual(v.across / 1000);
      expect(Math.abs(back.cy - v.cy)).toBeLessThanOrEqual(v.across / 1000);
      expect(back.across / v.across).toBeCloseTo(1, 3);
    }
  });

  test('a wide view keeps centres that are whole tens and zero: a line pile opens at its middle, not at an empty address', () => {
    expect(formatView({ cx: 0, cy: 0, across: 5001 })).toBe('0,0,5001');
    expect(formatView({ cx: 100, cy: -2500, across: 45_000 })).toBe('100,-2500,45000');
    for (const v of [{ cx: 0, cy: 0, across: 5001 }, { cx: 120, cy: -30, across: 1237 }, { cx: -1000, cy: 10, across: 2000 }]) {
      const back = parseView(formatView(v));
      expect(back).not.toBeNull();
      expect(Math.abs(back!.cx - v.cx)).toBeLessThanOrEqual(v.across / 1000);
      expect(Math.abs(back!.cy - v.cy)).toBeLessThanOrEqual(v.across / 1000);
    }
  });

  test('short: no more digits than a thousandth of the width', () => expect(formatView({ cx: 1 / 3, cy: -2 / 3, across: 40 })).toBe('0.33,-0.67,40'));

  test('anything but three finite numbers with a positive width is ignored', () => {
    for (const bad of [null, '', '1,2', '1,2,0', '1,2,-3', 'a,b,c', '1,,3', '1,2,3,4', 'Infinity,0,1']) expect(parseView(bad)).toBeNull();
  });
});
