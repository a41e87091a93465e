import { rm } from 'node:fs/promises';
import sharp from 'sharp';
import { pageStrips, pagePalette } from './page-raster.js';
import { writeAtomically, writeStreamAtomically, partPath, type WrittenFile } from './file-output.js';
import { writePng } from './png.js';
import type { PreparedFigure } from './prepare.js';

export interface RasterOptions {
  /** zlib level for PNG (default DEFAULT_PNG_LEVEL, 2) */
  level?: number;
}

/**
 * The page as a PNG with its resolution in pHYs: indexed when the page has at most 256 colours (every
 * layer of one palette does), RGB otherwise. Streamed in strips; written all or nothing.
 */
export async function writeFigurePng(fig: PreparedFigure, path: string, opts: RasterOptions = {}): Promise<WrittenFile> {
  const palette = pagePalette(fig);
  const { widthPx: width, heightPx: height } = fig.layout.page;
  return writeStreamAtomically(path, (out) =>
    writePng(out, { width, height, dpi: fig.layout.dpi, palette: palette.remap ? palette.colours : undefined }, pageStrips(fig, palette), opts.level),
  );
}

/**
 * The page as a TIFF (LZW with horizontal predictor, resolution in pixels per inch), converted by
 * sharp/libvips from the streamed PNG: libvips reads the PNG top to bottom and writes TIFF strips as
 * it goes (sequential access), so neither step holds the page; the bench records peak RSS.
 */
export async function writeFigureTiff(fig: PreparedFigure, path: string, opts: RasterOptions = {}): Promise<WrittenFile> {
  const png = partPath(`${path}.png`);
  try {
    // level 1: the PNG is only a hand-over to libvips, speed matters more than its size
    await writeFigurePng(fig, png, { level: opts.level ?? 1 });
    return await writeAtomically(path, async (tmp) => {
      await sharp(png, { limitInputPixels: false, sequentialRead: true })
        .withMetadata({ density: fig.layout.dpi })
        .tiff({ compression: 'lzw', predictor: 'horizontal', resolutionUnit: 'inch' })
        .toFile(tmp);
    });
  } finally {
    await rm(png, { force: true });
  }
}
