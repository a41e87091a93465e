import { readFileSync } from 'node:fs';
import { createRequire } from 'node:module';

const require = createRequire(import.meta.url);

/**
 * Work Sans from @fontsource (the same files the web app bundles), Latin subset, regular and bold.
 * fontkit (inside pdfkit) reads WOFF directly and the PDF gets a TrueType subset of the glyphs used.
 */
export const WORK_SANS_FILES = {
  regular: '@fontsource/work-sans/files/work-sans-latin-400-normal.woff',
  bold: '@fontsource/work-sans/files/work-sans-latin-700-normal.woff',
} as const;

let cache: { regular: Buffer; bold: Buffer } | null = null;

export function workSans(): { regular: Buffer; bold: Buffer } {
  cache ??= { regular: readFileSync(require.resolve(WORK_SANS_FILES.regular)), bold: readFileSync(require.resolve(WORK_SANS_FILES.bold)) };
  return cache;
}
