import { createElement } from 'react';
import { renderToStaticMarkup } from 'react-dom/server';
import { describe, expect, test } from 'vitest';
import { Count } from './Count.js';

const html = (props: Parameters<typeof Count>[0]) => renderToStaticMarkup(createElement(Count, props));
const text = (markup: string) => markup.replace(/<[^>]+>/g, '');

describe('Count', () => {
  test('writes the power of ten with a real superscript, never a caret', () => {
    const m = html({ n: 100_000, unit: 'grains' });
    expect(m).toMatch(/10<sup[^>]*>5<\/sup>/);
    expect(text(m)).toBe('100,000 (105) grains');
    expect(m).not.toContain('^');
  });

  test('on the dark ground unit and power take the surrounding colour instead of the light pages’ grey', () => {
    const light = html({ n: 2_500_000, unit: 'grains' });
    const dark = html({ n: 2_500_000, unit: 'grains', dark: true });
    expect(light).toContain('text-ink-soft');
    expect(dark).not.toContain('text-ink-soft');
    // the same words and the same superscript either way
    expect(text(dark)).toBe(text(light));
    expect(dark).toMatch(/2\.5 × 10<sup[^>]*>6<\/sup>/);
  });
});

/**
 * The pieces a browser keeps on one line: text split at the spaces that lie outside every
 * `whitespace-nowrap` element (CSS white-space: a space is a break opportunity unless nowrap applies),
 * and before a `block` element, which starts a line of its own.
 */
function unbreakablePieces(markup: string): string[] {
  const pieces: string[] = [''];
  const nowrap: boolean[] = [];
  for (const [, close, tag, attrs, text] of markup.matchAll(/<(\/?)(\w+)([^>]*)>|([^<]+)/g)) {
    if (text !== undefined) {
      for (const ch of text) {
        if (ch === ' ' && !nowrap.includes(true)) pieces.push('');
        else pieces[pieces.length - 1] += ch;
      }
    } else if (close) nowrap.pop();
    else {
      if (/class="block\b/.test(attrs ?? '')) pieces.push('');
      nowrap.push(tag !== 'br' && /whitespace-nowrap/.test(attrs ?? ''));
    }
  }
  return pieces.filter((p) => p !== '');
}

describe('Count in a narrow column', () => {
  test('may break between the number, its power of ten and its unit, never inside one of them', () => {
    // a phone's fact list gives the value about 125 px; "2,000,000 (2 × 10⁶) grains" needs about 175
    expect(unbreakablePieces(html({ n: 2_000_000, unit: 'grains' }))).toEqual(['2,000,000', '(2 × 106)', 'grains']);
    expect(unbreakablePieces(html({ n: 31_908_965_795, unit: 'topplings' }))).toEqual(['31,908,965,795', '(≈ 3.19 × 1010)', 'topplings']);
    expect(unbreakablePieces(html({ n: 999, unit: 'sites' }))).toEqual(['999', 'sites']);
  });

  test('stacked, the unit stays on the number’s line and the power of ten goes below', () => {
    const m = html({ n: 641_601, unit: 'cells', stacked: true });
    expect(unbreakablePieces(m)).toEqual(['641,601 cells', '(≈ 6.42 × 105)']);
    expect(m).toMatch(/class="block[^"]*"><span class="whitespace-nowrap">\(≈ 6\.42 × 10<sup/);
  });
});
