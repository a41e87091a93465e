import sharp from 'sharp';
import { PAPER } from './prepare.js';

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
