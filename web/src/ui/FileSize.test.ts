import { createElement } from 'react';
import { renderToStaticMarkup } from 'react-dom/server';
import { describe, expect, test } from 'vitest';
import { FileSize } from './FileSize.js';

const html = (bytes: number) => renderToStaticMarkup(createElement(FileSize, { bytes }));
const text = (markup: string) => markup.replace(/<[^>]+>/g, '');

describe('FileSize', () => {
  test('writes the size in decimal units, with the exact byte count in its title', () => {
    const m = html(3_382_078);
    expect(text(m)).toBe('3.38 MB');
    expect(m).toContain('title="3,382,078 bytes"');
    // never broken between number and unit
    expect(m).toContain('whitespace-nowrap');
  });

  test('small sizes stay in bytes, singular for one', () => {
    expect(text(html(0))).toBe('0 bytes');
    expect(html(1)).toContain('title="1 byte"');
    expect(text(html(999))).toBe('999 bytes');
    expect(text(html(2_350_000_000))).toBe('2.35 GB');
  });
});
