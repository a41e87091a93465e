import { describe, expect, it } from 'vitest';
import { fileSizeText } from '../../shared/file-size.js';
import { figureReadyMail } from '../../api/src/mail/figure-ready-mail.js';

describe('file sizes in words', () => {
  it('uses decimal units with three significant digits', () => {
    expect([0, 1, 97, 999].map(fileSizeText)).toEqual(['0 bytes', '1 byte', '97 bytes', '999 bytes']);
    expect([1000, 69_604, 812_000, 999_499].map(fileSizeText)).toEqual(['1 kB', '69.6 kB', '812 kB', '999 kB']);
    // rounding that reaches 1000 moves to the next unit
    expect([999_950, 1_400_000, 2_345_678_901, 7.5e15].map(fileSizeText)).toEqual(['1 MB', '1.4 MB', '2.35 GB', '7,500 TB']);
  });

  it('gives the mail the words the figure page shows', () => {
    const mail = figureReadyMail('https://toppleworks.example', 'author@example.org', {
      slug: 'grains',
      title: 'Grains',
      version: 1,
      widthPx: 1063,
      heightPx: 1063,
      dpi: 300,
      files: [{ format: 'png', name: 'grains-v1.png', bytes: 69_604, sha256: 'a'.repeat(64), url: 'https://store.example/grains-v1.png' }],
      expiresAt: new Date('2026-01-01T00:00:00Z'),
    });
    expect(mail.text).toContain('grains-v1.png, 69.6 kB, sha256');
    expect(mail.html).toContain('(69.6 kB)');
  });
});
