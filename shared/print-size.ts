/**
 * How many pixels a printed page may have, and what a page of a given size and resolution weighs:
 * shared by the spec schema (print-spec.ts), the layout (print-layout.ts), the API's refusal and the
 * composer's warning, so all of them name the same numbers.
 */

export const MM_PER_INCH = 25.4;

/** Page pixels for a length: round(inches × dpi), the rule every raster output follows. */
export function pixelsFor(mmLength: number, dpi: number): number {
  return Math.round((mmLength / MM_PER_INCH) * dpi);
}

/**
 * The most pixels one printed page may have (width × height), 10^9.
 *
 * Measured on the print worker (renderer/src/print, 2 cores, 24 GiB; commands in its CONTEXT.md):
 * memory does not grow with the page (strips; A0 at 1200 DPI, 2.23 × 10^9 px, peaked 58 MB over
 * the input for PNG, 181 MB for TIFF, 266 MB for PDF, which holds each panel compressed), and
 * libvips reads pages far wider than ours once sharp's default limit of 0x3FFF² px is lifted. What
 * does grow is the files: at one pixel per cell a noisy panel weighs up to 1.32 bytes per pixel as
 * TIFF (RGB, LZW), and pure colour noise could reach about 3.75. A classic TIFF ends at 4 GiB and
 * one object-store upload at 5 GiB, so 10^9 px keeps even that noise under both, and the measured
 * worst case three times under; A0 at 1200 DPI would not be.
 */
export const MAX_PAGE_PIXELS = 1_000_000_000;

/**
 * Upper estimates of the file sizes, bytes per page pixel: the measured weight of a panel as
 * irregular as i.i.d. heights 0..3 at one pixel per cell (the print bench's input). Real piles, with
 * large periodic patches, and paper margins come out much smaller.
 */
export const PRINT_BYTES_PER_PIXEL = { png: 0.33, tiff: 0.67, pdf: 0.32 } as const;

export interface PagePixels {
  widthPx: number;
  heightPx: number;
  pixels: number;
}

export function pagePixels(widthMm: number, heightMm: number, dpi: number): PagePixels {
  const widthPx = pixelsFor(widthMm, dpi);
  const heightPx = pixelsFor(heightMm, dpi);
  return { widthPx, heightPx, pixels: widthPx * heightPx };
}

/** The largest whole DPI at which a page of this size stays within `maxPixels` (0 when none does). */
export function largestDpiWithin(widthMm: number, heightMm: number, maxPixels = MAX_PAGE_PIXELS): number {
  const squareInches = (widthMm / MM_PER_INCH) * (heightMm / MM_PER_INCH);
  // the square root is right up to the rounding of each side to whole pixels
  let dpi = Math.floor(Math.sqrt(maxPixels / squareInches)) + 1;
  while (dpi > 0 && pagePixels(widthMm, heightMm, dpi).pixels > maxPixels) dpi--;
  return dpi;
}

const grouped = (n: number) => n.toLocaleString('en-US');

/**
 * "2.23 gigapixels", "139 megapixels", "1.42 megapixels": the order of magnitude people compare, to
 * three digits like the file sizes (a single-column page of 1.42 million pixels once read "1 megapixels").
 */
export function pixelCountText(pixels: number): string {
  const inUnit = (v: number, unit: string) => {
    const shown = Number(v.toPrecision(3));
    return `${shown.toLocaleString('en-US')} ${unit}${shown === 1 ? '' : 's'}`;
  };
  // compared after rounding, so 999,999,999 pixels reads "1 gigapixel" rather than "1,000 megapixels"
  if (Number((pixels / 1e6).toPrecision(3)) >= 1000) return inUnit(pixels / 1e9, 'gigapixel');
  if (pixels >= 1e6) return inUnit(pixels / 1e6, 'megapixel');
  return `${grouped(pixels)} pixels`;
}

/**
 * Why a page is too large to print, in plain words with its pixel size, the limit and the largest
 * DPI that fits (`what` names the page: "A0 portrait", "this 190 × 400 mm page"); null when it fits.
 */
export function pageTooLargeMessage(what: string, widthMm: number, heightMm: number, dpi: number, minDpi: number): string | null {
  const page = pagePixels(widthMm, heightMm, dpi);
  if (page.pixels <= MAX_PAGE_PIXELS) return null;
  const most = largestDpiWithin(widthMm, heightMm);
  const size = `${grouped(page.widthPx)} × ${grouped(page.heightPx)} px (${pixelCountText(page.pixels)})`;
  const limit = `${grouped(MAX_PAGE_PIXELS)} px (${pixelCountText(MAX_PAGE_PIXELS)})`;
  const advice =
    most >= minDpi
      ? `at most ${most} DPI fits ${what} (${grouped(pagePixels(widthMm, heightMm, most).widthPx)} × ${grouped(pagePixels(widthMm, heightMm, most).heightPx)} px); choose that or less, or a smaller page`
      : `even ${minDpi} DPI does not fit ${what}; choose a smaller page`;
  return `at ${dpi} DPI ${what} would be ${size}, more than the ${limit} a print may have; ${advice}`;
}

/**
 * The longest page side, 200 in (5,080 mm). PDF's default unit is 1/72 in and readers are only
 * required to open pages up to 14,400 units on a side (PDF Reference 1.7, Appendix C, implementation
 * limits; from memory). Every format keeps it, so one composition prints as PNG, TIFF and PDF alike;
 * at the lowest resolution, 150 DPI, such a side is 30,000 px.
 */
export const MAX_PAGE_SIDE_MM = 200 * MM_PER_INCH;

/** Why a page is too long on a side to print (`what` as in pageTooLargeMessage); null when it fits. */
export function pageSideTooLongMessage(what: string, widthMm: number, heightMm: number): string | null {
  if (Math.max(widthMm, heightMm) <= MAX_PAGE_SIDE_MM) return null;
  return `${what} is longer than ${grouped(MAX_PAGE_SIDE_MM)} mm (200 in) on a side, the largest page PDF readers open; choose a smaller page`;
}

/** Upper estimates of each file's size for a page of `pixels`, in bytes. */
export function estimatePrintBytes(pixels: number): Record<keyof typeof PRINT_BYTES_PER_PIXEL, number> {
  return {
    png: Math.round(pixels * PRINT_BYTES_PER_PIXEL.png),
    tiff: Math.round(pixels * PRINT_BYTES_PER_PIXEL.tiff),
    pdf: Math.round(pixels * PRINT_BYTES_PER_PIXEL.pdf),
  };
}
