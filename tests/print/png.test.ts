import { readFile, rm } from 'node:fs/promises';
import { join } from 'node:path';
import sharp from 'sharp';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { writePng, renderPrint, prepareFigure, pagePalette } from '../../renderer/src/print/index.js';
import { createWriteStream } from 'node:fs';
import { squarePile, tempDir } from './helpers.js';

let dir: string;
beforeAll(async () => {
  dir = await tempDir('png');
});
afterAll(async () => {
  await rm(dir, { recursive: true, force: true });
});

/** Chunk types in file order (PNG spec §5.3: length, type, data, CRC). */
function chunkTypes(buf: Buffer): string[] {
  const types: string[] = [];
  for (let o = 8; o < buf.length; ) {
    const len = buf.readUInt32BE(o);
    types.push(buf.toString('latin1', o + 4, o + 8));
    o += 12 + len;
  }
  return types;
}

describe('figure PNG', () => {
  it('has size × DPI pixels and records the resolution in pHYs', async () => {
    const pile = squarePile(1000);
    const path = join(dir, 'a6.png');
    const res = await renderPrint({ size: { kind: 'paper', paper: 'A6' }, dpi: 600, panels: [{ runId: 'p' }] }, [{ runId: 'p', input: pile, chips: 1000 }], { png: path });
    // ISO 216 A6 = 105 × 148 mm; round(105 / 25.4 × 600) = 2480, round(148 / 25.4 × 600) = 3496
    const meta = await sharp(path).metadata();
    expect([meta.width, meta.height]).toEqual([2480, 3496]);
    // pHYs holds pixels per metre: round(600 / 0.0254) = 23622, which libvips reads back as 600 DPI
    expect(meta.density).toBeCloseTo(600, 1);
    const buf = await readFile(path);
    const at = buf.indexOf('pHYs');
    expect([buf.readUInt32BE(at + 4), buf.readUInt32BE(at + 8), buf[at + 12]]).toEqual([23622, 23622, 1]);
    // PNG spec: IHDR first, PLTE before IDAT, IEND last; an indexed image here (few colours)
    const types = chunkTypes(buf);
    expect(types[0]).toBe('IHDR');
    expect(types.slice(1, 3)).toEqual(['pHYs', 'PLTE']);
    expect(types.at(-1)).toBe('IEND');
    expect(meta.isPalette).toBe(true);
    expect(res.files[0]).toMatchObject({ format: 'png', bytes: buf.length, widthPx: 2480, heightPx: 3496 });
    expect(res.files[0].sha256).toMatch(/^[0-9a-f]{64}$/);
  });

  it('falls back to RGB when the page needs more than 256 colours', async () => {
    const pile = squarePile(1000);
    const spec = {
      size: { kind: 'paper', paper: 'A6', orientation: 'landscape' },
      dpi: 150,
      grid: { rows: 1, cols: 2 },
      panels: [
        { runId: 'p', layer: 'odometer', palette: 'tidewater' },
        { runId: 'p', layer: 'odometer', palette: 'kiln' },
      ],
    };
    const runs = [{ runId: 'p', input: pile, chips: 1000 }];
    expect(pagePalette(prepareFigure(spec, runs)).remap).toBeNull();
    const path = join(dir, 'rgb.png');
    await renderPrint(spec, runs, { png: path });
    const meta = await sharp(path).metadata();
    expect([meta.width, meta.height, meta.channels]).toEqual([874, 620, 3]);
    expect(meta.isPalette).toBeFalsy();
  });

  it('decodes back to exactly the rows written, in both colour types', async () => {
    // an independent decoder (libpng inside sharp) must see the same bytes; CRC errors would fail it
    const width = 300;
    const height = 130;
    const idx = new Uint8Array(width * height).map((_, i) => (i * 7 + (i >> 5)) % 3);
    const pal = [
      [10, 20, 30, 255],
      [200, 100, 0, 255],
      [1, 2, 3, 255],
    ] as const;
    const path = join(dir, 'rows.png');
    const strips = [0, 64, 128].map((y) => ({ rows: Math.min(64, height - y), data: idx.subarray(y * width, Math.min(height, y + 64) * width) }));
    await writePng(createWriteStream(path), { width, height, dpi: 300, palette: pal }, strips);
    const { data } = await sharp(path).removeAlpha().raw().toBuffer({ resolveWithObject: true });
    for (let i = 0; i < width * height; i++) {
      const c = pal[idx[i]];
      if (data[3 * i] !== c[0] || data[3 * i + 1] !== c[1] || data[3 * i + 2] !== c[2]) throw new Error(`pixel ${i} differs`);
    }
    const rgb = new Uint8Array(width * height * 3).map((_, i) => (i * 31) & 255);
    const rgbPath = join(dir, 'rows-rgb.png');
    await writePng(createWriteStream(rgbPath), { width, height, dpi: 150 }, [{ rows: height, data: rgb }]);
    const back = await sharp(rgbPath).raw().toBuffer();
    expect(Buffer.compare(back, Buffer.from(rgb))).toBe(0);
  });

  it('refuses strips that do not add up to the image', async () => {
    const path = join(dir, 'short.png');
    await expect(writePng(createWriteStream(path), { width: 4, height: 4, dpi: 300, palette: [[0, 0, 0, 255]] }, [{ rows: 2, data: new Uint8Array(8) }])).rejects.toThrow(
      'the image has 4 rows but 2 were given',
    );
  });
});
