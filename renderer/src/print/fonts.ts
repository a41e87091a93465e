import { readFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import * as fontkit from 'fontkit';

const require = createRequire(import.meta.url);

/**
 * Work Sans from @fontsource (the same files the web app bundles), Latin subset, regular and bold.
 * fontkit reads WOFF directly: pdfkit (which uses fontkit itself) embeds a TrueType subset of the
 * glyphs used in the PDF, and the raster pages draw the same glyph outlines (text-raster.ts).
 */
export const WORK_SANS_FILES = {
  regular: '@fontsource/work-sans/files/work-sans-latin-400-normal.woff',
  bold: '@fontsource/work-sans/files/work-sans-latin-700-normal.woff',
} as const;

export type FontFace = keyof typeof WORK_SANS_FILES;

let cache: Record<FontFace, Buffer> | null = null;

export function workSans(): Record<FontFace, Buffer> {
  cache ??= { regular: readFileSync(require.resolve(WORK_SANS_FILES.regular)), bold: readFileSync(require.resolve(WORK_SANS_FILES.bold)) };
  return cache;
}

let faces: Record<FontFace, fontkit.Font> | null = null;

/** The two faces parsed by fontkit, for measuring and for glyph outlines. */
export function workSansFaces(): Record<FontFace, fontkit.Font> {
  if (!faces) {
    const files = workSans();
    const open = (buf: Buffer) => {
      const f = fontkit.create(buf);
      if (!('layout' in f)) throw new Error('Work Sans: expected a single font, not a collection');
      return f;
    };
    faces = { regular: open(files.regular), bold: open(files.bold) };
  }
  return faces;
}

/**
 * Glyphs and positions of a line (font units) as pdfkit sets it: laid out by fontkit (kerning,
 * ligatures) one word at a time, each word with the space after it, so the raster pages place every
 * glyph where the PDF does.
 */
export function layoutLine(face: FontFace, text: string): { glyphs: fontkit.Glyph[]; positions: fontkit.GlyphPosition[]; advanceWidth: number } {
  const font = workSansFaces()[face];
  const glyphs: fontkit.Glyph[] = [];
  const positions: fontkit.GlyphPosition[] = [];
  let advanceWidth = 0;
  for (const word of text.match(/[^ \t]*[ \t]|[^ \t]+$/g) ?? []) {
    const run = font.layout(word);
    glyphs.push(...run.glyphs);
    positions.push(...run.positions);
    advanceWidth += run.advanceWidth;
  }
  return { glyphs, positions, advanceWidth };
}

/** Width of a line of text in points (what pdfkit's widthOfString returns). */
export function textWidthPt(face: FontFace, sizePt: number, text: string): number {
  return (layoutLine(face, text).advanceWidth / workSansFaces()[face].unitsPerEm) * sizePt;
}
