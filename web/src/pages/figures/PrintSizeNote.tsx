import { MAX_DPI, MIN_DPI } from '../../../../shared/print-spec.js';
import { MAX_PAGE_PIXELS, largestDpiWithin, pixelCountText } from '../../../../shared/print-size.js';
import { groupThousands } from '../../format.js';
import { Notice } from '../../ui/index.js';
import { approxFileSize, fileSizesText, printSizeRows } from './printSize.js';

/** Pages from a quarter of the limit up are slow to make, upload and open: said before the author saves. */
const LARGE_PIXELS = MAX_PAGE_PIXELS / 4;

/**
 * The page's pixel size at the chosen DPI and how pixels and files grow with the resolution, with the
 * limit the API enforces (shared/print-size.ts): a warning from a large page on, "too large" past the limit.
 */
export function PrintSizeNote({ widthMm, heightMm, dpi }: { widthMm: number; heightMm: number; dpi: number }) {
  const rows = printSizeRows(widthMm, heightMm, dpi);
  const chosen = rows.find((r) => r.dpi === dpi);
  if (!chosen) return null;
  const most = largestDpiWithin(widthMm, heightMm);
  const title = !chosen.fits ? 'Too large to print' : chosen.pixels >= LARGE_PIXELS ? 'A very large print' : null;
  const body = (
    <>
      <p>
        At {dpi} DPI the page is {groupThousands(chosen.widthPx)} × {groupThousands(chosen.heightPx)} px ({pixelCountText(chosen.pixels)}); a print may have at most{' '}
        {pixelCountText(MAX_PAGE_PIXELS)}
        {most >= MAX_DPI ? ', which this page stays within at every resolution offered' : most >= MIN_DPI ? `: ${most} DPI on this page` : ', which this page exceeds at every resolution'}.
        {chosen.fits ? ` Files: ${fileSizesText(chosen.bytes)}; piles with large regular patches come out smaller.` : ''}
      </p>
      <table className="mt-2 w-full text-xs tabular-nums" data-testid="print-size-table">
        <caption className="sr-only">pixels and largest file sizes by resolution</caption>
        <thead>
          <tr className="text-left text-ink-faint">
            <th className="py-0.5 pr-3 font-medium">DPI</th>
            <th className="py-0.5 pr-3 font-medium">pixels</th>
            <th className="py-0.5 text-right font-medium">TIFF up to</th>
          </tr>
        </thead>
        <tbody>
          {rows.map((r) => (
            <tr key={r.dpi} className={r.dpi === dpi ? 'font-semibold text-ink' : 'text-ink-soft'}>
              <td className="py-0.5 pr-3">{r.dpi}</td>
              <td className="py-0.5 pr-3">
                {groupThousands(r.widthPx)} × {groupThousands(r.heightPx)}
              </td>
              <td className="py-0.5 text-right">{r.fits ? approxFileSize(r.bytes.tiff).replace(/^about /, '') : 'too large to print'}</td>
            </tr>
          ))}
        </tbody>
      </table>
    </>
  );
  return (
    <div className="mt-3" data-testid="print-size">
      {title ? (
        <Notice tone="warning" title={title}>
          {body}
        </Notice>
      ) : (
        <div className="text-sm text-ink-soft">{body}</div>
      )}
    </div>
  );
}
