import { createElement } from 'react';
import { renderToStaticMarkup } from 'react-dom/server';
import { describe, expect, test } from 'vitest';
import { hidesMoreToTheRight } from './moreToTheRight.js';
import { ScrollFrame } from './ScrollFrame.js';

describe('the cue of a wide table', () => {
  test('shows while content is hidden past the right edge, by a pixel or more', () => {
    // a 1,000 px table in a 700 px frame
    expect(hidesMoreToTheRight(1000, 700, 0)).toBe(true);
    expect(hidesMoreToTheRight(1000, 700, 299)).toBe(true);
    expect(hidesMoreToTheRight(1000, 700, 300)).toBe(false);
    // scrolled to the end at a zoom level that leaves a fraction of a pixel
    expect(hidesMoreToTheRight(1000, 700, 299.4)).toBe(false);
    // a table that fits its frame
    expect(hidesMoreToTheRight(700, 700, 0)).toBe(false);
  });

  test('is hidden before the frame has been measured', () => {
    // server-side there is no layout: the frame renders with its cue present but invisible
    const html = renderToStaticMarkup(createElement(ScrollFrame, { className: 'border', children: createElement('table') }));
    expect(html).toContain('data-scroll-frame');
    expect(html).toMatch(/data-testid="more-to-the-right"[^>]*class="[^"]*invisible opacity-0/);
    expect(html).toContain('aria-hidden="true"');
  });
});
