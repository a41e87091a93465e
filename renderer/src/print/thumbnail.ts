import { rm } from 'node:fs/promises';
import { dirname, join } from 'node:path';
import sharp from 'sharp';
import { partPath } from './file-output.js';
import { PAPER, type PreparedFigure } from './prepare.js';
import { writeFigurePng } from './raster-outputs.js';

export interface PageThumbnail {
  jpeg: Buffer;
  width: number;
  height: number;
}

/**
 * A small JPEG of a printed page for lists, from the PNG or TIFF just written: libvips reads the page
 * top to bottom while it shrinks (sequential access), so a poster-sized print is never held whole.
 * JPEG because a shrunken page is photographic (anti-aliased text, averaged cells) and PNG would be
 * several times larger.
 */
export async function pageThumbnail(rasterPath: string, maxSide: number): Promise<PageThumbnail> {
  const { data, info } = await sharp(rasterPath, { limitInputPixels: false, sequentialRead: true })
    .resize({ width: maxSide, height: maxSide, fit: 'inside', withoutEnlargement: true })
    .flatten({ background: { r: PAPER[0], g: PAPER[1], b: PAPER[2] } })
    .jpeg({ quality: 85 })
    .toBuffer({ resolveWithObject: true });
  return { jpeg: data, width: info.width, height: info.height };
}

/**
 * The page thumbnail of an order: from its PNG or TIFF when it has one, otherwise (PDF only) from a
 * scratch PNG of the same page. The PDF places each panel as its own image and draws the text as
 * vectors, so no page raster exists to reuse and none can be had without a PDF rasteriser; the
 * scratch PNG is the same strips the PNG output writes, at zlib level 1 since it is read once and
 * deleted. The same pixels go through the same shrink, so a PDF-only order gets the very thumbnail a
 * PNG order of the figure gets.
 */
export async function orderThumbnail(fig: PreparedFigure, written: readonly { format: string; path: string }[], maxSide: number, scratchDir?: string): Promise<PageThumbnail> {
  const raster = written.find((f) => f.format === 'png') ?? written.find((f) => f.format === 'tiff');
  if (raster) return pageThumbnail(raster.path, maxSide);
  const dir = scratchDir ?? (written[0] ? dirname(written[0].path) : undefined);
  if (!dir) throw new Error('a page thumbnail needs a folder for its scratch page');
  const scratch = partPath(join(dir, 'page-thumbnail.png'));
  try {
    await writeFigurePng(fig, scratch, { level: 1 });
    return await pageThumbnail(scratch, maxSide);
  } finally {
    await rm(scratch, { force: true });
  }
}
