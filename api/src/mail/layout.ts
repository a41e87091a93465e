/** Shared wrapping of our mails: plain text first, a calm single-column HTML twin. */
export function escapeHtml(s: string): string {
  return s.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c]!);
}

export function htmlMail(paragraphs: string[], link: { href: string; label: string }): string {
  const body = paragraphs.map((p) => `<p>${escapeHtml(p)}</p>`).join('\n');
  return `<!doctype html><html><body style="font-family:'Work Sans',Helvetica,Arial,sans-serif;max-width:34em;margin:2em auto;line-height:1.5;color:#222">
${body}
<p><a href="${escapeHtml(link.href)}" style="color:#1d4e89">${escapeHtml(link.label)}</a></p>
<p style="color:#777;font-size:0.9em">Toppleworks, exact sandpiles for print.</p>
</body></html>`;
}
