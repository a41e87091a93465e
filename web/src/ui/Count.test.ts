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
