import type { MailMessage } from './mailer.js';
import { escapeHtml } from './layout.js';
import { fileSizeText } from '../../../shared/file-size.js';

export type ReadyFile = { format: string; name: string; bytes: number; sha256: string; url: string };
export type ReadyPrint = { slug: string; title: string; version: number; widthPx: number; heightPx: number; dpi: number; files: ReadyFile[]; expiresAt: Date };

const FORMAT_NAMES: Record<string, string> = { png: 'PNG', tiff: 'TIFF (LZW)', pdf: 'PDF' };


/**
 * "Your print is ready": one presigned, expiring link per file (the files are private to the lab
 * until the figure is published), with each file's size and SHA-256 so the download can be checked.
 */
export function figureReadyMail(publicUrl: string, to: string, p: ReadyPrint): MailMessage {
  const page = `${publicUrl.replace(/\/+$/, '')}/lab/figures/${p.slug}`;
  const until = p.expiresAt.toISOString().replace('T', ' ').slice(0, 16) + ' UTC';
  const intro = [
    'Hello,',
    `Version ${p.version} of your figure "${p.title}" is printed: ${p.widthPx.toLocaleString('en-US')} × ${p.heightPx.toLocaleString('en-US')} pixels at ${p.dpi} DPI.`,
    `The download links below work until ${until}; the figure's page always has fresh ones.`,
  ];
  const fileLines = p.files.map((f) => `${FORMAT_NAMES[f.format] ?? f.format}, ${f.name}, ${fileSizeText(f.bytes)}, sha256 ${f.sha256}\n${f.url}`);
  const text = `${intro.join('\n\n')}\n\n${fileLines.join('\n\n')}\n\nThe figure's page: ${page}\n`;
  const items = p.files
    .map(
      (f) =>
        `<li style="margin-bottom:0.8em"><a href="${escapeHtml(f.url)}" style="color:#1d4e89">${escapeHtml(FORMAT_NAMES[f.format] ?? f.format)}: ${escapeHtml(f.name)}</a> (${escapeHtml(fileSizeText(f.bytes))})<br><code style="font-size:0.8em;color:#555">sha256 ${escapeHtml(f.sha256)}</code></li>`,
    )
    .join('\n');
  const html = `<!doctype html><html><body style="font-family:'Work Sans',Helvetica,Arial,sans-serif;max-width:38em;margin:2em auto;line-height:1.5;color:#222">
${intro.map((l) => `<p>${escapeHtml(l)}</p>`).join('\n')}
<ul style="padding-left:1.2em">${items}</ul>
<p><a href="${escapeHtml(page)}" style="color:#1d4e89">Open the figure's page</a></p>
<p style="color:#777;font-size:0.9em">Toppleworks, exact sandpiles for print.</p>
</body></html>`;
  return { to, subject: `Print ready: ${p.title} (version ${p.version})`, text, html };
}
