import type { FigureFile } from '../../api/contract.js';
import { fileSizeText } from '../../../../shared/file-size.js';
import { groupThousands } from '../../format.js';

const FORMAT_NAMES: Record<string, string> = { png: 'PNG', tiff: 'TIFF (LZW)', pdf: 'PDF, vector text' };

/** Sizes as the mail gives them (exact bytes on hover) and the full checksum, so a downloaded file can be checked against the page. */
export function FileList({ files }: { files: FigureFile[] }) {
  return (
    <table className="w-full text-sm" data-testid="figure-files">
      <thead>
        <tr className="border-b border-rule text-left text-xs uppercase tracking-wider text-ink-faint">
          <th className="py-2 pr-4 font-medium">file</th>
          <th className="py-2 pr-4 text-right font-medium">size</th>
          <th className="py-2 text-right font-medium">pixels</th>
        </tr>
      </thead>
      <tbody>
        {files.map((f) => (
          <tr key={f.format} className="border-b border-rule-soft align-top">
            <td className="py-2 pr-4">
              <a href={f.href} download={f.name} className="break-all">
                {f.name}
              </a>
              <span className="ml-2 text-xs text-ink-faint">{FORMAT_NAMES[f.format]}</span>
              <div className="mt-0.5 break-all font-mono text-[11px] leading-snug text-ink-soft" title="SHA-256 of the file">
                sha256 {f.sha256}
              </div>
            </td>
            <td className="whitespace-nowrap py-2 pr-4 text-right tabular-nums" title={`${groupThousands(f.bytes)} bytes`}>
              {fileSizeText(f.bytes)}
            </td>
            <td className="whitespace-nowrap py-2 text-right tabular-nums">
              {groupThousands(f.widthPx)} × {groupThousands(f.heightPx)}
            </td>
          </tr>
        ))}
      </tbody>
    </table>
  );
}
