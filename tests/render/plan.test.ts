import { readFile, rm } from 'node:fs/promises';
import { join } from 'node:path';
import sharp from 'sharp';
import { describe, expect, it } from 'vitest';
import { allTiles, defaultPixelsPerCell, infoJson, planPyramid, tileAliases, tileCount, tileRequest } from '../../renderer/src/render/index.js';
import { listFiles, tempDir } from './helpers.js';

// IIIF Image API 3.0 (https://iiif.io/api/image/3.0/): §5 image information (info.json), §4 region and
// size parameters, §4.7 canonical URI syntax; tile region calculation as in its implementation notes.

describe('pyramid plan', () => {
  it('a 5·10^7-cell square run: scale factors 1..32, one tile at the top, 1050 tiles', () => {
    const plan = planPyramid({ cellsWide: 7071, cellsHigh: 7071 });
    expect(plan.pixelsPerCell).toBe(1);
    expect(plan.levels.map((l) => l.scaleFactor)).toEqual([1, 2, 4, 8, 16, 32]);
    // level size = ceil(full / scale factor) (spec §4.2 sizes, tile calculation notes)
    expect(plan.levels.map((l) => l.width)).toEqual([7071, 3536, 1768, 884, 442, 221]);
    expect(plan.levels.map((l) => l.columns * l.rows)).toEqual([784, 196, 49, 16, 4, 1]);
    expect(tileCount(plan)).toBe(1050);
  });

  it('tile regions are in full-resolution pixels and edge tiles are cut short (arithmetic)', () => {
    const plan = planPyramid({ cellsWide: 1000, cellsHigh: 700, pixelsPerCell: 1 });
    expect(tileRequest(plan, 0, 3, 2).path).toBe('768,512,232,188/232,188/0/default.png');
    expect(tileRequest(plan, 1, 1, 0).path).toBe('512,0,488,512/244,256/0/default.png');
    expect(tileRequest(plan, 2, 0, 0).path).toBe('full/250,175/0/default.png');
    expect(() => tileRequest(plan, 0, 4, 0)).toThrow(/no tile 4,0/);
  });

  it('cells are drawn as power-of-two blocks; small piles are enlarged to at least 1024 px', () => {
    expect(defaultPixelsPerCell(5, 5)).toBe(64);
    expect(defaultPixelsPerCell(300, 100)).toBe(4);
    expect(defaultPixelsPerCell(5000, 10)).toBe(1);
    const p = planPyramid({ cellsWide: 5, cellsHigh: 5 });
    expect([p.width, p.height, p.pixelsPerCell]).toEqual([320, 320, 64]);
    expect(() => planPyramid({ cellsWide: 5, cellsHigh: 5, pixelsPerCell: 3 })).toThrow(/power of two/);
    expect(() => planPyramid({ cellsWide: 0, cellsHigh: 5 })).toThrow(/at least 1×1/);
  });

  it('info.json carries the fields a level-0 IIIF 3.0 image service must have (spec §5)', () => {
    const plan = planPyramid({ cellsWide: 1000, cellsHigh: 700, pixelsPerCell: 1 });
    const info = infoJson(plan, '/tiles/runs/r1/heights/tidewater/iiif', 1);
    expect(info['@context']).toBe('http://iiif.io/api/image/3/context.json');
    expect(info.type).toBe('ImageService3');
    expect(info.protocol).toBe('http://iiif.io/api/image');
    expect(info.profile).toBe('level0');
    expect([info.width, info.height]).toEqual([1000, 700]);
    expect(info.tiles).toEqual([{ width: 256, height: 256, scaleFactors: [1, 2, 4] }]);
    expect(info.sizes).toEqual([{ width: 250, height: 175 }, { width: 500, height: 350 }]);
    expect(info.extraFormats).toContain('png');
  });

  it('an image that fits one tile is requested as full/max (3.0 change log §1.1.3) and kept under w,h too', () => {
    const plan = planPyramid({ cellsWide: 40, cellsHigh: 30, pixelsPerCell: 1 });
    const t = tileRequest(plan, 0, 0, 0);
    expect(t.path).toBe('full/max/0/default.png');
    expect(tileAliases(plan, t)).toEqual(['full/40,30/0/default.png']);
  });

  // libvips (through sharp) writes its own IIIF 3 level-0 layout; our stored paths must cover it, and
  // differ only by the canonical full/max for an image of one tile.
  for (const [w, h] of [
    [1000, 700],
    [257, 100],
    [256, 256],
    [300, 2000],
    [40, 30],
  ]) {
    it(`tile paths match sharp's iiif3 layout for ${w}×${h}`, async () => {
      const dir = await tempDir('iiif3');
      try {
        await sharp(Buffer.alloc(w * h * 3, 90), { raw: { width: w, height: h, channels: 3 } })
          .png()
          .tile({ size: 256, overlap: 0, layout: 'iiif3', id: '/x' })
          .toFile(join(dir, 'out'));
        const theirs = (await listFiles(join(dir, 'out'))).filter((f) => f !== 'info.json' && f.endsWith('.png'));
        const plan = planPyramid({ cellsWide: w, cellsHigh: h, pixelsPerCell: 1 });
        const stored = [...allTiles(plan)].flatMap((t) => [t.path, ...tileAliases(plan, t)]);
        expect(stored.filter((p) => p !== 'full/max/0/default.png').sort()).toEqual(theirs);
        const info = JSON.parse(await readFile(join(dir, 'out', 'info.json'), 'utf8'));
        expect(info.tiles[0].scaleFactors).toEqual(plan.levels.map((l) => l.scaleFactor));
        expect([info.width, info.height]).toEqual([plan.width, plan.height]);
      } finally {
        await rm(dir, { recursive: true, force: true });
      }
    });
  }
});
