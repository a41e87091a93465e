import { rm } from 'node:fs/promises';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { isPrintInputError, renderPrint, type PrintRun } from '../../renderer/src/print/index.js';
import type { BackgroundReader } from '../../renderer/src/render/index.js';
import { listFiles, squarePile, tempDir } from './helpers.js';

let dir: string;
beforeAll(async () => {
  dir = await tempDir('errors');
});
afterAll(async () => {
  await rm(dir, { recursive: true, force: true });
});

const runs = (): PrintRun[] => [{ runId: 'p', input: squarePile(1000), chips: 1000 }];
const paths = () => ({ png: join(dir, 'f.png'), tiff: join(dir, 'f.tif'), pdf: join(dir, 'f.pdf') });

describe('bad orders', () => {
  it('reject a bad spec with a path-qualified message and write nothing', async () => {
    const err = await renderPrint({ size: { kind: 'paper', paper: 'B5' }, panels: [{ runId: 'p' }] }, runs(), paths()).catch((e) => e);
    expect(isPrintInputError(err)).toBe(true);
    expect(err.message).toMatch(/^bad figure spec: size\.paper: /);
    expect(await listFiles(dir)).toEqual([]);
  });

  it('reject a magnification the page cannot hold, and a missing run', async () => {
    const big = await renderPrint({ size: { kind: 'paper', paper: 'A6' }, dpi: 150, panels: [{ runId: 'p', magnification: 64 }] }, runs(), paths()).catch((e) => e);
    expect(isPrintInputError(big)).toBe(true);
    expect(big.message).toContain('the size asked for cannot be met at this resolution: 25 × 25 cells at 64 px per cell need 1,600 × 1,600 px');
    const missing = await renderPrint({ size: { kind: 'paper', paper: 'A6' }, panels: [{ runId: 'q' }] }, runs(), paths()).catch((e) => e);
    expect(missing.message).toBe('panel 1: run "q" was not given');
    const diff = await renderPrint({ size: { kind: 'paper', paper: 'A6' }, panels: [{ runId: 'p', layer: 'difference' }] }, runs(), paths()).catch((e) => e);
    expect(diff.message).toBe('panel 1: the difference layer needs the background of run "p"');
    expect(await listFiles(dir)).toEqual([]);
  });

  it('reject a page with more pixels than a print may have, naming its size, and write nothing', async () => {
    // A0 = 841 × 1189 mm (ISO 216); at 1200 DPI round(841 / 25.4 × 1200) × round(1189 / 25.4 × 1200) px
    const err = await renderPrint({ size: { kind: 'paper', paper: 'A0' }, dpi: 1200, panels: [{ runId: 'p' }] }, runs(), paths()).catch((e) => e);
    expect(isPrintInputError(err)).toBe(true);
    expect(err.message).toContain('the page is too large to print: at 1200 DPI A0 portrait would be 39,732 × 56,173 px (2.23 gigapixels)');
    expect(err.message).toContain('more than the 1,000,000,000 px (1 gigapixel) a print may have');
    expect(await listFiles(dir)).toEqual([]);
  });

  it('leave no half-written file when rendering fails midway', async () => {
    // a background reader that fails after the stats pass, i.e. while rows are being written
    let calls = 0;
    const failing: BackgroundReader = (w, out) => {
      if (++calls > 3) throw new Error('background storage went away');
      out.fill(0);
    };
    for (const format of ['png', 'tiff', 'pdf'] as const) {
      calls = 0;
      const err = await renderPrint(
        { size: { kind: 'paper', paper: 'A6' }, dpi: 300, panels: [{ runId: 'p', layer: 'difference' }] },
        [{ ...runs()[0], background: failing }],
        { [format]: paths()[format] },
      ).catch((e) => e);
      expect(err.message).toBe('background storage went away');
      expect(await listFiles(dir)).toEqual([]);
    }
  });
});
