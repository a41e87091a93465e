import { createElement } from 'react';
import { renderToStaticMarkup } from 'react-dom/server';
import { describe, expect, test } from 'vitest';
import { Pager, pagerSummary } from './SortableTable.js';

describe('the pager under a table', () => {
  test('one page of results is counted plainly, in the right number', () => {
    expect(pagerSummary(1, 25, 1, 'figures')).toBe('1 figure');
    expect(pagerSummary(1, 25, 4, 'runs')).toBe('4 runs');
    expect(pagerSummary(1, 25, 0, 'runs')).toBe('0 runs');
  });

  test('several pages show the range on screen', () => {
    expect(pagerSummary(3, 20, 213, 'runs')).toBe('41–60 of 213 runs');
    expect(pagerSummary(11, 20, 213, 'runs')).toBe('201–213 of 213 runs');
  });

  test('the Previous and Next buttons appear only when there is another page', () => {
    const html = (page: number, total: number) => renderToStaticMarkup(createElement(Pager, { page, pageSize: 25, total, unit: 'runs', onPage: () => {} }));
    expect(html(1, 4)).not.toContain('Previous');
    expect(html(1, 30)).toContain('Previous');
    expect(html(1, 30)).toContain('page 1 of 2');
  });
});
